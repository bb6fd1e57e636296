//! The Pico image users flash, run on an emulated RP2040 (npm's rp2040js, no boot ROM) with its
//! world simulated at the bus level from the rig model, held to the promises the host tests
//! make of the firmware library. Each scenario is judged from pins and bytes only: the enable
//! and heater lines, what crosses the USB link, and the rig's own temperatures.
//!
//! `firmware/ci.sh` builds the images and runs these (`--ignored`: they need Node and the
//! images): `REMANENT_PICO_IMAGE` is the build that becomes the UF2; `REMANENT_PICO_DRILLS_IMAGE`
//! the same board crate with its `drills` feature, for the panic and hung-loop drills a user's
//! image does not carry.

mod crash;
mod emu;
mod latch;
mod record;

use emu::{image, Emu, ENABLE_PIN, HEATER_PIN};
use remanent_protocol::{
    Command, DeviceHello, DeviceMsg, Fault, FixtureModel, RefuseReason, ResetCause, RunState,
    SamplingConfig, VERSION,
};

const USER_IMAGE: &str = "REMANENT_PICO_IMAGE";
/// The reference rig's identification.
const REFERENCE_FIXTURE: FixtureModel = FixtureModel {
    rate_mk_per_s: 4000,
    cooling_tau_s: 125,
    lag_ms: 0,
    rate_fall_ppm_per_k: 0,
};
const DRILLS_IMAGE: &str = "REMANENT_PICO_DRILLS_IMAGE";
/// USB serviced within this, µs (the bound: one control period's worth of slack).
const USB_SERVICE_LIMIT_US: u64 = 10_000;

fn hello(m: &DeviceMsg) -> Option<DeviceHello> {
    match m {
        DeviceMsg::Hello(h) => Some(h.clone()),
        _ => None,
    }
}

fn fault(m: &DeviceMsg) -> Option<Fault> {
    match m {
        DeviceMsg::Fault(f) => Some(f.fault),
        _ => None,
    }
}

/// Enumerated since the chip last started, and the device's hello after the host's (asked
/// again if the chip resets meanwhile).
fn handshake(e: &mut Emu) -> (u64, DeviceHello) {
    let last = |e: &Emu, what: &str| e.events_with(what).last().copied();
    let up = |e: &Emu| match (last(e, "usb configured"), last(e, "reset watchdog")) {
        (Some(configured), Some(reset)) => configured > reset,
        (configured, None) => configured.is_some(),
        (None, Some(_)) => false,
    };
    for _ in 0..5 {
        assert!(e.run_until(3000, |e| up(e)), "the device enumerated");
        let sent = e.t_us;
        e.send(Command::Hello(VERSION));
        if e.run_until(1000, |e| e.find(sent, hello).is_some()) {
            let found = e.find(sent, hello).expect("hello");
            // as the host does at every connection: the fixture's identification (the
            // reference rig: 600 W into 150 J/K, 1.2 W/K, the junction in the plate)
            let id = e.send(Command::Fixture(REFERENCE_FIXTURE));
            let acked = move |m: &DeviceMsg| match m {
                DeviceMsg::Ack(a) if a.id == id => Some(()),
                _ => None,
            };
            assert!(
                e.run_until(1000, |e| e.find(sent, acked).is_some()),
                "the identification was not taken"
            );
            return found;
        }
    }
    panic!(
        "no hello: {:?}",
        e.msgs.iter().rev().take(3).collect::<Vec<_>>()
    );
}

fn manual(setpoint_c: f64, limit_c: f64) -> Command {
    Command::Manual {
        setpoint_tenth_c: (setpoint_c * 10.0) as i16,
        limit_tenth_c: (limit_c * 10.0) as i16,
    }
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_boots_enumerates_and_says_hello_with_the_heater_off() {
    let mut e = Emu::start(&image(USER_IMAGE));
    let (t, h) = handshake(&mut e);
    println!("hello at {:.3} s: {h:?}", t as f64 / 1e6);
    assert_eq!(h.board.as_str(), "pico");
    assert_eq!(h.version, VERSION);
    assert_eq!(h.boot.reset, ResetCause::PowerOn);
    assert_eq!(h.latched, None);
    // idle: samples flow at the default 10 Hz and the heater is never enabled
    let from = e.t_us;
    e.run_alive(2000, 500);
    let samples = e
        .msgs
        .iter()
        .filter(|(t, m)| *t >= from && matches!(m, DeviceMsg::Sample(_)))
        .count();
    assert!((18..=22).contains(&samples), "{samples} samples in 2 s");
    assert!(
        !e.pin_high_since(ENABLE_PIN, 0),
        "the enable line stayed low"
    );
    assert_eq!(e.bad_frames, 0);
    println!(
        "longest wait of a USB buffer for the interrupt handler: {} µs",
        e.max_usb_service_us
    );
    assert!(
        e.max_usb_service_us <= USB_SERVICE_LIMIT_US,
        "{} µs",
        e.max_usb_service_us
    );
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_drops_the_heater_within_2_5_s_of_the_last_heartbeat() {
    let mut e = Emu::start(&image(USER_IMAGE));
    handshake(&mut e);
    e.send(manual(40.0, 50.0));
    e.run_alive(3000, 500);
    assert!(e.enable, "heating under manual control");
    // the host goes quiet
    let last = e.last_host_us.expect("sent");
    assert!(e.run_until(4000, |e| !e.enable), "the enable line fell");
    let off = e.pin_went(ENABLE_PIN, false, last).expect("fell");
    let after_s = (off - last) as f64 / 1e6;
    println!("heartbeat lost: enable low {after_s:.2} s after the last host bytes");
    assert!(after_s <= 2.5, "{after_s:.2} s");
    assert_eq!(e.find(last, fault).map(|x| x.1), Some(Fault::HeartbeatLost));
    assert!(
        e.max_usb_service_us <= USB_SERVICE_LIMIT_US,
        "{} µs",
        e.max_usb_service_us
    );
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_with_no_converter_reports_a_fault_and_never_heats() {
    let mut e = Emu::start(&image(USER_IMAGE));
    e.tell("C 0"); // nothing on the SPI bus: its data line reads as its pad's pull
    let (_, h) = handshake(&mut e);
    // the fault is latched from the first reading, before any host asked: the hello says so
    assert_eq!(h.latched, Some(Fault::SensorBus), "{h:?}");
    let id = e.send(manual(60.0, 70.0));
    e.run_alive(3000, 500);
    let refused = e.find(0, |m| match m {
        DeviceMsg::Refused(r) if r.id == id => Some(r.reason),
        _ => None,
    });
    println!(
        "no converter: hello latched {:?}, heat refused: {refused:?}",
        h.latched
    );
    assert_eq!(
        refused.map(|r| r.1),
        Some(RefuseReason::FaultLatched(Fault::SensorBus))
    );
    assert!(
        !e.pin_high_since(ENABLE_PIN, 0),
        "the enable line never rose"
    );
    assert!(!e.pin_high_since(HEATER_PIN, 0), "nor the heater output");
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_toggles_the_enable_within_the_monostable_hold_even_at_the_slowest_sampling() {
    let mut e = Emu::start(&image(USER_IMAGE));
    handshake(&mut e);
    // the longest the loop blocks: a sample of 16 conversions of both inputs
    let slowest = SamplingConfig {
        period_ms: 250,
        oversample: 16,
    };
    e.send(Command::Configure(slowest));
    e.run_alive(500, 500);
    e.send(manual(40.0, 50.0));
    e.run_alive(500, 500);
    let from = e.t_us;
    assert!(e.enable, "heating");
    e.run_alive(5000, 500);
    let gap_ms = e.max_enable_gap_us as f64 / 1000.0;
    println!("oversample 16: longest gap between GP15's rising edges {gap_ms:.1} ms");
    assert!(
        e.pin_went(ENABLE_PIN, false, from).is_none(),
        "the relay dropped while heating (longest gap {gap_ms:.1} ms)"
    );
    assert!(
        e.max_enable_gap_us * 3 <= emu::ENABLE_HOLD_US * 2,
        "a gap of {gap_ms:.1} ms leaves less than a third of the hold in reserve"
    );
}

#[test]
#[ignore = "needs Node, rp2040js and the Pico image: firmware/ci.sh runs it"]
fn pico_counts_what_it_cannot_send_while_the_host_stops_reading_for_3_s() {
    let mut e = Emu::start(&image(USER_IMAGE));
    handshake(&mut e);
    e.run_alive(2000, 500);
    e.tell("R 0");
    let stopped = e.t_us;
    e.run_alive(3000, 500);
    e.tell("R 1");
    let resumed = e.t_us;
    e.run_alive(3000, 500);
    // the pause was real: nothing reached the host while it did not read
    let during = e
        .msgs
        .iter()
        .filter(|(t, _)| *t > stopped + 50_000 && *t < resumed)
        .count();
    assert_eq!(
        during, 0,
        "{during} messages arrived while the host was not reading"
    );
    // every sample numbered from before the pause to after it arrived, or is counted dropped
    let mut seqs: Vec<u8> = Vec::new();
    let mut beacons = Vec::new();
    for (t, m) in &e.msgs {
        match m {
            DeviceMsg::Sample(s) if *t >= stopped - 1_000_000 => seqs.push(s.seq_lo),
            DeviceMsg::Beacon(b) => beacons.push((*t, *b)),
            _ => {}
        }
    }
    let missing: u32 = seqs
        .windows(2)
        .map(|w| u32::from(w[1].wrapping_sub(w[0])).saturating_sub(1))
        .sum();
    let before = beacons
        .iter()
        .rfind(|b| b.0 < stopped)
        .map(|b| b.1.dropped_total);
    let after = beacons.last().map(|b| b.1.dropped_total);
    let counted = after.unwrap_or(0) - before.unwrap_or(0);
    println!(
        "host paused 3 s: {} samples arrived, {missing} missing, {counted} counted dropped",
        seqs.len()
    );
    assert_eq!(missing, counted, "each missing sample is counted");
    assert!(
        seqs.len() + missing as usize >= 60,
        "the samples kept being taken"
    );
    assert_eq!(beacons.last().map(|b| b.1.state), Some(RunState::Idle));
    assert!(
        e.max_usb_service_us <= USB_SERVICE_LIMIT_US,
        "{} µs",
        e.max_usb_service_us
    );
}
