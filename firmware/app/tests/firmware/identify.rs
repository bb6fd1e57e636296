//! A fixture nobody has identified heats only under the model-free limits; the host's
//! identification is bounds-checked and then judged against; an identification's duty steps.

use remanent_firmware::device::Mode;
use remanent_firmware::FirmwareConfig;
use remanent_protocol::*;

use crate::util::{bench_config, Bench};

fn unidentified() -> Bench {
    let cfg = FirmwareConfig {
        identified: false,
        ..bench_config()
    };
    Bench::with(
        cfg,
        BootReport::POWER_ON,
        HeaterDrive::Pwm { frequency_hz: 500 },
    )
}

/// The bench plant (150 W into 150 J/K, 0.5 W/K) as its identification states it.
const BENCH_MODEL: FixtureModel = FixtureModel {
    rate_mk_per_s: 1000,
    cooling_tau_s: 300,
    lag_ms: 0,
    rate_fall_ppm_per_k: 0,
};

#[test]
fn an_unidentified_fixture_heats_only_under_the_model_free_limits() {
    let mut b = unidentified();
    let limits = b.link.hello().expect("hello").limits;
    assert_eq!((limits.ceiling_tenth_c, limits.duty_cap_pct), (800, 20));
    let id = b.start_manual(100.0, 120.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::AboveCeiling {
            ceiling_tenth_c: 800
        }))
    );
    // a duty step above the model-free cap is refused; at it, accepted and applied
    let id = b.send(Command::Duty {
        duty_pct: 30,
        limit_tenth_c: 700,
    });
    assert_eq!(b.reply_to(id), Some(Err(RefuseReason::Invalid)));
    let id = b.send(Command::Duty {
        duty_pct: 20,
        limit_tenth_c: 700,
    });
    assert_eq!(b.reply_to(id), Some(Ok(())));
    b.run_for(5_000);
    let duty = b.plant.borrow().duty;
    assert!((duty - 0.2).abs() < 1e-3, "duty {duty}");
    // with no model nothing judges the response: a detached heater is not called out …
    b.plant.borrow_mut().heater_attached = false;
    b.run_for(120_000);
    assert!(b.faults().is_empty(), "{:?}", b.faults());
    // … but the model-free ceiling holds whatever heats the block
    b.plant.borrow_mut().heater_attached = true;
    b.plant.borrow_mut().external_heat_w = 300.0;
    b.run_until(600_000, |b| matches!(b.device.mode(), Mode::Faulted(_)));
    assert_eq!(b.faults()[0], Fault::OverTemperature);
    assert!(b.plant.borrow().temp_c < 71.0);
}

#[test]
fn the_identification_is_checked_and_then_judged_against() {
    let mut b = unidentified();
    for bad in [
        FixtureModel {
            rate_mk_per_s: 0,
            ..BENCH_MODEL
        },
        FixtureModel {
            rate_mk_per_s: 60_000,
            ..BENCH_MODEL
        },
        FixtureModel {
            cooling_tau_s: 5,
            ..BENCH_MODEL
        },
        FixtureModel {
            lag_ms: 6_000,
            ..BENCH_MODEL
        },
        FixtureModel {
            rate_fall_ppm_per_k: 2_500,
            ..BENCH_MODEL
        },
    ] {
        let id = b.send(Command::Fixture(bad));
        assert_eq!(b.reply_to(id), Some(Err(RefuseReason::Invalid)), "{bad:?}");
    }
    let id = b.send(Command::Fixture(BENCH_MODEL));
    assert_eq!(b.reply_to(id), Some(Ok(())));
    // the ceiling is the board's again, and a run cannot change the model under way
    let id = b.start_manual(100.0, 120.0);
    assert_eq!(b.reply_to(id), Some(Ok(())));
    let id = b.send(Command::Fixture(BENCH_MODEL));
    assert_eq!(b.reply_to(id), Some(Err(RefuseReason::Busy)));
    b.run_until(300_000, |b| b.plant.borrow().temp_c > 60.0);
    // now a detached heater is caught
    b.plant.borrow_mut().heater_attached = false;
    b.run_until(30_000, |b| matches!(b.device.mode(), Mode::Faulted(_)));
    assert_eq!(b.faults(), vec![Fault::NoHeatingResponse]);
}
