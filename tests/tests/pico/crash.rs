//! Failures of the firmware itself on the Pico image: a hard fault, a panic, a hung loop and a
//! wedged sensor bus each stop the enable line's edges at once, drop the relay within the
//! monostable's hold, reset the chip, and bring it back latched, saying why.

use crate::emu::{image, Emu, ENABLE_PIN, HEATER_PIN};
use crate::{handshake, manual, DRILLS_IMAGE, USER_IMAGE};
use remanent_protocol::{Command, Drill, ResetCause};

/// How fast a failure must take the heater off: GP15 stops toggling within `edges_ms` and the
/// relay's enable is low within `off_ms` (the monostable's hold after the last edge).
struct Deadline {
    edges_ms: u64,
    off_ms: u64,
}

/// A failure of the firmware: GP15 stops toggling and the relay drops within the deadline, the
/// chip resets, and comes back latched and saying why, with the heater staying off.
/// `after_reset` runs once the chip has reset (a wedged bus freed, say).
fn safe_after(
    e: &mut Emu,
    fail: impl FnOnce(&mut Emu),
    after_reset: impl FnOnce(&mut Emu),
    why: ResetCause,
    deadline: Deadline,
) {
    let off_within_ms = deadline.off_ms;
    handshake(e);
    e.send(manual(40.0, 50.0));
    e.run_alive(2000, 500);
    assert!(e.enable, "heating before the failure");
    let at = e.t_us;
    fail(e);
    assert!(
        e.run_until(off_within_ms + 5, |e| !e.enable),
        "the enable line fell"
    );
    let off = e.pin_went(ENABLE_PIN, false, at).expect("fell");
    let ms = (off - at) as f64 / 1000.0;
    // the relay drops because GP15 stopped toggling: its last rising edge came at the failure
    let last_edge = e.last_enable_edge_us.expect("GP15 toggled while heating");
    println!(
        "{why:?}: GP15's last rising edge {:.1} ms after the failure, relay enable low {ms:.1} ms \
         after it (longest gap between edges while heating {:.1} ms)",
        (last_edge as f64 - at as f64) / 1000.0,
        e.max_enable_gap_us as f64 / 1000.0
    );
    assert!(ms <= off_within_ms as f64, "{ms:.1} ms");
    assert!(
        last_edge <= at + deadline.edges_ms * 1000,
        "GP15 kept toggling until {last_edge} µs after a failure at {at} µs"
    );
    assert!(
        e.run_until(2000, |e| !e.events_with("reset watchdog").is_empty()),
        "the chip reset"
    );
    let reset_at = e.events_with("reset watchdog")[0];
    after_reset(e);
    let (_, h) = handshake(e);
    assert_eq!(h.boot.reset, why, "{h:?}");
    assert!(h.latched.is_some(), "comes back latched: {h:?}");
    // the host asks for heat again: refused while latched, and the line stays low
    e.send(manual(40.0, 50.0));
    e.run_alive(2000, 500);
    assert!(
        !e.pin_high_since(ENABLE_PIN, reset_at),
        "the heater stayed off after the reset"
    );
    assert!(!e.pin_high_since(HEATER_PIN, reset_at), "its output too");
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_hard_fault_drops_the_heater_and_resets_the_chip() {
    let mut e = Emu::start(&image(USER_IMAGE));
    let deadline = Deadline {
        edges_ms: 1,
        off_ms: 105,
    };
    safe_after(
        &mut e,
        |e| e.tell("F"),
        |_| {},
        ResetCause::HardFault,
        deadline,
    );
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_stuck_sensor_bus_hangs_the_loop_and_the_watchdog_resets_it() {
    let mut e = Emu::start(&image(USER_IMAGE));
    // a wedged device holds the I2C bus: the main loop never completes another period; while
    // it stays wedged the chip keeps resetting with the heater off, then it lets go
    let wedged = |e: &mut Emu| {
        let at = e.t_us;
        e.run_ms(3000);
        assert!(
            !e.pin_high_since(ENABLE_PIN, at),
            "the heater stayed off while wedged"
        );
        assert!(!e.pin_high_since(HEATER_PIN, at), "its output too");
        e.tell("I 0");
    };
    safe_after(
        &mut e,
        |e| e.tell("I 1"),
        wedged,
        ResetCause::Watchdog,
        // the loop blocks at its next sample's conversion (within one 100 ms period)
        Deadline {
            edges_ms: 150,
            off_ms: 250,
        },
    );
}

/// The failure a drills build carries out on command.
fn command_drill(drill: Drill) -> impl FnOnce(&mut Emu) {
    move |e: &mut Emu| {
        e.send(Command::Drill(drill));
    }
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico drills image: firmware/ci.sh runs it"]
fn pico_panic_drops_the_heater_within_100_ms_and_resets_the_chip() {
    let mut e = Emu::start(&image(DRILLS_IMAGE));
    let drill = command_drill(Drill::Panic);
    let deadline = Deadline {
        edges_ms: 10,
        off_ms: 115,
    };
    safe_after(&mut e, drill, |_| {}, ResetCause::Panic, deadline);
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico drills image: firmware/ci.sh runs it"]
fn pico_hung_loop_is_reset_by_the_watchdog_and_the_heater_stays_off() {
    let mut e = Emu::start(&image(DRILLS_IMAGE));
    let drill = command_drill(Drill::Hang);
    // the loop spins with interrupts still serviced: no edges, so the relay drops long before
    // the watchdog resets the chip
    let deadline = Deadline {
        edges_ms: 10,
        off_ms: 115,
    };
    safe_after(&mut e, drill, |_| {}, ResetCause::Watchdog, deadline);
}
