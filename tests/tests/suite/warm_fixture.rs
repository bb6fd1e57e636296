//! The next part goes into a fixture still warm from the part before (the bench console runs
//! parts back to back on one rig): the room-temperature reference waits until the fixture is
//! steady, so it is not taken on a cooling slope. Before, the third part in a row read a 0.35 %
//! loss at its safe peak that the rig model says was not there, and failed on coercivity.

use remanent::calibration::Calibration;
use remanent::event::Notice;
use remanent::jobs::record::{record, LiveStatus, Progress, RecordOptions};
use remanent::magnets;
use remanent::profiles::ProfileSpec;
use remanent::virtual_rig::{SimulatedPort, VirtualRigOptions};

/// The notices a record gave.
#[derive(Default)]
struct Told(Vec<Notice>);

impl Progress for Told {
    fn update(&mut self, _: &LiveStatus) {}
    fn notice(&mut self, n: &Notice) {
        self.0.push(n.clone());
    }
}

#[test]
fn a_part_after_a_part_waits_for_a_steady_fixture_before_its_reference() {
    let part = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let opts = VirtualRigOptions::new(part.model.unwrap());
    let params = opts.params;
    let mut port = SimulatedPort::new(opts);
    let dir = tempfile::tempdir().unwrap();
    let mut told = Vec::new();
    for k in 1..=2 {
        let profile = ProfileSpec::resolve("rapid").unwrap();
        let rec = RecordOptions {
            port_label: "simulated, parts back to back".into(),
            silence_timeout: std::time::Duration::from_secs(5),
            auto_end: Some(Default::default()),
            ..RecordOptions::new(
                part.info.clone(),
                profile,
                Calibration::virtual_rig(&params),
                dir.path().join(format!("part-{k}")),
            )
        };
        let mut t = Told::default();
        let summary = record(&mut port, rec, &mut t).unwrap();
        assert!(summary.end.is_complete(), "part {k}: {:?}", summary.end);
        told.push(t.0);
    }
    let settling = |n: &Notice| matches!(n, Notice::Settling { .. });
    assert!(
        !told[0].iter().any(settling),
        "a cold fixture starts at once"
    );
    assert!(
        told[1].iter().any(settling),
        "the warm fixture is waited for"
    );
    // the reference before heating: over its last 30 s the fixture moves less than 0.3 K a
    // minute (a least-squares slope: the converter's 0.25 °C steps are noise to it)
    let csv = std::fs::read_to_string(dir.path().join("part-2/samples.csv")).unwrap();
    let rows: Vec<(f64, f64, bool)> = csv
        .lines()
        .skip(1)
        .map(|l| {
            let c: Vec<&str> = l.split(',').collect();
            (
                c[1].parse().unwrap(),
                c[9].parse().unwrap(),
                !c[13].is_empty(),
            )
        })
        .collect();
    let heat = rows.iter().position(|r| r.2).expect("the profile started");
    let t_end = rows[heat].0;
    let rest: Vec<(f64, f64)> = rows[..heat]
        .iter()
        .filter(|r| r.0 > t_end - 30.0)
        .map(|r| (r.0, r.1))
        .collect();
    let n = rest.len() as f64;
    let (mt, my) = (
        rest.iter().map(|r| r.0).sum::<f64>() / n,
        rest.iter().map(|r| r.1).sum::<f64>() / n,
    );
    let slope = rest.iter().map(|r| (r.0 - mt) * (r.1 - my)).sum::<f64>()
        / rest.iter().map(|r| (r.0 - mt).powi(2)).sum::<f64>();
    assert!(
        (slope * 60.0).abs() < 0.3,
        "the reference moved {:.2} K a minute",
        slope * 60.0
    );
    // and the second part, which lost nothing (the rig model's truth), is not judged to have
    let req = remanent::jobs::InputRequest {
        input: dir.path().join("part-2"),
        ..Default::default()
    };
    let (_, a) = remanent::jobs::analyze_input::load_and_analyze(&req).unwrap();
    let (loss, u) = (a.loss.pct.unwrap(), a.loss.u95_pct.unwrap());
    assert!(loss.abs() <= u.max(0.05), "loss {loss:.3} ± {u:.3} %");
}
