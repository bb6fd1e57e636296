//! The firmware's interlocks through the real control loop on the physical model of the
//! reference fixture (600 W into a 150 J/K plate): faults of the fixture itself, each judged
//! from the model's truth (the plate temperature, the heater power), not from firmware
//! internals.

use remanent::virtual_rig::{SimulatedBench, VirtualRigOptions};
use remanent_protocol::decoder::DeviceDecoder;
use remanent_protocol::*;
use remanent_rig_model::{catalogue, HeaterSwitch, RigFaults};

struct Driver {
    bench: SimulatedBench,
    decoder: DeviceDecoder,
    faults: Vec<Fault>,
    reports: Vec<FaultReport>,
    next_id: u16,
}

impl Driver {
    fn new(faults: RigFaults, switch: HeaterSwitch) -> Driver {
        let mut opts = VirtualRigOptions::new(catalogue::find("RM-N42SH-D10x5").unwrap().magnet);
        opts.faults = faults;
        opts.params.switch = switch;
        let bench = SimulatedBench::new(opts, remanent::virtual_rig::virtual_config(1.0));
        let mut d = Driver {
            bench,
            decoder: DeviceDecoder::for_device_msgs(),
            faults: Vec::new(),
            reports: Vec::new(),
            next_id: 1,
        };
        d.send(Command::Hello(VERSION));
        d
    }

    fn send(&mut self, command: Command) {
        let mut buf = [0u8; MAX_HOST_FRAME];
        let msg = HostMsg {
            id: self.next_id,
            command,
        };
        self.next_id += 1;
        let frame = encode(&msg, &mut buf).unwrap().to_vec();
        self.bench.receive(&frame);
    }

    /// Advance `seconds` with a heartbeat every half second; the highest plate temperature.
    fn run(&mut self, seconds: f64) -> f64 {
        let mut peak = f64::MIN;
        for _ in 0..(seconds * 2.0) as usize {
            self.send(Command::Heartbeat);
            let bytes = self.bench.advance(0.5);
            let (faults, reports) = (&mut self.faults, &mut self.reports);
            self.decoder.feed(&bytes, |m| {
                if let Ok(DeviceMsg::Fault(f)) = m {
                    faults.push(f.fault);
                    reports.push(f);
                }
            });
            peak = peak.max(self.bench.truth().plate_c);
        }
        peak
    }
}

#[test]
fn a_thermocouple_that_slips_off_near_the_limit_trips_before_the_block_passes_it_by_10_k() {
    // holding 145 °C under a 150 °C run limit; the junction comes off at 1500 s and cools to
    // the air, which warms at 1.5 °C/min: the controller pushes full power into the block
    let faults = RigFaults {
        thermocouple_detached_at_s: Some(1500.0),
        ..RigFaults::default()
    };
    let mut d = Driver::new(faults, HeaterSwitch::Dc);
    d.send(Command::Manual {
        setpoint_tenth_c: 1450,
        limit_tenth_c: 1500,
    });
    d.run(1490.0);
    assert!(
        d.faults.is_empty(),
        "a normal hold trips nothing: {:?}",
        d.faults
    );
    let peak = d.run(300.0);
    assert_eq!(d.faults, vec![Fault::NoHeatingResponse]);
    let tripped_s = f64::from(d.reports[0].time_ms) / 1000.0 - 1500.0;
    println!("detached at 145 °C: tripped {tripped_s:.1} s later, block peak {peak:.1} °C");
    assert!(peak < 160.0, "the block reached {peak:.1} °C");
    assert_eq!(d.bench.truth().heater_w, 0.0);
}

#[test]
fn a_switch_that_fails_on_is_reported_and_the_enable_line_dropped() {
    let faults = RigFaults {
        switch_stuck_on_at_s: Some(400.0),
        ..RigFaults::default()
    };
    let mut d = Driver::new(faults, HeaterSwitch::Dc);
    d.run(600.0);
    // the block heats on past the ceiling (350 °C): that is reported too, once
    assert_eq!(
        d.faults,
        vec![Fault::HeatingWhileOff, Fault::OverTemperature]
    );
    // reported once the idle block is past the ambient band (a hand-warm part stays within
    // it) and still rising beyond what no duty explains: a few seconds of 4 K/s heating. The
    // firmware can only drop the enable line and say so; the independent thermal cut-off and
    // the contactor on the enable line do the rest (hardware-notes/safety.md)
    let r = d.reports[0];
    println!(
        "switch failed on at 400 s: reported at {:.1} s, {:.1} °C",
        f64::from(r.time_ms) / 1000.0,
        f64::from(r.temp_tenth_c) / 10.0
    );
    assert!(r.time_ms <= 400_000 + 10_000, "{r:?}");
    assert!(r.temp_tenth_c < 600, "{r:?}");
}

#[test]
fn an_unpowered_converter_is_a_fault_and_never_heats() {
    let faults = RigFaults {
        converter_absent_at_s: Some(0.0),
        ..RigFaults::default()
    };
    let mut d = Driver::new(faults, HeaterSwitch::Dc);
    d.send(Command::Manual {
        setpoint_tenth_c: 800,
        limit_tenth_c: 1000,
    });
    let peak = d.run(60.0);
    assert!(
        d.faults.contains(&Fault::ConverterImplausible),
        "{:?}",
        d.faults
    );
    assert!(peak < 25.0, "heated to {peak:.1} °C");
}

#[test]
fn a_zero_crossing_relay_on_time_proportioning_follows_the_setpoint() {
    let relay = HeaterSwitch::ZeroCross { half_cycle_s: 0.01 };
    let mut d = Driver::new(RigFaults::default(), relay);
    d.send(Command::Manual {
        setpoint_tenth_c: 800,
        limit_tenth_c: 1000,
    });
    d.run(900.0);
    assert!(d.faults.is_empty(), "{:?}", d.faults);
    let mut sum = 0.0;
    for _ in 0..60 {
        d.run(1.0);
        sum += d.bench.truth().plate_c;
    }
    let mean = sum / 60.0;
    assert!((mean - 80.0).abs() < 1.0, "held at {mean:.2} °C");
}
