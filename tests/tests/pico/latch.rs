//! Interlock trips on the Pico image and the latch that holds them: a detached thermocouple is
//! caught before the block passes its limit by 10 K, the enable line's edges stop at the trip,
//! and the latch comes back after the power is cycled (the fault log in flash).

use crate::emu::{image, Emu, ENABLE_PIN};
use crate::{fault, handshake, manual, USER_IMAGE};
use remanent_protocol::{Command, DeviceMsg, Fault, RefuseReason, ResetCause};

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_trips_a_detached_thermocouple_before_the_block_passes_its_limit_by_10_k() {
    let mut e = Emu::start(&image(USER_IMAGE));
    handshake(&mut e);
    let (setpoint, limit) = (45.0, 50.0);
    e.send(manual(setpoint, limit));
    // heat to near the setpoint, then the junction slips off the plate
    for _ in 0..180 {
        if e.rig.thermal.plate_c >= setpoint - 3.0 {
            break;
        }
        e.run_alive(500, 500);
    }
    assert!(
        e.rig.thermal.plate_c >= setpoint - 3.0,
        "heated to {:.1} °C",
        e.rig.thermal.plate_c
    );
    let at_s = e.rig.time_s();
    e.rig.faults.thermocouple_detached_at_s = Some(at_s);
    let detached_us = e.t_us;
    let tripped = loop {
        e.run_alive(500, 500);
        if let Some((t, f)) = e.find(detached_us, fault) {
            break Some((t, f));
        }
        if e.t_us > detached_us + 60_000_000 {
            break None;
        }
    };
    let (t, f) = tripped.expect("a trip within 60 s of the junction coming off");
    println!(
        "detached at {:.1} °C: {f:?} after {:.1} s, plate peak {:.1} °C",
        setpoint - 3.0,
        (t - detached_us) as f64 / 1e6,
        e.plate_max_c
    );
    assert!(
        e.plate_max_c < limit + 10.0,
        "plate reached {:.1} °C",
        e.plate_max_c
    );
    e.run_ms(500);
    assert!(!e.enable, "heater disabled after the trip");
    let last_edge = e.last_enable_edge_us.expect("GP15 toggled while heating");
    assert!(
        last_edge <= t,
        "GP15 toggled at {last_edge} µs, after the trip at {t} µs"
    );
}

/// The device's answer to command `id`, sent since `from_us`.
fn reply(e: &Emu, from_us: u64, id: u16) -> Option<Result<(), RefuseReason>> {
    e.find(from_us, |m| match m {
        DeviceMsg::Ack(a) if a.id == id => Some(Ok(())),
        DeviceMsg::Refused(r) if r.id == id => Some(Err(r.reason)),
        _ => None,
    })
    .map(|x| x.1)
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_keeps_a_latched_fault_through_a_power_cycle() {
    let mut e = Emu::start(&image(USER_IMAGE));
    handshake(&mut e);
    // a heating fault latched: over-temperature against a low run limit
    e.send(manual(45.0, 50.0));
    e.run_alive(1000, 500);
    e.rig.thermal.plate_c = 58.0;
    let at = e.t_us;
    e.run_alive(1000, 500);
    let (_, tripped) = e.find(at, fault).expect("a trip");
    assert_eq!(tripped, Fault::OverTemperature);
    // a moment for the log's write, with the heater off; then the power goes off and on
    e.run_alive(500, 500);
    e.tell("O");
    let cycled = e.t_us;
    e.run_ms(10);
    let (_, h) = handshake(&mut e);
    println!(
        "after the power cycle: {:?}, latched {:?}",
        h.boot, h.latched
    );
    assert_eq!(h.boot.reset, ResetCause::PowerOn);
    assert_eq!(h.boot.last_fault, Some(Fault::OverTemperature));
    assert_eq!(h.latched, Some(Fault::OverTemperature));
    // the host asks for heat: refused, naming the fault, and the relay stays off
    let id = e.send(manual(40.0, 50.0));
    e.run_alive(2000, 500);
    assert_eq!(
        reply(&e, cycled, id),
        Some(Err(RefuseReason::FaultLatched(Fault::OverTemperature)))
    );
    assert!(!e.pin_high_since(ENABLE_PIN, cycled));
    // still hot: a clear is refused; cooled, it clears, and a second power cycle comes up clean
    let id = e.send(Command::ClearFault);
    e.run_alive(500, 500);
    assert!(matches!(
        reply(&e, cycled, id),
        Some(Err(RefuseReason::TooHotToClear { .. }))
    ));
    e.rig.thermal.plate_c = 24.0;
    e.run_alive(3000, 500);
    let id = e.send(Command::ClearFault);
    e.run_alive(1000, 500);
    assert_eq!(reply(&e, cycled, id), Some(Ok(())), "cleared near ambient");
    e.tell("O");
    e.run_ms(10);
    let (_, h) = handshake(&mut e);
    assert_eq!(h.latched, None, "the clear was kept too: {h:?}");
}
