//! End to end over a real pseudo-terminal: the virtual rig (the real firmware on the physical
//! model) and the host recorder, then the analysis against the model's known truth.

use std::path::Path;
use std::sync::atomic::AtomicBool;
use std::sync::Arc;
use std::time::Duration;

use remanent::analysis::{analyze, Context};
use remanent::calibration::Calibration;
use remanent::input::dataset::{self, CsvOptions};
use remanent::jobs::record::{record, Quiet, RecordEnd, RecordOptions, RecordSummary};
use remanent::magnets;
use remanent::profiles::{ProfileSpec, SegmentSpec};
use remanent::specs::SpecTable;
use remanent::virtual_rig::{VirtualRig, VirtualRigOptions};

pub fn short_profile() -> ProfileSpec {
    ProfileSpec {
        name: "test".into(),
        description: "reference, ramp to 90 °C and back".into(),
        limit_c: 110.0,
        segments: vec![
            SegmentSpec {
                target_c: 25.0,
                ramp_c_per_min: 0.0,
                hold_s: 240.0,
            },
            SegmentSpec {
                target_c: 90.0,
                ramp_c_per_min: 6.0,
                hold_s: 120.0,
            },
            SegmentSpec {
                target_c: 25.0,
                ramp_c_per_min: 6.0,
                hold_s: 400.0,
            },
        ],
    }
}

fn run(
    magnet_id: &str,
    out: &Path,
    tweak: impl FnOnce(&mut VirtualRigOptions),
    profile: ProfileSpec,
) -> (RecordSummary, VirtualRig) {
    let m = magnets::resolve(magnet_id).unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    opts.speed = 100.0;
    tweak(&mut opts);
    let params = opts.params;
    let rig = VirtualRig::start(opts).unwrap();
    let port = remanent::link::port::open(rig.path()).unwrap();
    let rec = RecordOptions {
        port_label: rig.path().into(),
        ..RecordOptions::new(
            m.info,
            profile,
            Calibration::virtual_rig(&params),
            out.to_path_buf(),
        )
    };
    (record(port, rec, &mut Quiet).unwrap(), rig)
}

#[test]
fn a_full_cycle_records_without_gaps_and_recovers_alpha() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let (summary, rig) = run("RM-N42SH-D10x5", &out, |_| {}, short_profile());
    drop(rig);
    assert_eq!(summary.end, RecordEnd::Finished);
    assert_eq!(summary.counts.gaps, 0);
    assert_eq!(
        summary.counts.frames_bad_crc
            + summary.counts.frames_bad_cobs
            + summary.counts.frames_other,
        0
    );
    // about one sample per 100 ms of device time
    let (series, src) = dataset::load_run(&out, None).unwrap();
    let span = series.time_s.last().unwrap() - series.time_s[0];
    assert!(
        (series.time_s.len() as f64 - span / 0.1).abs() < 3.0,
        "{} samples over {span} s",
        series.time_s.len()
    );
    assert!(series
        .time_s
        .windows(2)
        .all(|w| (w[1] - w[0] - 0.1).abs() < 0.07));
    let ctx = Context {
        calibration: src.calibration,
        magnet: src.magnet,
        specs: SpecTable::builtin(),
        default_tc_gain_pct: 0.75,
        reference: None,
    };
    let a = analyze(&series, &ctx).unwrap();
    // truth: the demo part's model, α = −0.108 %/°C and γ = −0.00008 %/°C² (catalogue.rs)
    let truth = -0.108 + -0.00008 * (a.alpha.range_c[1] - 20.0);
    assert!(
        (a.alpha.pct_per_c - truth).abs() <= 0.003,
        "α {} vs truth {truth}",
        a.alpha.pct_per_c
    );
    assert!(
        (a.alpha.pct_per_c - truth).abs() <= a.alpha.u95_pct_per_c,
        "U95 {} does not cover",
        a.alpha.u95_pct_per_c
    );
    assert!(
        a.alpha.range_c[1] > 85.0 && a.alpha.range_c[0] < 27.0,
        "{:?}",
        a.alpha.range_c
    );
    let tau = a.lag.time_constant_s.unwrap();
    assert!((tau - 45.0).abs() < 8.0, "lag {tau} s, model 45 s");
    let loss = a.loss.pct.unwrap();
    assert!(
        loss.abs() < 0.1,
        "loss {loss} % for a magnet heated below its onset"
    );
    assert_eq!(a.judgement.material_family, "sintered NdFeB");
    // an existing run directory is never overwritten
    // the raw stream alone rebuilds the record: every sample row the same
    let replayed = dir.path().join("replayed");
    let counts = remanent::jobs::replay::replay(&out, &replayed, None).unwrap();
    assert_eq!(counts.samples, summary.counts.samples);
    assert_eq!(
        std::fs::read(replayed.join("samples.csv")).unwrap(),
        std::fs::read(out.join("samples.csv")).unwrap()
    );
    let before = std::fs::read(out.join("samples.csv")).unwrap();
    let meta = remanent::run_dir::read_meta(&out).unwrap();
    let err = remanent::run_dir::RunWriter::create(&out, meta)
        .err()
        .expect("refused");
    assert!(err.to_string().contains("already exists"), "{err}");
    assert_eq!(std::fs::read(out.join("samples.csv")).unwrap(), before);
}

#[test]
fn a_rig_that_dies_mid_run_leaves_a_valid_partial_record() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("partial");
    let m = magnets::resolve("RM-N42-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    opts.speed = 100.0;
    let params = opts.params;
    let rig = VirtualRig::start(opts).unwrap();
    let port = remanent::link::port::open(rig.path()).unwrap();
    let killer = std::thread::spawn(move || {
        std::thread::sleep(Duration::from_secs(3));
        rig.stop().unwrap()
    });
    let rec = RecordOptions {
        port_label: "virtual".into(),
        silence_timeout: Duration::from_secs(2),
        ..RecordOptions::new(
            m.info,
            short_profile(),
            Calibration::virtual_rig(&params),
            out.clone(),
        )
    };
    let summary = record(port, rec, &mut Quiet).unwrap();
    killer.join().unwrap();
    assert!(
        matches!(summary.end, RecordEnd::LinkLost(_)),
        "{:?}",
        summary.end
    );
    assert!(summary.counts.samples > 100);
    let meta = remanent::run_dir::read_meta(&out).unwrap();
    assert!(meta.end_reason.unwrap().starts_with("link lost"));
    let text = std::fs::read_to_string(out.join("samples.csv")).unwrap();
    assert_eq!(
        text.lines().count() as u64,
        summary.counts.samples + 1,
        "every sample reached the disk"
    );
    assert_eq!(
        std::fs::metadata(out.join("raw.bin")).unwrap().len(),
        summary.counts.bytes
    );
}

#[test]
fn bad_csv_input_names_the_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("log.csv");
    let mut text = String::from("time_s,temp_C,flux_mT\n");
    for i in 0..30 {
        text.push_str(&format!("{i},{},{}\n", 20 + i, 200 - i));
    }
    text.push_str("31,50,abc\n");
    std::fs::write(&p, &text).unwrap();
    let e = dataset::load_csv(&p, &CsvOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("log.csv")
            && e.contains("line 32")
            && e.contains("flux_mT")
            && e.contains("abc"),
        "{e}"
    );
    std::fs::write(&p, "time_s,heat,flux_mT\n1,2,3\n").unwrap();
    let e = dataset::load_csv(&p, &CsvOptions::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("temp_C") && e.contains("heat"), "{e}");
    let mut t = String::from("time_s,temp_C,flux_T\n");
    for i in 0..30 {
        t.push_str(&format!("{},{},0.2\n", if i == 10 { 9 } else { i }, 20 + i));
    }
    std::fs::write(&p, t).unwrap();
    let e = dataset::load_csv(&p, &CsvOptions::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("line 12") && e.contains("time_s"), "{e}");
}

mod link_safety {
    use remanent::link::Session;
    use remanent::virtual_rig::{SimulatedPort, VirtualRigOptions};
    use remanent_protocol::{Command, DeviceMsg, Fault};
    use std::time::Duration;

    fn heated_session() -> Session<SimulatedPort> {
        let m = remanent::magnets::resolve("RM-S2C17-D10x5").unwrap();
        let mut s = Session::new(SimulatedPort::new(VirtualRigOptions::new(m.model.unwrap())));
        s.handshake(Duration::from_secs(5), &mut |_| {}).unwrap();
        s.send(Command::Manual {
            setpoint_tenth_c: 600,
            limit_tenth_c: 800,
        })
        .unwrap();
        s
    }

    #[test]
    fn heartbeat_loss_turns_the_virtual_heater_off_within_the_timeout() {
        let mut s = heated_session();
        // heat with heartbeats every 0.5 s of device time for 20 s
        for i in 0..200 {
            s.read().unwrap();
            if i % 5 == 0 {
                s.send(Command::Heartbeat).unwrap();
            }
        }
        let port = s.into_port();
        assert!(port.bench().truth().heater_w > 0.0, "heating");
        let silent_from = port.bench().truth().time_s;
        let mut s = Session::new(port);
        let mut tripped_at = None;
        for _ in 0..60 {
            let got = s.read().unwrap();
            for f in got.frames {
                if let Ok(DeviceMsg::Fault(r)) = f {
                    assert_eq!(r.fault, Fault::HeartbeatLost);
                    tripped_at.get_or_insert(f64::from(r.time_ms) / 1000.0);
                }
            }
        }
        let port = s.into_port();
        let t = tripped_at.expect("heartbeat fault reported");
        // the firmware's 2 s timeout, plus one 0.1 s control period
        assert!(
            t - silent_from <= 2.0 + 0.1 + 1e-6,
            "heater off {:.2} s after the last heartbeat",
            t - silent_from
        );
        assert_eq!(port.bench().truth().heater_w, 0.0);
    }

    #[test]
    fn an_injected_fault_command_drives_the_heater_off() {
        let mut s = heated_session();
        for _ in 0..50 {
            s.read().unwrap();
            s.send(Command::Heartbeat).unwrap();
        }
        s.send(Command::InjectFault).unwrap();
        let mut seen = false;
        for _ in 0..3 {
            for f in s.read().unwrap().frames {
                seen |= matches!(f, Ok(DeviceMsg::Fault(r)) if r.fault == Fault::Injected);
            }
        }
        assert!(seen);
        assert_eq!(s.into_port().bench().truth().heater_w, 0.0);
    }
}

#[test]
fn stopping_a_record_turns_the_heater_off_and_closes_cleanly() {
    use remanent::virtual_rig::SimulatedPort;
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut port = SimulatedPort::new(VirtualRigOptions::new(m.model.unwrap()));
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("stopped");
    let stop = Arc::new(AtomicBool::new(false));
    let s2 = stop.clone();
    // the progress callback plays the user pressing Ctrl-C once the heater is on
    struct StopWhenHot(Arc<AtomicBool>);
    impl remanent::jobs::record::Progress for StopWhenHot {
        fn update(&mut self, s: &remanent::jobs::record::LiveStatus) {
            if s.temp_c.is_some_and(|t| t > 40.0) {
                self.0.store(true, std::sync::atomic::Ordering::Relaxed);
            }
        }
        fn notice(&mut self, _: &remanent::event::Notice) {}
    }
    let rec = RecordOptions {
        port_label: "simulated".into(),
        preroll_s: 10.0,
        stop,
        ..RecordOptions::new(
            m.info,
            short_profile(),
            Calibration::virtual_rig(&remanent_rig_model::RigParams::REFERENCE),
            out.clone(),
        )
    };
    let summary = record(&mut port, rec, &mut StopWhenHot(s2)).unwrap();
    assert_eq!(summary.end, RecordEnd::Stopped);
    assert_eq!(
        port.bench().truth().heater_w,
        0.0,
        "heater off after the stop"
    );
    let meta = remanent::run_dir::read_meta(&out).unwrap();
    assert!(meta.end_reason.unwrap().contains("stopped"));
}

#[test]
fn the_self_test_passes_on_a_healthy_simulated_bench_and_fails_a_detached_heater() {
    use remanent::virtual_rig::SimulatedPort;
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let opts = VirtualRigOptions::new(m.model.unwrap());
    let cal = Calibration::virtual_rig(&opts.params);
    let (_, steps) =
        remanent::jobs::selftest::run(SimulatedPort::new(opts.clone()), cal, &Default::default())
            .unwrap();
    assert_eq!(steps.len(), remanent::jobs::selftest::STEPS);
    assert!(steps.iter().all(|s| s.passed), "{steps:#?}");
    let mut broken = opts;
    broken.faults.heater_detached_at_s = Some(0.0);
    let (_, steps) =
        remanent::jobs::selftest::run(SimulatedPort::new(broken), cal, &Default::default())
            .unwrap();
    let heats = steps.iter().find(|s| s.name == "heater heats").unwrap();
    assert!(!heats.passed, "a detached heater must fail the self-test");
}

/// Checks a record made by CI from the emulated board (firmware/ci.sh sets REMANENT_CI_RUN).
#[test]
#[ignore = "run by firmware/ci.sh against the QEMU board"]
fn ci_record_from_the_emulated_board_is_complete() {
    let dir = std::path::PathBuf::from(std::env::var("REMANENT_CI_RUN").expect("REMANENT_CI_RUN"));
    let meta = remanent::run_dir::read_meta(&dir).unwrap();
    assert_eq!(meta.end_reason.as_deref(), Some("profile finished"));
    assert_eq!(meta.counts.gaps, 0, "no gaps");
    assert_eq!(
        meta.counts.frames_bad_crc + meta.counts.frames_bad_cobs + meta.counts.frames_other,
        0
    );
    assert!(
        meta.device.as_ref().unwrap().board.starts_with("qemu"),
        "recorded from the emulated board"
    );
    let mut rdr = csv::Reader::from_path(dir.join("samples.csv")).unwrap();
    let mut last_seq: Option<u64> = None;
    let mut max_t = f64::MIN;
    let mut n = 0;
    for rec in rdr.records() {
        let r = rec.unwrap();
        let seq: u64 = r[0].parse().unwrap();
        if let Some(l) = last_seq {
            assert_eq!(seq, l + 1, "samples in order with no gaps");
        }
        last_seq = Some(seq);
        max_t = max_t.max(r[9].parse::<f64>().unwrap());
        n += 1;
    }
    assert!(n > 1000, "{n} samples");
    // the profile (firmware/ci/short-cycle.toml) peaks at 45 °C
    assert!((max_t - 45.0).abs() < 1.5, "peak {max_t} °C");
}

#[test]
fn a_noisy_link_never_leaves_a_record_hanging() {
    // heavy corruption (1 byte in 100): acknowledgements and state reports get lost; the
    // recorder must still notice the start and the end from the beacons and finish
    use remanent::virtual_rig::SimulatedPort;
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        let m = magnets::resolve("RM-S2C17-D10x5").unwrap();
        let dir = tempfile::tempdir().unwrap();
        let mut results = Vec::new();
        for seed in 1..=4u64 {
            let mut opts = VirtualRigOptions::new(m.model.unwrap());
            opts.seed = seed;
            opts.link_flip_probability = 0.01;
            opts.keep_sent = true;
            let out = dir.path().join(format!("run{seed}"));
            let rec = RecordOptions {
                port_label: "noisy".into(),
                preroll_s: 10.0,
                ..RecordOptions::new(
                    m.info.clone(),
                    short_profile(),
                    Calibration::virtual_rig(&opts.params),
                    out.clone(),
                )
            };
            let mut port = SimulatedPort::new(opts);
            let r = record(&mut port, rec, &mut Quiet);
            // rows that are not the sample the device sent under their sequence number
            let sent = port.bench().sent_samples().expect("kept");
            let rows = crate::integrity::rows(&out);
            let wrong = rows
                .iter()
                .filter(|r| {
                    sent.get(&r.seq).is_none_or(|s| {
                        (r.hall_code, r.probe_code, r.thermo_word)
                            != (s.hall_code, s.probe_code, s.thermo)
                    })
                })
                .count();
            results.push(r.map(|s| (s.end, s.counts, rows.len(), wrong)));
        }
        let _ = tx.send(results);
    });
    let results = rx
        .recv_timeout(Duration::from_secs(240))
        .expect("a record hung on a noisy link");
    for r in results {
        let (end, counts, rows, wrong) = r.unwrap();
        assert_eq!(end, RecordEnd::Finished);
        assert!(counts.frames_bad_crc + counts.frames_bad_cobs + counts.frames_other > 100);
        assert!(rows > 100, "{rows} rows kept");
        assert_eq!(
            wrong, 0,
            "of {rows} rows, {wrong} are not what the device sent"
        );
    }
}
