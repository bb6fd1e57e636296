//! The heater drive against the modelled switch: a zero-crossing relay driven by slow
//! time-proportioning delivers the commanded power; the same relay on fast PWM does not
//! (it switches only at mains zero crossings: common practice for such relays, and the reason
//! the firmware's board setting picks the drive).

use core::cell::RefCell;
use std::rc::Rc;

use remanent_firmware::heater::Heater;
use remanent_firmware::safety::{Interlocks, Reading};
use remanent_firmware::FirmwareConfig;
use remanent_protocol::{HeaterDrive, ThermoWord};
use remanent_rig_model::peripherals::{SimHeaterEnable, SimHeaterPwm};
use remanent_rig_model::{catalogue, HeaterSwitch, Rig, RigParams};

/// Mean heater power over `seconds` with the output driven at `duty` by `drive`, W.
fn mean_power_w(drive: HeaterDrive, duty: f32, seconds: u32) -> f64 {
    let mut params = RigParams::REFERENCE;
    params.switch = HeaterSwitch::ZeroCross { half_cycle_s: 0.01 };
    let magnet = catalogue::PARTS[0].magnet;
    let rig = Rc::new(RefCell::new(Rig::new(params, magnet, 1)));
    let mut heater = Heater::new(
        SimHeaterPwm(rig.clone()),
        SimHeaterEnable(rig.clone()),
        100,
        drive,
    );
    let mut interlocks = Interlocks::new(FirmwareConfig::REFERENCE, 0);
    let word = Reading::Word(ThermoWord::from_parts(4 * 25, 16 * 25, None));
    let permit = interlocks
        .check(0, word, (0.0, 0.0), true)
        .unwrap()
        .unwrap();
    heater.drive(permit, duty).unwrap();
    let mut energy_j = 0.0;
    for ms in 0..seconds * 1000 {
        heater.tick(ms).unwrap();
        rig.borrow_mut().advance(0.001);
        energy_j += rig.borrow().heater_power_w() * 0.001;
    }
    energy_j / f64::from(seconds)
}

#[test]
fn time_proportioning_delivers_the_duty_through_a_zero_crossing_relay() {
    let tp = HeaterDrive::TimeProportioning {
        window_ms: 2000,
        half_cycle_us: 10_000,
    };
    let full = RigParams::REFERENCE.thermal.heater_w;
    for duty in [0.1f32, 0.333, 0.5, 0.85] {
        let p = mean_power_w(tp, duty, 10);
        // within one half-cycle per window (0.5 % of full power)
        assert!(
            (p / full - f64::from(duty)).abs() <= 0.006,
            "duty {duty}: {p} W"
        );
    }
}

#[test]
fn fast_pwm_through_a_zero_crossing_relay_delivers_a_power_unrelated_to_the_duty() {
    let pwm = HeaterDrive::Pwm { frequency_hz: 500 };
    let full = RigParams::REFERENCE.thermal.heater_w;
    assert_eq!(mean_power_w(pwm, 0.4, 2), 0.0, "40 % duty: nothing");
    let p = mean_power_w(pwm, 0.6, 2);
    assert!((p - full).abs() < 1e-6, "60 % duty: full power, got {p} W");
}
