//! Plain words for what the device reports: refusals, faults and why it last started. Every
//! message a user reads about the device's state comes from here.

use remanent_protocol::{
    BootReport, Fault, HeaterDrive, RefuseReason, ResetCause, RunState, VERSION,
};

fn c(tenth_c: i16) -> f64 {
    remanent_physics::wire::c_from_tenths(tenth_c)
}

/// Words for a refusal.
pub fn describe_refusal(r: &RefuseReason) -> String {
    match r {
        RefuseReason::VersionMismatch(v) => {
            format!("version mismatch (device speaks {v}, host speaks {VERSION})")
        }
        RefuseReason::HandshakeRequired => "no handshake yet".into(),
        RefuseReason::AboveCeiling { ceiling_tenth_c } => format!(
            "a temperature above the firmware's ceiling of {:.1} °C",
            c(*ceiling_tenth_c)
        ),
        RefuseReason::AboveRunLimit { limit_tenth_c } => format!(
            "a temperature above the run limit of {:.1} °C",
            c(*limit_tenth_c)
        ),
        RefuseReason::FaultLatched(f) => format!(
            "a fault is latched ({}); clear it first (`remanent clear-fault`, once the fixture is near ambient)",
            describe_fault(*f)
        ),
        RefuseReason::TooHotToClear {
            temp_tenth_c,
            below_tenth_c,
        } => format!(
            "still too hot to clear ({:.1} °C; the fixture must cool below {:.1} °C, near ambient)",
            c(*temp_tenth_c),
            c(*below_tenth_c)
        ),
        RefuseReason::NoFaultLatched => "no fault is latched".into(),
        RefuseReason::Invalid => "invalid settings".into(),
        RefuseReason::Busy => "the device is busy with a run".into(),
        RefuseReason::LockedOut { trips } => format!(
            "heating is locked after {trips} trips within an hour: find the cause, switch the \
             bench off and on again, then clear it (`remanent clear-fault`) once the fixture \
             has cooled"
        ),
        RefuseReason::TooFastForBoard { min_period_ms } => format!(
            "the board cannot convert that much in one period (shortest period for this \
             oversampling: {min_period_ms} ms)"
        ),
        RefuseReason::Unsupported => "this firmware build does not carry out that command".into(),
    }
}

/// Words for a fault.
pub fn describe_fault(f: Fault) -> &'static str {
    match f {
        Fault::ThermocoupleOpen => "thermocouple open circuit",
        Fault::ThermocoupleShortGnd => "thermocouple shorted to ground",
        Fault::ThermocoupleShortVcc => "thermocouple shorted to supply",
        Fault::OverTemperature => "over-temperature",
        Fault::RiseTooFast => "temperature rose faster than the fixture can heat",
        Fault::StuckReading => "thermocouple reading stuck while heating",
        Fault::NoHeatingResponse => {
            "no heating response: the temperature rose far slower than the heater's energy \
             implies (heater or thermocouple detached?)"
        }
        Fault::HeartbeatLost => "no word from the host within the heartbeat timeout",
        Fault::SensorBus => "a sensor bus transaction failed",
        Fault::Injected => "emergency stop requested by the host",
        Fault::ConverterImplausible => {
            "the thermocouple converter sends impossible words (absent, unpowered or frozen)"
        }
        Fault::HeatingWhileOff => {
            "the fixture heated while the heater was off: the heater switch may have failed on \
             — disconnect mains power"
        }
        Fault::HeaterDrive => "the heater output did not accept a setting",
        Fault::Watchdog => "the firmware stopped running its control loop and was reset",
        Fault::Crashed => "the firmware crashed and was reset",
    }
}

/// Words for why the device last started, when that is news (anything but a power-on).
pub fn describe_boot(boot: &BootReport) -> Option<String> {
    let why = match boot.reset {
        ResetCause::PowerOn if !boot.locked => return None,
        ResetCause::PowerOn => "the device started",
        ResetCause::Watchdog => "the device was reset by its watchdog",
        ResetCause::Panic => "the device reset after a firmware panic",
        ResetCause::HardFault => "the device reset after a processor fault",
    };
    let mut s = why.to_string();
    if let Some(f) = boot.last_fault {
        s.push_str(&format!(
            "; latched before the reset: {}",
            describe_fault(f)
        ));
    }
    if boot.locked {
        s.push_str(
            "; heating is locked (kept through power cycles): after one, `remanent clear-fault` \
             releases it once the fixture has cooled",
        );
    } else if boot.reset != ResetCause::PowerOn {
        s.push_str("; it stays latched until cleared near ambient");
    }
    Some(s)
}

/// Words for the heater drive.
pub fn describe_heater(d: &HeaterDrive) -> String {
    match d {
        HeaterDrive::Pwm { frequency_hz } => format!("PWM at {frequency_hz} Hz (DC switch)"),
        HeaterDrive::TimeProportioning {
            window_ms,
            half_cycle_us,
        } => format!(
            "time-proportioning, {:.1} s windows of whole {:.2} ms half-cycles (zero-crossing relay)",
            f64::from(*window_ms) / 1000.0,
            f64::from(*half_cycle_us) / 1000.0
        ),
    }
}

/// The name of a run state, as events and messages show it.
pub fn describe_state(s: RunState) -> &'static str {
    match s {
        RunState::Idle => "Idle",
        RunState::Profile => "Profile",
        RunState::Manual => "Manual",
        RunState::Faulted => "Faulted",
    }
}
