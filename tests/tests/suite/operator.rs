//! The operator's commands: clearing a latched fault on purpose, and what the CLI refuses.

use remanent::calibration::Calibration;
use remanent::jobs::clear_fault::Cleared;
use remanent::magnets;
use remanent::virtual_rig::{SimulatedPort, VirtualRigOptions};
use remanent_protocol::{Fault, RefuseReason};

fn rig(tc_open: bool) -> (SimulatedPort, Calibration) {
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    if tc_open {
        opts.faults.thermocouple_open_at_s = Some(0.0);
    }
    let cal = Calibration::virtual_rig(&opts.params);
    (SimulatedPort::new(opts), cal)
}

#[test]
fn clear_fault_names_the_latched_fault_and_refuses_while_its_cause_persists() {
    let (port, cal) = rig(false);
    let (_, outcome) = remanent::jobs::clear_fault::run(port, cal).unwrap();
    assert_eq!(outcome, Cleared::NothingLatched);
    // an open thermocouple latches even with the heater idle; it cannot be cleared while open
    let (mut port, cal) = rig(true);
    let mut buf = [0u8; 64];
    for _ in 0..20 {
        // let the device run a few periods before the host says hello
        let _ = std::io::Read::read(&mut port, &mut buf);
    }
    let (hello, outcome) = remanent::jobs::clear_fault::run(port, cal).unwrap();
    assert_eq!(hello.latched, Some(Fault::ThermocoupleOpen));
    assert_eq!(
        outcome,
        Cleared::Refused(
            Fault::ThermocoupleOpen,
            RefuseReason::FaultLatched(Fault::ThermocoupleOpen)
        )
    );
}

fn recorded(dir: &std::path::Path, name: &str, magnet: &str) -> std::path::PathBuf {
    let m = magnets::resolve(magnet).unwrap();
    let rig = VirtualRigOptions::new(m.model.unwrap());
    let out = dir.join(name);
    crate::util::VirtualRecord {
        info: m.info,
        calibration: Calibration::virtual_rig(&rig.params),
        rig,
        policy: Default::default(),
        limit_c: 80.0,
        segments: crate::util::SHORT_CYCLE.to_vec(),
        preroll_s: 30.0,
    }
    .run(&out)
    .unwrap();
    out
}

#[test]
fn a_lot_is_one_grade_unless_told_and_duplicates_and_unreadable_runs_are_reported() {
    use remanent::jobs::lot::{self, LotError};
    let dir = tempfile::tempdir().unwrap();
    let a = recorded(dir.path(), "a", "RM-N42SH-D10x5");
    let b = recorded(dir.path(), "b", "RM-N42-D10x5");
    let out = dir.path().join("lot");
    let e = lot::run(
        &[a.clone(), b.clone()],
        &out,
        &Default::default(),
        false,
        false,
        &remanent::units::DisplayUnits::SI,
    )
    .err()
    .unwrap();
    assert!(matches!(e, LotError::MixedGrades(_)), "{e}");
    assert!(e.to_string().contains("N42, N42SH"), "{e}");
    // the same run twice is warned about; an unreadable one is listed, not hidden
    let empty = dir.path().join("empty");
    std::fs::create_dir(&empty).unwrap();
    let done = lot::run(
        &[a.clone(), a.clone(), empty.clone()],
        &out,
        &Default::default(),
        false,
        false,
        &remanent::units::DisplayUnits::SI,
    )
    .unwrap();
    assert!(
        done.warnings
            .iter()
            .any(|w| w.to_string().contains("same run")),
        "{:?}",
        done.warnings
    );
    assert_eq!(done.skipped.len(), 1);
    assert_eq!(done.skipped[0].0, empty);
    // with --mixed-grades the two grades go side by side
    let mixed = lot::run(
        &[a, b],
        &dir.path().join("mixed"),
        &Default::default(),
        true,
        false,
        &remanent::units::DisplayUnits::SI,
    )
    .unwrap();
    assert_eq!(mixed.summary.rows.len(), 2);
}

#[test]
fn the_self_test_names_a_latched_fault_and_measures_from_its_own_start() {
    use remanent::link::Session;
    use remanent_protocol::Command;
    // a fault the last session left latched: named at start-up, cleared, and the test goes on
    let (mut port, cal) = rig(false);
    let mut s = Session::new(&mut port);
    s.handshake(std::time::Duration::from_secs(5), &mut |_| {})
        .unwrap();
    s.send(Command::InjectFault).unwrap();
    for _ in 0..10 {
        s.read().unwrap();
    }
    drop(s);
    let (_, steps) = remanent::jobs::selftest::run(&mut port, cal, &Default::default()).unwrap();
    let start = &steps[0];
    assert!(start.passed, "{start:?}");
    assert!(
        start.detail.to_string().contains("emergency stop")
            && start.detail.to_string().contains("cleared"),
        "{start:?}"
    );
    let heats = steps.iter().find(|s| s.name == "heater heats").unwrap();
    assert!(heats.passed, "{heats:?}");
    // the time is the step's own, not the rig's since power-on
    let secs: f64 = heats
        .detail
        .to_string()
        .split(" after ")
        .nth(1)
        .unwrap()
        .split(' ')
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(secs < 120.0, "{heats:?}");
    // a thermocouple fault is named where it is, not reported as a weak heater
    let (port, cal) = rig(true);
    let (_, steps) = remanent::jobs::selftest::run(port, cal, &Default::default()).unwrap();
    let tc = steps.iter().find(|s| s.name == "thermocouple").unwrap();
    assert!(
        !tc.passed && tc.detail.to_string().contains("open"),
        "{tc:?}"
    );
    assert!(steps.iter().all(|s| s.name != "heater heats"), "{steps:#?}");
}

/// The ```toml blocks of a notes file, in order.
fn toml_blocks(file: &str) -> Vec<String> {
    let notes = std::fs::read_to_string(format!(
        "{}/../hardware-notes/{file}",
        env!("CARGO_MANIFEST_DIR")
    ))
    .unwrap();
    notes
        .split("```toml")
        .skip(1)
        .map(|b| b.split("```").next().unwrap().to_string())
        .collect()
}

#[test]
fn every_file_format_example_in_the_notes_is_accepted() {
    let dir = tempfile::tempdir().unwrap();
    let blocks = toml_blocks("file-formats.md");
    assert_eq!(blocks.len(), 4);
    let write = |name: &str, text: &str| {
        let p = dir.path().join(name);
        std::fs::write(&p, text).unwrap();
        p
    };
    let m = remanent::magnets::resolve(write("m.toml", &blocks[0]).to_str().unwrap()).unwrap();
    assert_eq!(m.info.grade, "N42SH");
    let p = remanent::profiles::ProfileSpec::resolve(write("p.toml", &blocks[1]).to_str().unwrap())
        .unwrap();
    assert_eq!(p.segments.len(), 3);
    let s = remanent::specs::SpecTable::load(&write("s.toml", &blocks[2])).unwrap();
    assert_eq!(s.find("n42sh").unwrap().alpha_min, -0.125);
    let u = remanent::units::load(&write("config.toml", &blocks[3])).unwrap();
    assert_eq!(
        (u.flux, u.temp),
        (
            remanent::units::FluxUnit::Gauss,
            remanent::units::TempUnit::Fahrenheit
        )
    );
    let cal = write("c.toml", &toml_blocks("calibration.md")[0]);
    let cal = remanent::calibration::Calibration::load(&cal).unwrap();
    assert!(cal.dates.required().iter().all(|d| d.1.is_some()));
    assert_eq!(cal.fixture.map(|f| f.cooling_tau_s), Some(124.0));
    // the reference magnet's file, with its certified Br
    let r = write("r.toml", &toml_blocks("calibration.md")[1]);
    let r = remanent::magnets::resolve(r.to_str().unwrap()).unwrap();
    assert_eq!(r.info.reference.map(|x| x.br_t), Some(1.3148));
    // a misspelt key is named with its line, and every missing key at once
    let bad = blocks[1].replace("hold_s = 240", "hold_sec = 240");
    let e = remanent::profiles::ProfileSpec::resolve(write("bad.toml", &bad).to_str().unwrap())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("unknown key `segment[].hold_sec` (line 14)"),
        "{e}"
    );
    assert!(e.contains("missing: segment[].hold_s"), "{e}");
    let e =
        remanent::calibration::Calibration::load(&write("c2.toml", "[hall]\noffset_mv = 1.5\n"))
            .unwrap_err()
            .to_string();
    assert!(
        e.contains("gap") && e.contains("ntc") && e.contains("hall.full_scale_mv"),
        "{e}"
    );
}

#[test]
fn the_self_test_leaves_a_heating_fault_for_the_operator_to_clear() {
    use remanent::link::Session;
    use remanent_protocol::DeviceMsg;
    // the switch fails on while the fixture is idle: the device latches heating while off
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    opts.faults.switch_stuck_on_at_s = Some(0.0);
    let cal = Calibration::virtual_rig(&opts.params);
    let mut port = SimulatedPort::new(opts);
    let mut s = Session::new(&mut port);
    s.handshake(std::time::Duration::from_secs(5), &mut |_| {})
        .unwrap();
    let mut fault = None;
    for _ in 0..20_000 {
        for f in s.read().unwrap().frames.into_iter().flatten() {
            if let DeviceMsg::Fault(r) = f {
                fault.get_or_insert(r.fault);
            }
        }
        if fault.is_some() {
            break;
        }
        s.send(remanent_protocol::Command::Heartbeat).unwrap();
    }
    assert_eq!(fault, Some(Fault::HeatingWhileOff));
    drop(s);
    let (_, steps) = remanent::jobs::selftest::run(&mut port, cal, &Default::default()).unwrap();
    assert_eq!(steps.len(), 1, "nothing more is tried: {steps:#?}");
    let start = &steps[0];
    let detail = start.detail.to_string();
    assert!(
        !start.passed && detail.contains("left latched") && detail.contains("clear-fault"),
        "{start:?}"
    );
}

#[test]
fn the_profile_file_that_remanent_profiles_shows_is_one_the_tool_takes() {
    // `profiles` once pointed to a `record --help` that did not describe the file, and the
    // README's format missed three of its required keys
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("warm-check.toml");
    std::fs::write(&file, remanent::profiles::EXAMPLE_FILE).unwrap();
    let p = remanent::profiles::ProfileSpec::resolve(file.to_str().unwrap()).unwrap();
    assert_eq!(
        (p.name.as_str(), p.limit_c, p.segments.len()),
        ("warm-check", 70.0, 3)
    );
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../README.md")).unwrap();
    for key in [
        "`name`",
        "`description`",
        "`limit_C`",
        "`target_C`",
        "`ramp_C_per_min`",
        "`hold_s`",
    ] {
        assert!(
            readme.contains(key),
            "the README's profile format lacks {key}"
        );
    }
}
