//! Latches that mean it, boot records, refusals of what a board cannot do, and the heater's
//! time-proportioning output, through the real device.

use remanent_firmware::boot;
use remanent_firmware::device::{Mode, Persisted};
use remanent_firmware::fault_log::FaultLog;
use remanent_firmware::heater::{window_on_ms, Heater};
use remanent_firmware::safety::latch::cooling_wait_ms;
use remanent_protocol::*;

use crate::flash::MockFlash;
use crate::safety_scenarios::{assert_latched, assert_latched_then, heating_bench};
use crate::util::{bench_config, Bench, FakePin, FakePwm, Plant, Shared};

/// Detach the heater, wait for the trip, cool to ambient, clear.
fn trip_and_recover(b: &mut Bench) -> Option<RefuseReason> {
    let id = b.send(Command::Start(crate::util::profile(
        150.0,
        &[(120.0, 30.0, 600)],
    )));
    if let Some(Err(r)) = b.reply_to(id) {
        return Some(r);
    }
    b.run_until(120_000, |b| b.plant.borrow().temp_c > 50.0);
    b.plant.borrow_mut().heater_attached = false;
    b.run_until(20_000, |b| matches!(b.device.mode(), Mode::Faulted(_)));
    b.plant.borrow_mut().heater_attached = true;
    // still hot: refused
    let id = b.send(Command::ClearFault);
    assert!(matches!(b.reply_to(id), Some(Err(_))));
    b.plant.borrow_mut().temp_c = 24.0;
    b.run_for(1_000);
    let id = b.send(Command::ClearFault);
    if let Some(Err(r)) = b.reply_to(id) {
        if matches!(r, RefuseReason::LockedOut { .. }) {
            return Some(r);
        }
        // a thermocouple that saw no heating may be reading air: its word near ambient is
        // not enough until the block has had its own time to cool from the run limit
        assert_eq!(r, RefuseReason::FaultLatched(Fault::NoHeatingResponse));
    }
    b.run_for(cooling_wait_ms(&bench_config(), 1500, 250));
    let id = b.send(Command::ClearFault);
    b.reply_to(id).and_then(|r| r.err())
}

#[test]
fn the_third_heating_trip_within_an_hour_locks_heating_until_power_is_cycled() {
    let mut b = Bench::new();
    assert_eq!(
        trip_and_recover(&mut b),
        None,
        "first trip clears near ambient"
    );
    assert_eq!(trip_and_recover(&mut b), None, "second trip clears too");
    let third = trip_and_recover(&mut b);
    assert_eq!(third, Some(RefuseReason::LockedOut { trips: 3 }));
    let id = b.start_manual(40.0, 100.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::LockedOut { trips: 3 }))
    );
    b.run_for(2_000);
    assert!(b.heater_off());
    // the lock is what the board keeps across a reset
    assert!(b.device.persisted().locked);
    // a reset (not a power cycle) brings it back, and no clear releases it
    let mut words = boot::record(b.device.persisted());
    words[1] = boot::cause_code(ResetCause::Watchdog);
    let mut b = Bench::with(
        bench_config(),
        boot::on_start(words, None),
        HeaterDrive::Pwm { frequency_hz: 500 },
    );
    b.run_for(1_000_000);
    let id = b.send(Command::ClearFault);
    assert!(matches!(
        b.reply_to(id),
        Some(Err(RefuseReason::LockedOut { .. }))
    ));
}

#[test]
fn a_power_cycle_keeps_the_latch_and_the_lock_and_only_a_clear_near_ambient_releases_them() {
    let mut b = Bench::new();
    let mut log = FaultLog::open(MockFlash::<256>::new(), 0).expect("log");
    for _ in 0..2 {
        assert_eq!(trip_and_recover(&mut b), None);
        log.store(b.device.persisted()).expect("kept");
    }
    assert_eq!(
        trip_and_recover(&mut b),
        Some(RefuseReason::LockedOut { trips: 3 })
    );
    log.store(b.device.persisted()).expect("kept");
    // the power goes: the reset record with it, the flash not
    let log = FaultLog::open(log.release(), 0).expect("reopens");
    let boot = boot::on_start([0; 4], log.last());
    assert_eq!(
        boot,
        BootReport {
            reset: ResetCause::PowerOn,
            last_fault: Some(Fault::NoHeatingResponse),
            locked: true
        }
    );
    let mut b = Bench::with(bench_config(), boot, HeaterDrive::Pwm { frequency_hz: 500 });
    assert!(matches!(
        b.device.mode(),
        Mode::Faulted(Fault::NoHeatingResponse)
    ));
    let id = b.start_manual(40.0, 100.0);
    assert!(matches!(
        b.reply_to(id),
        Some(Err(RefuseReason::LockedOut { .. }))
    ));
    // a clear while the block is warm, or before it has had its own time to cool: refused
    b.plant.borrow_mut().temp_c = 90.0;
    b.run_for(1_000);
    let id = b.send(Command::ClearFault);
    assert!(matches!(
        b.reply_to(id),
        Some(Err(RefuseReason::TooHotToClear { .. }))
    ));
    b.plant.borrow_mut().temp_c = 24.0;
    b.run_for(1_000);
    let id = b.send(Command::ClearFault);
    assert!(matches!(
        b.reply_to(id),
        Some(Err(RefuseReason::LockedOut { .. }))
    ));
    let ceiling = bench_config().ceiling_tenth_c();
    b.run_for(cooling_wait_ms(&bench_config(), ceiling, 250));
    let id = b.send(Command::ClearFault);
    assert_eq!(
        b.reply_to(id),
        Some(Ok(())),
        "released after its cooling time"
    );
    assert_eq!(b.device.persisted(), Persisted::default());
    let id = b.start_manual(40.0, 100.0);
    assert_eq!(b.reply_to(id), Some(Ok(())));
}

#[test]
fn a_fault_that_persists_cannot_be_cleared() {
    let mut b = heating_bench(60.0);
    b.plant.borrow_mut().converter_absent = true;
    b.run_for(200);
    assert_latched(&b, Fault::ConverterImplausible);
    b.plant.borrow_mut().temp_c = 22.0;
    let id = b.send(Command::ClearFault);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::FaultLatched(Fault::ConverterImplausible)))
    );
    b.plant.borrow_mut().converter_absent = false;
    let id = b.send(Command::ClearFault);
    assert_eq!(b.reply_to(id), Some(Ok(())));
}

#[test]
fn a_board_reset_by_its_watchdog_comes_up_latched_and_says_why() {
    let boot = BootReport {
        reset: ResetCause::Watchdog,
        last_fault: Some(Fault::StuckReading),
        locked: false,
    };
    let mut b = Bench::with(bench_config(), boot, HeaterDrive::Pwm { frequency_hz: 500 });
    let hello = b.link.hello().expect("hello");
    assert_eq!(hello.boot, boot);
    // the converter says its own full scale: the device names no chip
    assert_eq!(
        hello.sensors.hall_full_scale_uv,
        crate::util::FAKE_HALL_FULL_SCALE_UV
    );
    assert!(matches!(b.device.mode(), Mode::Faulted(Fault::Watchdog)));
    let id = b.start_manual(40.0, 100.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::FaultLatched(Fault::Watchdog)))
    );
    // near ambient: the host may clear it
    let id = b.send(Command::ClearFault);
    assert_eq!(b.reply_to(id), Some(Ok(())));
    // the reset counted as a trip: two more heating trips lock
    assert_eq!(trip_and_recover(&mut b), None, "second trip clears");
    assert_eq!(
        trip_and_recover(&mut b),
        Some(RefuseReason::LockedOut { trips: 3 })
    );
    // a lock survives the reset
    let locked = BootReport {
        locked: true,
        ..BootReport::POWER_ON
    };
    let mut b = Bench::with(
        bench_config(),
        locked,
        HeaterDrive::Pwm { frequency_hz: 500 },
    );
    let id = b.start_manual(40.0, 100.0);
    assert!(matches!(
        b.reply_to(id),
        Some(Err(RefuseReason::LockedOut { .. }))
    ));
}

#[test]
fn what_the_board_cannot_do_is_refused_with_the_reason() {
    let mut b = Bench::new();
    let id = b.send(Command::Drill(Drill::Panic));
    assert_eq!(b.reply_to(id), Some(Err(RefuseReason::Unsupported)));
    // 16 conversions of each input at 1.5 ms do not fit in 20 ms
    let id = b.send(Command::Configure(SamplingConfig {
        period_ms: 20,
        oversample: 16,
    }));
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::TooFastForBoard { min_period_ms: 49 }))
    );
    let id = b.send(Command::Configure(SamplingConfig {
        period_ms: 50,
        oversample: 16,
    }));
    assert_eq!(b.reply_to(id), Some(Ok(())));
}

#[test]
fn time_proportioning_turns_the_output_fully_on_for_whole_half_cycles() {
    let plant: Shared = Default::default();
    let drive = HeaterDrive::TimeProportioning {
        window_ms: 2000,
        half_cycle_us: 10_000,
    };
    let mut heater = Heater::new(FakePwm(plant.clone()), FakePin(plant.clone()), 85, drive);
    let mut interlocks = remanent_firmware::safety::Interlocks::new(bench_config(), 0);
    let word = ThermoWord::from_parts(4 * 30, 16 * 25, None);
    let reading = remanent_firmware::safety::Reading::Word(word);
    let permit = interlocks
        .check(0, reading, (0.0, 0.0), true)
        .unwrap()
        .unwrap();
    heater.drive(permit, 0.333).unwrap();
    // three windows at 1 ms steps: the output is only ever fully on or fully off
    let mut on_ms = 0;
    for now in 0..6000u32 {
        heater.tick(now).unwrap();
        let p: std::cell::Ref<Plant> = plant.borrow();
        assert!(p.duty == 0.0 || p.duty == 1.0, "partial duty {}", p.duty);
        on_ms += u32::from(p.duty == 1.0 && p.enabled);
    }
    assert_eq!(on_ms, 3 * window_on_ms(0.333, 2000, 10_000));
    assert_eq!(
        window_on_ms(0.333, 2000, 10_000),
        670,
        "67 half-cycles of 200"
    );
    heater.off().unwrap();
    assert!(!plant.borrow().enabled && plant.borrow().duty == 0.0);
}

#[test]
fn a_latch_held_when_the_board_went_down_is_held_again_after_the_restart() {
    // the board reset (not by its watchdog) while an over-temperature was latched: the record
    // it kept says so, and the device comes back latched, refusing to heat
    let boot = BootReport {
        reset: ResetCause::PowerOn,
        last_fault: Some(Fault::OverTemperature),
        locked: false,
    };
    let mut b = Bench::with(bench_config(), boot, HeaterDrive::Pwm { frequency_hz: 500 });
    assert!(matches!(
        b.device.mode(),
        Mode::Faulted(Fault::OverTemperature)
    ));
    let id = b.start_manual(40.0, 100.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::FaultLatched(Fault::OverTemperature)))
    );
    // a latch the host caused (a lost heartbeat) is not carried over
    let boot = BootReport {
        last_fault: Some(Fault::HeartbeatLost),
        ..boot
    };
    let b = Bench::with(bench_config(), boot, HeaterDrive::Pwm { frequency_hz: 500 });
    assert!(matches!(b.device.mode(), Mode::Idle));
}

#[test]
fn heat_from_outside_is_caught_as_unexplained_and_every_later_fault_is_reported() {
    // 400 W from outside into the 150 J/K block while it ramps: more than any duty explains
    let mut b = heating_bench(60.0);
    b.plant.borrow_mut().external_heat_w = 400.0;
    let took = b.run_until(15_000, |b| matches!(b.device.mode(), Mode::Faulted(_)));
    assert_latched(&b, Fault::HeatingWhileOff);
    println!("outside heat caught after {took} ms");
    // it goes on heating past the run limit (150 °C): that is reported too, once, and the
    // latched fault stays the first of the two equally bad ones
    b.run_until(200_000, |b| b.plant.borrow().temp_c > 151.0);
    b.run_for(5_000);
    assert_latched_then(&b, Fault::HeatingWhileOff, &[Fault::OverTemperature]);
    // a new run is refused with the latched fault named
    let id = b.start_manual(40.0, 100.0);
    assert_eq!(
        b.reply_to(id),
        Some(Err(RefuseReason::FaultLatched(Fault::HeatingWhileOff)))
    );
}
