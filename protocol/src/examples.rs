//! One example of every message, for golden-vector tests, benchmarks and documentation.

use crate::*;

/// A typical sample: 25.00 °C thermocouple, 24.5 °C cold junction, heater at 40 %.
pub fn sample() -> Sample {
    Sample {
        seq_lo: 0x2a,
        status: SampleStatus::new(true, false, 3),
        hall_code: 12_345,
        probe_code: 16_000,
        thermo: ThermoWord::from_parts(100, 392, None),
        duty: 102,
    }
}

/// Example safety limits.
pub fn limits() -> SafetyLimits {
    SafetyLimits {
        ceiling_tenth_c: 2500,
        heartbeat_timeout_ms: 2000,
        max_rise_tenth_c_per_s: 50,
        response_window_s: 120,
        reset_margin_tenth_c: 100,
        duty_cap_pct: 80,
    }
}

/// One named example of every device message.
pub fn device() -> [(&'static str, DeviceMsg); 7] {
    [
        (
            "hello",
            DeviceMsg::Hello(DeviceHello {
                version: VERSION,
                firmware: [0, 1, 0],
                board: Label::new("virtual"),
                sensors: SensorSetup {
                    hall_full_scale_uv: 2_048_000,
                    probe_full_scale_uv: 4_096_000,
                    supply_mv: 3300,
                    ntc_series_ohm: 10_000,
                    thermo: ThermoKind::TypeKLinear,
                    period_ms: 100,
                    oversample: 4,
                },
                limits: limits(),
                heater: HeaterDrive::TimeProportioning {
                    window_ms: 2000,
                    half_cycle_us: 10_000,
                },
                boot: BootReport {
                    reset: ResetCause::Watchdog,
                    last_fault: Some(Fault::StuckReading),
                    locked: false,
                },
                latched: Some(Fault::Watchdog),
            }),
        ),
        ("sample", DeviceMsg::Sample(sample())),
        (
            "beacon",
            DeviceMsg::Beacon(Beacon {
                seq: 300,
                epoch_seq: 0,
                epoch_ms: 1_000,
                period_ms: 100,
                dropped_total: 2,
                state: RunState::Profile,
                setpoint_tenth_c: 853,
            }),
        ),
        (
            "state",
            DeviceMsg::State(StateReport {
                time_ms: 65_000,
                state: RunState::Profile,
                segment: 2,
            }),
        ),
        (
            "fault",
            DeviceMsg::Fault(FaultReport {
                time_ms: 70_000,
                fault: Fault::ThermocoupleOpen,
                temp_tenth_c: 1234,
            }),
        ),
        ("ack", DeviceMsg::Ack(Ack { id: 7 })),
        (
            "refused",
            DeviceMsg::Refused(Refusal {
                id: 8,
                reason: RefuseReason::AboveRunLimit {
                    limit_tenth_c: 1500,
                },
            }),
        ),
    ]
}

/// One named example of every host command.
pub fn host() -> [(&'static str, HostMsg); 11] {
    let mut segments = Segments::default();
    let _ = segments.0.push(Segment {
        target_tenth_c: 1000,
        ramp_tenth_c_per_min: 50,
        hold_s: 600,
    });
    let _ = segments.0.push(Segment {
        target_tenth_c: 250,
        ramp_tenth_c_per_min: 50,
        hold_s: 300,
    });
    let msg = |id, command| HostMsg { id, command };
    [
        ("host hello", msg(1, Command::Hello(VERSION))),
        (
            "start",
            msg(
                2,
                Command::Start(Profile {
                    limit_tenth_c: 1200,
                    segments,
                }),
            ),
        ),
        ("stop", msg(3, Command::Stop)),
        (
            "manual",
            msg(
                4,
                Command::Manual {
                    setpoint_tenth_c: 500,
                    limit_tenth_c: 800,
                },
            ),
        ),
        ("heartbeat", msg(300, Command::Heartbeat)),
        (
            "configure",
            msg(
                6,
                Command::Configure(SamplingConfig {
                    period_ms: 100,
                    oversample: 4,
                }),
            ),
        ),
        ("clear", msg(7, Command::ClearFault)),
        ("inject", msg(8, Command::InjectFault)),
        ("drill", msg(9, Command::Drill(Drill::Hang))),
        (
            "fixture",
            msg(
                10,
                Command::Fixture(FixtureModel {
                    rate_mk_per_s: 4000,
                    cooling_tau_s: 125,
                    lag_ms: 500,
                    rate_fall_ppm_per_k: 800,
                }),
            ),
        ),
        (
            "duty",
            msg(
                11,
                Command::Duty {
                    duty_pct: 20,
                    limit_tenth_c: 800,
                },
            ),
        ),
    ]
}
