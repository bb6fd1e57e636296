//! Safety scenarios through the real control loop. Each asserts the heater reaches zero by its
//! deadline and the right fault is reported and latched.

use remanent_firmware::device::Mode;
use remanent_firmware::FirmwareConfig;
use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::*;

use crate::util::{profile, Bench, STEP_MS};

const CFG: FirmwareConfig = FirmwareConfig::REFERENCE;

/// Heat on a ramp until the heater is clearly on and the reading is `above_c`.
fn heating_bench(above_c: f64) -> Bench {
    let mut b = Bench::new();
    let id = b.send(Command::Start(profile(150.0, &[(120.0, 30.0, 600)])));
    assert_eq!(b.reply_to(id), Some(Ok(())));
    b.run_until(600_000, |b| b.plant.borrow().temp_c > above_c);
    assert!(!b.heater_off(), "heater on while ramping");
    b
}

fn assert_latched(b: &Bench, fault: Fault) {
    assert!(
        matches!(b.device.mode(), Mode::Faulted(f) if *f == fault),
        "mode {:?}",
        b.device.mode()
    );
    assert_eq!(b.faults(), vec![fault], "exactly one fault report");
    assert!(b.heater_off());
}

struct Scenario {
    name: &'static str,
    fault: Fault,
    /// Deadline from the moment the cause appears, ms.
    deadline_ms: u32,
    cause: fn(&mut Bench),
}

#[test]
fn every_interlock_turns_the_heater_off_by_its_deadline_and_latches() {
    let scenarios = [
        Scenario {
            name: "thermocouple opens mid-ramp",
            fault: Fault::ThermocoupleOpen,
            deadline_ms: STEP_MS, // one control period
            cause: |b| b.plant.borrow_mut().tc_fault = Some(ThermoFault::Open),
        },
        Scenario {
            name: "thermocouple shorts to GND",
            fault: Fault::ThermocoupleShortGnd,
            deadline_ms: STEP_MS,
            cause: |b| b.plant.borrow_mut().tc_fault = Some(ThermoFault::ShortToGnd),
        },
        Scenario {
            name: "host heartbeat lost",
            fault: Fault::HeartbeatLost,
            deadline_ms: u32::from(CFG.limits.heartbeat_timeout_ms) + 500 + STEP_MS,
            cause: |b| b.heartbeat = false,
        },
        Scenario {
            name: "over-temperature from an outside heat source",
            fault: Fault::OverTemperature,
            deadline_ms: 60_000,
            cause: |b| b.plant.borrow_mut().external_heat_w = 400.0,
        },
        Scenario {
            name: "stuck thermocouple reading",
            fault: Fault::StuckReading,
            deadline_ms: CFG.stuck_timeout_ms + STEP_MS,
            cause: |b| {
                let w = ThermoWord::from_parts(200, 400, None);
                b.plant.borrow_mut().frozen_word = Some(w)
            },
        },
        Scenario {
            name: "heater detached",
            fault: Fault::NoHeatingResponse,
            // full duty must first be reached, then the window runs
            deadline_ms: u32::from(CFG.limits.no_rise_timeout_s) * 2000 + STEP_MS,
            cause: |b| b.plant.borrow_mut().heater_attached = false,
        },
        Scenario {
            name: "reading jumps faster than physics allows",
            fault: Fault::RiseTooFast,
            deadline_ms: 1000 + STEP_MS,
            cause: |b| b.plant.borrow_mut().temp_c += 30.0,
        },
    ];
    for s in scenarios {
        let mut b = heating_bench(60.0);
        (s.cause)(&mut b);
        let took = b.run_until(s.deadline_ms, |b| b.heater_off());
        assert!(
            took <= s.deadline_ms,
            "{}: heater off after {took} ms",
            s.name
        );
        // it stays off and latched
        b.run_for(3_000);
        assert!(b.heater_off(), "{}: heater came back", s.name);
        assert_latched(&b, s.fault);
        // a new run is refused while latched
        let id = b.send(Command::Start(profile(150.0, &[(100.0, 30.0, 60)])));
        assert_eq!(
            b.reply_to(id),
            Some(Err(RefuseReason::FaultLatched(s.fault))),
            "{}",
            s.name
        );
        b.run_for(1_000);
        assert!(b.heater_off(), "{}", s.name);
    }
}

#[test]
fn over_temperature_clears_only_below_the_reset_margin() {
    let mut b = heating_bench(60.0);
    b.plant.borrow_mut().external_heat_w = 400.0;
    b.run_until(60_000, |b| b.heater_off());
    assert_latched(&b, Fault::OverTemperature);
    // still hot: refused, with the numbers
    let id = b.send(Command::ClearFault);
    match b.reply_to(id) {
        Some(Err(RefuseReason::TooHotToClear {
            temp_tenth_c,
            below_tenth_c,
        })) => {
            assert!(temp_tenth_c > 1500);
            assert_eq!(below_tenth_c, 1500 - CFG.limits.reset_margin_tenth_c);
        }
        other => panic!("clear while hot: {other:?}"),
    }
    assert!(matches!(
        b.device.mode(),
        Mode::Faulted(Fault::OverTemperature)
    ));
    // cool down below the margin, then clear
    b.plant.borrow_mut().external_heat_w = 0.0;
    b.plant.borrow_mut().temp_c = 130.0;
    b.run_for(500);
    let id = b.send(Command::ClearFault);
    assert_eq!(b.reply_to(id), Some(Ok(())));
    assert!(matches!(b.device.mode(), Mode::Idle));
}

#[test]
fn thermocouple_fault_cannot_be_cleared_while_open() {
    let mut b = heating_bench(40.0);
    b.plant.borrow_mut().tc_fault = Some(ThermoFault::Open);
    b.run_for(200);
    let id = b.send(Command::ClearFault);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::FaultLatched(Fault::ThermocoupleOpen)))
    );
    b.plant.borrow_mut().tc_fault = None;
    let id = b.send(Command::ClearFault);
    assert_eq!(b.reply_to(id), Some(Ok(())));
}

#[test]
fn commands_beyond_the_limits_are_refused_not_clamped() {
    let mut b = Bench::new();
    let ceiling = CFG.limits.ceiling_tenth_c;
    // setpoint above the compiled-in ceiling
    let id = b.start_manual(400.0, 400.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::AboveCeiling {
            ceiling_tenth_c: ceiling
        }))
    );
    // setpoint above the run's own limit
    let id = b.start_manual(120.0, 100.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::AboveRunLimit {
            limit_tenth_c: 1000
        }))
    );
    // profile target above its limit
    let id = b.send(Command::Start(profile(
        100.0,
        &[(80.0, 10.0, 10), (110.0, 10.0, 10)],
    )));
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::AboveRunLimit {
            limit_tenth_c: 1000
        }))
    );
    // empty profile, bad sampling settings
    let id = b.send(Command::Start(profile(100.0, &[])));
    assert_eq!(b.reply_to(id), Some(Err(RefuseReason::Invalid)));
    let id = b.send(Command::Configure(SamplingConfig {
        period_ms: 1,
        oversample: 4,
    }));
    assert_eq!(b.reply_to(id), Some(Err(RefuseReason::Invalid)));
    b.run_for(2_000);
    assert!(b.heater_off(), "nothing refused may heat");
    assert!(b.faults().is_empty());
}

#[test]
fn commands_before_the_handshake_or_from_another_version_are_refused() {
    let mut b = Bench::new();
    let other = Version {
        protocol: VERSION.protocol + 1,
        schema: 1,
    };
    let id = b.send(Command::Hello(other));
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::VersionMismatch(VERSION)))
    );
}

#[test]
fn a_profile_runs_to_the_end_and_turns_the_heater_off() {
    let mut b = Bench::new();
    let id = b.send(Command::Start(profile(
        120.0,
        &[(60.0, 60.0, 30), (40.0, 60.0, 10)],
    )));
    assert_eq!(b.reply_to(id), Some(Ok(())));
    let mut max_c: f64 = 0.0;
    b.run_until(3_600_000, |b| {
        max_c = max_c.max(b.plant.borrow().temp_c);
        matches!(b.device.mode(), Mode::Idle)
    });
    assert!((max_c - 60.0).abs() < 2.0, "peak {max_c}");
    assert!(b.heater_off());
    assert!(b.faults().is_empty(), "{:?}", b.faults());
    // samples arrived with consecutive sequence numbers
    let seqs: Vec<u8> = b
        .received
        .iter()
        .filter_map(|m| match m {
            DeviceMsg::Sample(s) => Some(s.seq_lo),
            _ => None,
        })
        .collect();
    assert!(seqs.len() > 1000);
    assert!(seqs.windows(2).all(|w| w[1] == w[0].wrapping_add(1)));
    assert_eq!(b.device.samples_dropped(), 0);
}

#[test]
fn device_fits_the_ram_budget() {
    // the library's state for one device: printed for DEVELOPERS.md, bounded well inside 16 KiB
    let size = std::mem::size_of::<crate::util::FakeDevice>();
    println!("Device state: {size} bytes");
    assert!(size < 4096, "{size} bytes");
}
