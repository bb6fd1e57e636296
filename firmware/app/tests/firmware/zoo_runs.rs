//! The zoo (`zoo.rs`) through the real control loop: every built-in profile a fixture can
//! reach runs to its end with no trip and holds its plateaus; every failure is caught by its
//! deadline with the block never more than 10 K above the run limit, named by its exact
//! fault; a restart from the board's record keeps the latch and the lockout. The figures are
//! printed (hardware-notes/safety.md quotes them).

use remanent_firmware::device::Mode;
use remanent_firmware::profile::Phase;
use remanent_firmware::safety::response::{excess_geometry, window_ms};
use remanent_protocol::*;

use crate::util::profile;
use crate::zoo::{AMBIENT_C, ZOO};
use crate::zoo_rig::{Faults, Rig};

/// The host's built-in profiles (`host/src/profiles.rs`): name, limit °C, segments (target
/// °C, ramp °C/min, hold s).
type BuiltIn = (&'static str, f64, &'static [(f64, f64, u32)]);

const PROFILES: [BuiltIn; 4] = [
    (
        "rapid",
        115.0,
        &[(25.0, 0.0, 20), (100.0, 25.0, 90), (38.0, 0.0, 300)],
    ),
    (
        "quick-alpha",
        115.0,
        &[(25.0, 0.0, 300), (100.0, 5.0, 240), (25.0, 5.0, 300)],
    ),
    (
        "exposure",
        165.0,
        &[(25.0, 0.0, 300), (150.0, 10.0, 1800), (25.0, 10.0, 300)],
    ),
    (
        "curie-sweep",
        350.0,
        &[(25.0, 0.0, 120), (340.0, 5.0, 60), (25.0, 20.0, 60)],
    ),
];

/// The longest the energy balance looks back, ms (16 buckets of 15 s).
const LONG_BALANCE_MS: u32 = 16 * 15_000 + 15_000;

/// A plateau is held within this of its target, K (read by the thermocouple).
const PLATEAU_K: f64 = 2.0;

/// What the fixture can reach at the firmware's duty cap with its true heater, °C.
fn reachable_c(rig: &Rig) -> f64 {
    let f = rig.fixture;
    let cap = f.config().duty_cap();
    // the equilibrium of cap·P(T) = loss·(T − ambient), P falling linearly from 20 °C
    let p = f64::from(cap) * f.true_w();
    (p * (1.0 + 20.0 * f.fall_per_k) + f.loss_w_per_k * AMBIENT_C)
        / (f.loss_w_per_k + p * f.fall_per_k)
}

#[test]
fn every_reachable_builtin_profile_runs_to_its_end_without_a_trip_and_holds_its_plateaus() {
    println!(
        "{:<48} {:<12} {:>8} {:>10}",
        "fixture", "profile", "min", "plateau_K"
    );
    let mut failures = Vec::new();
    for fixture in ZOO {
        for (name, limit, segs) in PROFILES {
            let mut rig = Rig::new(fixture);
            let top = segs.iter().map(|s| s.0).fold(0.0, f64::max);
            if reachable_c(&rig) < top + 5.0 {
                println!(
                    "{:<48} {name:<12} {:>8} {:>10}",
                    fixture.name, "—", "beyond"
                );
                continue;
            }
            let id = rig.send(Command::Start(profile(limit, segs)));
            assert_eq!(rig.reply_to(id), Some(Ok(())), "{} {name}", fixture.name);
            let mut worst: f64 = 0.0;
            let start = rig.now_ms;
            while let Mode::Profile(run) = rig.device.mode() {
                let (i, phase) = (run.segment_index(), run.phase());
                let (target, _, hold) = segs[i];
                if let Phase::Hold { since_ms } = phase {
                    // heated plateaus, once settled: after the first fifth of the hold or
                    // 30 s, whichever is longer
                    let into = rig.now_ms - since_ms;
                    if target > AMBIENT_C + 10.0 && into > (hold * 200).max(30_000) {
                        let tc = rig.plant.borrow().tc_c;
                        worst = worst.max((tc - target).abs());
                    }
                }
                rig.step();
                assert!(
                    rig.now_ms - start < 4 * 3600 * 1000,
                    "{} {name} never ended",
                    fixture.name
                );
            }
            let minutes = f64::from(rig.now_ms - start) / 60_000.0;
            println!(
                "{:<48} {name:<12} {minutes:>8.1} {worst:>10.2}",
                fixture.name
            );
            if !rig.faults().is_empty() || worst > PLATEAU_K {
                failures.push(format!(
                    "{} {name}: faults {:?}, plateau ±{worst:.2} K",
                    fixture.name,
                    rig.faults()
                ));
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

/// A failure, the fault it must raise, and how it is brought about.
struct Failure {
    name: &'static str,
    fault: Fault,
    cause: fn(&mut Faults),
    /// The host loops Stop, Manual and Start every second meanwhile.
    host_loops: bool,
}

const FAILURES: [Failure; 6] = [
    Failure {
        name: "thermocouple detached",
        fault: Fault::NoHeatingResponse,
        cause: |f| f.tc_detached = true,
        host_loops: false,
    },
    Failure {
        name: "thermocouple open",
        fault: Fault::ThermocoupleOpen,
        cause: |f| f.tc_open = true,
        host_loops: false,
    },
    Failure {
        name: "heater open",
        fault: Fault::NoHeatingResponse,
        cause: |f| f.heater_open = true,
        host_loops: false,
    },
    Failure {
        name: "relay shorted during the hold",
        fault: Fault::HeatingWhileOff,
        cause: |f| f.relay_shorted = true,
        host_loops: false,
    },
    Failure {
        name: "converter absent",
        fault: Fault::ConverterImplausible,
        cause: |f| f.converter_absent = true,
        host_loops: false,
    },
    Failure {
        name: "detached, host looping Stop/Manual/Start",
        fault: Fault::NoHeatingResponse,
        cause: |f| f.tc_detached = true,
        host_loops: true,
    },
];

/// The deadline for `fault` on this rig's fixture, ms: a sensor fault within two control
/// periods; no response within the response window the firmware states for the fixture;
/// unexplained heating within the excess watch's window and lag allowance.
fn deadline_ms(rig: &Rig, fault: Fault, limit_c: f64) -> u32 {
    let cfg = rig.fixture.config();
    match fault {
        Fault::NoHeatingResponse => window_ms(&cfg, limit_c as f32, AMBIENT_C as f32),
        Fault::HeatingWhileOff => {
            // a switch failed on at a hold shows at once when its power runs on; when the
            // enable line cuts it each time the controller backs off, the block only holds,
            // and the four-minute energy balance must find that it holds on too little duty
            let (bucket, n_w, n_total) = excess_geometry(&cfg);
            (2 * bucket * (n_w.max(n_total) as u32 + 1)).max(LONG_BALANCE_MS)
        }
        _ => 2 * u32::from(cfg.period_ms) + 100,
    }
}

#[test]
fn every_failure_is_caught_by_its_deadline_and_the_block_stays_within_10_k_of_the_limit() {
    println!(
        "{:<48} {:<42} {:>8} {:>9} {:>8}",
        "fixture", "failure", "took_ms", "deadline", "peak_C"
    );
    let mut failures = Vec::new();
    for fixture in ZOO {
        for fail in &FAILURES {
            let mut rig = Rig::new(fixture);
            let setpoint = (reachable_c(&rig) - 15.0).min(80.0);
            let limit = setpoint + 15.0;
            let manual = Command::Manual {
                setpoint_tenth_c: (setpoint * 10.0) as i16,
                limit_tenth_c: (limit * 10.0) as i16,
            };
            let id = rig.send(manual.clone());
            assert_eq!(rig.reply_to(id), Some(Ok(())));
            // settle on the hold: long enough for the slowest block to arrive
            let tau_ms = (fixture.c_j_per_k / fixture.loss_w_per_k * 1000.0) as u32;
            rig.run_for((3 * tau_ms).clamp(300_000, 3_600_000));
            assert!(
                rig.faults().is_empty(),
                "{}: the hold tripped {:?}",
                fixture.name,
                rig.faults()
            );
            (fail.cause)(&mut rig.plant.borrow_mut().faults);
            let deadline = deadline_ms(&rig, fail.fault, limit);
            let (start, mut peak) = (rig.now_ms, f64::MIN);
            while rig.latched().is_none() && rig.now_ms - start <= deadline {
                if fail.host_loops && (rig.now_ms - start).is_multiple_of(1000) {
                    rig.send(Command::Stop);
                    rig.send(manual.clone());
                    rig.send(Command::Start(profile(limit, &[(setpoint, 0.0, 600)])));
                }
                rig.step();
                peak = peak.max(rig.plant.borrow().block_c);
            }
            let took = rig.now_ms - start;
            // off for good: the block is watched a while longer
            for _ in 0..(5000 / 20) {
                rig.step();
                peak = peak.max(rig.plant.borrow().block_c);
            }
            println!(
                "{:<48} {:<42} {took:>8} {deadline:>9} {peak:>8.1}",
                fixture.name, fail.name
            );
            let first = rig.faults().first().copied();
            let ok = first == Some(fail.fault)
                && took <= deadline
                && peak <= limit + 10.0
                && rig.heater_off();
            if !ok {
                failures.push(format!(
                    "{} / {}: {:?} after {took} ms, peak {peak:.1} °C",
                    fixture.name,
                    fail.name,
                    rig.faults()
                ));
            }
            // a new run is refused with the fault named
            let id = rig.send(manual.clone());
            if rig.reply_to(id) != Some(Err(RefuseReason::FaultLatched(fail.fault))) {
                failures.push(format!(
                    "{} / {}: run after the fault {:?}",
                    fixture.name,
                    fail.name,
                    rig.reply_to(id)
                ));
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

#[test]
fn a_restart_from_the_boards_record_keeps_the_latch_and_the_lockout() {
    let fixture = ZOO[0];
    let mut rig = Rig::new(fixture);
    let id = rig.send(Command::Manual {
        setpoint_tenth_c: 600,
        limit_tenth_c: 800,
    });
    assert_eq!(rig.reply_to(id), Some(Ok(())));
    rig.run_for(300_000);
    rig.plant.borrow_mut().faults.relay_shorted = true;
    rig.run_for(LONG_BALANCE_MS);
    assert_eq!(rig.latched(), Some(Fault::HeatingWhileOff));
    // what the board keeps, read back at the next start (boot::record → boot::read)
    let words = remanent_firmware::boot::record(rig.device.persisted());
    let again = Rig::booted(fixture, remanent_firmware::boot::read(words));
    assert_eq!(again.latched(), Some(Fault::HeatingWhileOff));
    // and a lock survives the same way
    let locked = remanent_firmware::device::Persisted {
        fault: None,
        locked: true,
    };
    let mut again = Rig::booted(
        fixture,
        remanent_firmware::boot::read(remanent_firmware::boot::record(locked)),
    );
    let id = again.send(Command::Manual {
        setpoint_tenth_c: 400,
        limit_tenth_c: 800,
    });
    assert!(matches!(
        again.reply_to(id),
        Some(Err(RefuseReason::LockedOut { .. }))
    ));
}
