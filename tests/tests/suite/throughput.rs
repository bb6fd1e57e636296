//! A magnet in 15 minutes: the `rapid` profile on the in-process virtual rig, with the record
//! ending itself once the analysis can state α and the loss, held to the accuracy goal (α to
//! ±0.003 %/°C, loss to ±0.1 %, each inside its U95) against the rig model's truth, as the
//! accuracy sweep is.

use remanent::jobs::record::auto_end::Tolerance;
use remanent::jobs::record::RecordEnd;
use remanent::jobs::trial::{self, Trial, TrialSpec, SWEEP};
use remanent::profiles::ProfileSpec;

const FIFTEEN_MINUTES_S: f64 = 900.0;

fn rapid(magnet: &str, tau_s: f64, auto_end: Option<Tolerance>, out: &std::path::Path) -> Trial {
    let spec = TrialSpec {
        magnet: magnet.into(),
        magnet_tau_s: tau_s,
        profile: ProfileSpec::resolve("rapid").unwrap(),
        auto_end,
        preroll_s: 60.0,
        seed: 29,
    };
    trial::run(&spec, out).unwrap()
}

#[test]
fn rapid_meets_the_accuracy_goal_in_under_15_minutes_and_says_why_it_ended() {
    let goal = Tolerance::default();
    let dir = tempfile::tempdir().unwrap();
    let mut ended_by_analysis = 0;
    for (magnet, tau) in SWEEP {
        let out = dir.path().join(magnet);
        let t = rapid(magnet, tau, Some(goal), &out);
        let a = &t.analysis;
        let label = format!("{magnet} (lag {tau} s): {:.1} min", t.fixture_s / 60.0);
        assert!(t.fixture_s <= FIFTEEN_MINUTES_S, "{label}");
        assert_eq!(t.gap_samples, 0, "{label}");
        let err = t.alpha_error_pct_per_c.abs();
        assert!(
            err <= goal.alpha_u95_pct_per_c && err <= a.alpha.u95_pct_per_c,
            "{label}: α off by {err:.5}"
        );
        assert!(
            t.meets(&goal),
            "{label}: loss off by {:?} %, U95 {:?} %",
            t.loss_error_pct,
            a.loss.u95_pct
        );
        // it ended itself (or its profile ended), and the run says which
        let meta = remanent::run_dir::read_meta(&out).unwrap();
        assert_eq!(meta.end_reason, Some(t.end.describe()), "{label}");
        assert!(t.end.is_complete(), "{label}: {:?}", t.end);
        if let RecordEnd::Complete(why) = &t.end {
            assert!(why.to_string().contains("ended by the analysis"), "{why}");
            ended_by_analysis += 1;
        }
    }
    // the fast-settling parts free the fixture before their profile ends
    assert!(
        ended_by_analysis >= 3,
        "{ended_by_analysis} of 4 ended by the analysis"
    );
}

#[test]
fn without_the_analysis_ending_it_a_record_runs_its_profile_out() {
    let dir = tempfile::tempdir().unwrap();
    let (magnet, tau) = SWEEP[0];
    let ended = rapid(
        magnet,
        tau,
        Some(Tolerance::default()),
        &dir.path().join("a"),
    );
    let full = rapid(magnet, tau, None, &dir.path().join("b"));
    assert_eq!(full.end, RecordEnd::Finished);
    assert!(matches!(ended.end, RecordEnd::Complete(_)));
    assert!(
        ended.fixture_s < full.fixture_s - 30.0,
        "the analysis freed the fixture: {:.0} s against {:.0} s",
        ended.fixture_s,
        full.fixture_s
    );
}
