//! Messages from the device to the host.

use postcard::experimental::max_size::MaxSize;
use serde::{Deserialize, Serialize};

use crate::fixed::i16_le;
use crate::handshake::Version;
use crate::label::Label;
use crate::thermo_word::ThermoWord;

/// Everything the device sends.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum DeviceMsg {
    /// Answer to the host's hello: who the device is and what it enforces.
    Hello(DeviceHello),
    /// One acquisition period's raw readings.
    Sample(Sample),
    /// Once a second: the full sequence number, the sampling clock and the drop counter.
    Beacon(Beacon),
    /// The run state changed.
    State(StateReport),
    /// A safety interlock tripped; the heater is off.
    Fault(FaultReport),
    /// A command was carried out.
    Ack(Ack),
    /// A command was refused, with the reason.
    Refused(Refusal),
}

/// Number of [`DeviceMsg`] variants (the decoder tells unknown tags from malformed bodies).
pub const DEVICE_MSG_VARIANTS: u8 = 7;

/// The device's side of the handshake.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DeviceHello {
    /// Protocol version and schema fingerprint compiled into the firmware.
    pub version: Version,
    /// Firmware version, major.minor.patch.
    pub firmware: [u8; 3],
    /// Board name, for example `pico` or `virtual`.
    pub board: Label,
    /// How the sensors are wired and converted.
    pub sensors: SensorSetup,
    /// The limits the firmware enforces whatever the host asks.
    pub limits: SafetyLimits,
    /// How the heater output is driven (it must fit the switch the board drives).
    pub heater: HeaterDrive,
    /// Why the device last started, and what was latched then.
    pub boot: BootReport,
    /// The fault latched now, if any (the heater stays off until it is cleared).
    pub latched: Option<Fault>,
}

/// How the firmware drives the heater's switch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum HeaterDrive {
    /// Fast PWM for a DC switch (a MOSFET), at this frequency, Hz.
    Pwm {
        /// PWM frequency, Hz.
        frequency_hz: u16,
    },
    /// Slow time-proportioning for a zero-crossing relay: on for a whole number of mains
    /// half-cycles in each window.
    TimeProportioning {
        /// Window length, ms.
        window_ms: u16,
        /// One mains half-cycle, µs (10 000 at 50 Hz, 8 333 at 60 Hz).
        half_cycle_us: u16,
    },
}

/// Why the device last started.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ResetCause {
    /// Power was applied (or the cause is unknown: nothing survived).
    PowerOn,
    /// The watchdog expired: the control loop stopped completing its periods.
    Watchdog,
    /// The firmware panicked (a bug); its handler switched the heater off and reset the chip.
    Panic,
    /// The processor took a hard fault (a bug or a stack overflow); handled like a panic.
    HardFault,
}

/// What the device knew when it started.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BootReport {
    /// Why it started.
    pub reset: ResetCause,
    /// The fault latched before the reset, if any (kept across the reset).
    pub last_fault: Option<Fault>,
    /// Heating is locked until the power is cycled (repeated trips).
    pub locked: bool,
}

impl BootReport {
    /// A plain power-on: nothing latched, nothing locked.
    pub const POWER_ON: BootReport = BootReport {
        reset: ResetCause::PowerOn,
        last_fault: None,
        locked: false,
    };
}

/// Converter and front-end constants the host needs to turn codes into volts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SensorSetup {
    /// Full-scale input of the Hall channel's ADC range, µV (code 32767).
    pub hall_full_scale_uv: u32,
    /// Full-scale input of the probe-thermistor channel's ADC range, µV.
    pub probe_full_scale_uv: u32,
    /// Supply of the Hall sensor and the thermistor divider, mV (both are ratiometric).
    pub supply_mv: u16,
    /// Fixed resistor of the thermistor divider (thermistor to ground), Ω.
    pub ntc_series_ohm: u32,
    /// Which thermocouple converter produces the thermo word.
    pub thermo: ThermoKind,
    /// Sampling period in use, ms.
    pub period_ms: u16,
    /// Conversions averaged per sample.
    pub oversample: u8,
}

/// Thermocouple converter families the host knows how to correct.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ThermoKind {
    /// Type K converter with the linear 41.276 µV/°C approximation.
    TypeKLinear,
}

/// Safety limits compiled into the firmware.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SafetyLimits {
    /// Highest temperature the firmware will ever heat to, 0.1 °C.
    pub ceiling_tenth_c: i16,
    /// Heater off when no command arrives for this long, ms.
    pub heartbeat_timeout_ms: u16,
    /// Fastest plausible rise, 0.1 °C per second.
    pub max_rise_tenth_c_per_s: u16,
    /// The heating-response check judges the rise against the energy put in over at most
    /// this long, s.
    pub response_window_s: u16,
    /// A latched over-temperature clears only this far below the limit, 0.1 °C.
    pub reset_margin_tenth_c: i16,
    /// Highest heater duty, percent.
    pub duty_cap_pct: u8,
}

/// One sample: 12 payload bytes, 16 on the wire with CRC and COBS.
///
/// The full sequence number and the sampling schedule come in the [`Beacon`]; a sample carries
/// the low byte of its sequence number and how late it was taken after its slot, from which
/// the host rebuilds both exactly (see `DEVELOPERS.md`, "Sample timing").
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Sample {
    /// Low eight bits of the sequence number.
    pub seq_lo: u8,
    /// State flags and the lateness after the nominal slot.
    pub status: SampleStatus,
    /// Hall channel, differential ADC code (averaged over the oversampling).
    #[serde(with = "i16_le")]
    pub hall_code: i16,
    /// Probe thermistor channel, ADC code.
    #[serde(with = "i16_le")]
    pub probe_code: i16,
    /// Thermocouple converter word, verbatim: thermocouple, cold junction, fault bits.
    pub thermo: ThermoWord,
    /// Heater duty, 0 = off, 255 = full.
    pub duty: u8,
}

/// Packed per-sample status: bit 0 heater enabled, bit 1 a fault is latched,
/// bits 2..7 lateness after the nominal slot in ms (63 = 63 ms or more).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SampleStatus(pub u8);

impl SampleStatus {
    /// Largest lateness that fits, ms.
    pub const MAX_LATENESS_MS: u8 = 63;

    /// Pack the flags and the lateness (saturated).
    pub fn new(heater_enabled: bool, fault_latched: bool, lateness_ms: u32) -> Self {
        let late = lateness_ms.min(Self::MAX_LATENESS_MS as u32) as u8;
        SampleStatus(heater_enabled as u8 | (fault_latched as u8) << 1 | late << 2)
    }
    /// Heater enable output was high.
    pub fn heater_enabled(self) -> bool {
        self.0 & 1 != 0
    }
    /// A fault was latched.
    pub fn fault_latched(self) -> bool {
        self.0 & 2 != 0
    }
    /// Lateness after the nominal slot, ms (saturated at 63).
    pub fn lateness_ms(self) -> u8 {
        self.0 >> 2
    }
}

/// The sampling clock, sent every second and whenever sampling is (re)configured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Beacon {
    /// Sequence number of the latest sample taken.
    pub seq: u32,
    /// Sequence number of the schedule's first slot.
    pub epoch_seq: u32,
    /// Device time of the schedule's first slot, ms.
    pub epoch_ms: u32,
    /// Sampling period, ms: slot n is at `epoch_ms + (n − epoch_seq) × period_ms`.
    pub period_ms: u16,
    /// Samples dropped on the device because the link was slower than the sampler.
    pub dropped_total: u32,
    /// Current run state.
    pub state: RunState,
    /// Current heater setpoint, 0.1 °C (0 when off).
    pub setpoint_tenth_c: i16,
}

/// The device's run state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RunState {
    /// Heater off, waiting for a command.
    Idle,
    /// Following a profile.
    Profile,
    /// Holding a manual setpoint.
    Manual,
    /// A fault is latched; heater off until cleared.
    Faulted,
}

/// A state change.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StateReport {
    /// Device time, ms.
    pub time_ms: u32,
    /// The new state.
    pub state: RunState,
    /// Profile segment now running (0 outside a profile).
    pub segment: u8,
}

/// A tripped interlock.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FaultReport {
    /// Device time, ms.
    pub time_ms: u32,
    /// What tripped.
    pub fault: Fault,
    /// Last valid thermocouple reading, 0.1 °C.
    pub temp_tenth_c: i16,
}

/// Why the heater was switched off.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Fault {
    /// Thermocouple open circuit.
    ThermocoupleOpen,
    /// Thermocouple shorted to GND.
    ThermocoupleShortGnd,
    /// Thermocouple shorted to VCC.
    ThermocoupleShortVcc,
    /// Temperature above the run limit or the compiled-in ceiling.
    OverTemperature,
    /// Temperature rose faster than physically plausible.
    RiseTooFast,
    /// The thermocouple reading stopped changing while heating.
    StuckReading,
    /// The temperature rose far slower than the heater's energy implies: the heater or the
    /// thermocouple is detached.
    NoHeatingResponse,
    /// No command from the host within the heartbeat timeout.
    HeartbeatLost,
    /// A sensor bus transaction failed.
    SensorBus,
    /// The host asked for an emergency stop through a fault injection (tests, drills).
    Injected,
    /// The thermocouple converter answers with words no working chip produces (absent,
    /// unpowered, or a cold junction that is impossible or frozen).
    ConverterImplausible,
    /// The temperature rose while the heater was commanded off (a switch failed on).
    HeatingWhileOff,
    /// Setting the heater output failed.
    HeaterDrive,
    /// The device was reset by its watchdog.
    Watchdog,
    /// The device reset after a panic or hard fault.
    Crashed,
}

/// A command carried out.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Ack {
    /// The command's id.
    pub id: u16,
}

/// A command refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Refusal {
    /// The command's id.
    pub id: u16,
    /// Why.
    pub reason: RefuseReason,
}

/// Why a command was refused. Nothing is ever silently clamped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum RefuseReason {
    /// The host's protocol version or schema differs; the device's own version is given.
    VersionMismatch(Version),
    /// No hello yet.
    HandshakeRequired,
    /// A requested temperature exceeds the compiled-in ceiling (0.1 °C).
    AboveCeiling {
        /// The ceiling, 0.1 °C.
        ceiling_tenth_c: i16,
    },
    /// A requested temperature exceeds the run's own limit (0.1 °C).
    AboveRunLimit {
        /// The run limit, 0.1 °C.
        limit_tenth_c: i16,
    },
    /// A fault is latched; clear it first.
    FaultLatched(Fault),
    /// Still too hot to clear a latched heating fault: the fixture must cool near ambient.
    TooHotToClear {
        /// Present temperature, 0.1 °C.
        temp_tenth_c: i16,
        /// It must fall below this, 0.1 °C.
        below_tenth_c: i16,
    },
    /// Nothing is latched.
    NoFaultLatched,
    /// A profile with no segments, a zero ramp rate to a new target, or a bad sampling setting.
    Invalid,
    /// The device is busy with a run; stop it first.
    Busy,
    /// Too many heating trips within an hour: heating is locked until the power is cycled.
    LockedOut {
        /// Trips counted.
        trips: u8,
    },
    /// The board cannot take this many conversions in one period.
    TooFastForBoard {
        /// Shortest period it can keep with the requested oversampling, ms.
        min_period_ms: u16,
    },
    /// This build does not carry out that command (fault drills are test builds only).
    Unsupported,
}
