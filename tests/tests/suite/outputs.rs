//! Every output for a run and for a lot of virtual-rig runs, checked for content; and the
//! sampling plan against a textbook worked example.

use std::time::Duration;

use remanent::acceptance_plan::{accept_probability, design, Model};
use remanent::analysis::Context;
use remanent::calibration::Calibration;
use remanent::input::dataset;
use remanent::jobs::record::{record, Quiet, RecordOptions};
use remanent::lot::{self, LotRow};
use remanent::magnets;
use remanent::profiles::ProfileSpec;
use remanent::specs::SpecTable;
use remanent::virtual_rig::{SimulatedPort, VirtualRigOptions};

fn simulated_run(
    dir: &std::path::Path,
    id: &str,
    magnet: &str,
    br_scale: f64,
    seed: u64,
) -> std::path::PathBuf {
    let m = magnets::resolve(magnet).unwrap();
    let mut model = m.model.unwrap();
    model.br_20_t *= br_scale;
    let mut info = m.info.clone();
    info.id = id.into();
    let mut opts = VirtualRigOptions::new(model);
    opts.seed = seed;
    let out = dir.join(id);
    let rec = RecordOptions {
        port_label: "simulated".into(),
        silence_timeout: Duration::from_secs(5),
        ..RecordOptions::new(
            info,
            ProfileSpec::resolve("quick-alpha").unwrap(),
            Calibration::virtual_rig(&opts.params),
            out.clone(),
        )
    };
    let mut port = SimulatedPort::new(opts);
    record(&mut port, rec, &mut Quiet).unwrap();
    out
}

fn analysed(
    run: &std::path::Path,
) -> (
    dataset::Series,
    remanent::analysis::Analysis,
    remanent::analysis::Traces,
) {
    let (s, src) = dataset::load_run(run, None).unwrap();
    let ctx = Context {
        calibration: src.calibration,
        magnet: src.magnet,
        specs: SpecTable::builtin(),
        default_tc_gain_pct: 0.75,
        reference: None,
    };
    let (a, t) = remanent::analysis::analyze_traced(&s, &ctx).unwrap();
    (s, a, t)
}

#[test]
fn the_report_carries_the_analysis_numbers_and_every_plot() {
    let dir = tempfile::tempdir().unwrap();
    let run = simulated_run(dir.path(), "RPT-1", "RM-N42SH-D10x5", 1.0, 3);
    let (s, a, t) = analysed(&run);
    let files = remanent::report::write_all(&run, &s, &a, &t, "RPT-1", false).unwrap();
    // six plot files (three plots, PNG and SVG), the JSON, Markdown, HTML, the certificate and
    // its seal
    assert_eq!(files.len(), 11);
    for f in &files {
        assert!(
            std::fs::metadata(f).unwrap().len() > 200,
            "{} is nearly empty",
            f.display()
        );
    }
    let md = std::fs::read_to_string(run.join("report.md")).unwrap();
    let html = std::fs::read_to_string(run.join("report.html")).unwrap();
    // a printed report: a place for the shipment and the signatures, blocks kept whole
    assert!(html.contains("<h2>Inspection</h2>") && html.contains("Tested by"));
    assert!(html.contains("@media print") && html.contains("break-inside:avoid"));
    let alpha = format!("{:+.4}", a.alpha.pct_per_c);
    let u = format!("{:.4}", a.alpha.u95_pct_per_c);
    for doc in [&md, &html] {
        assert!(
            doc.contains(&alpha) && doc.contains(&u),
            "α {alpha} ± {u} missing"
        );
        assert!(doc.contains(&format!("{:.3}", a.loss.pct.unwrap())));
        assert!(doc.contains("IEC 61010-1"), "safety notes");
        assert!(doc.contains("RM-N42SH") || doc.contains("RPT-1"));
        assert!(doc.contains("remanent 0.1.0"), "software version");
    }
    assert_eq!(html.matches("<svg").count(), 3, "plots inlined as SVG");
    assert!(
        !html.contains("http://")
            || html.matches("http://").count() == html.matches("xmlns").count(),
        "no network references"
    );
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(run.join("analysis.json")).unwrap()).unwrap();
    // the file on disk against the rig model's truth (not against the analysis in memory):
    // α within the accuracy goal and its own U95, the fit over the record's range, no loss
    // (the part stays far below its onset), the family NdFeB
    let truth = magnets::resolve("RM-N42SH-D10x5").unwrap().model.unwrap();
    let num = |k: &str| {
        json[k]
            .as_f64()
            .unwrap_or_else(|| panic!("{k} missing or not a number"))
    };
    let top = json["fit_range_C"][1].as_f64().expect("fit range");
    let want = truth.alpha_pct_per_c + truth.gamma_pct_per_c2 * (top - 20.0);
    let err = (num("alpha_pct_per_C") - want).abs();
    assert!(
        err < 0.003 && err <= num("alpha_u95_pct_per_C"),
        "α error {err}"
    );
    assert!(num("alpha_u95_pct_per_C") > 0.0 && num("alpha_u95_pct_per_C") < 0.003);
    assert!(
        (95.0..=101.0).contains(&top),
        "fit top {top} °C (the profile tops at 100 °C)"
    );
    assert!(num("lag_time_constant_s") > 0.0);
    let loss = num("irreversible_loss_pct");
    assert!(
        loss.abs() < 0.1 && loss.abs() <= num("irreversible_loss_u95_pct"),
        "loss {loss}"
    );
    assert_eq!(json["material_family"], "sintered NdFeB");
    // nothing is replaced without being told
    assert!(remanent::report::write_all(&run, &s, &a, &t, "RPT-1", false).is_err());
    assert!(remanent::report::write_all(&run, &s, &a, &t, "RPT-1", true).is_ok());
}

#[test]
fn a_lot_finds_the_weak_magnet() {
    let dir = tempfile::tempdir().unwrap();
    // five good magnets with a little spread in Br, one 6 % weak
    let scales = [1.0, 1.004, 0.997, 1.002, 0.999, 0.94];
    let mut rows = Vec::new();
    for (i, k) in scales.iter().enumerate() {
        let id = format!("LOT-{:02}", i + 1);
        let run = simulated_run(dir.path(), &id, "RM-N42SH-D10x5", *k, 100 + i as u64);
        let (_, a, _) = analysed(&run);
        rows.push(LotRow::new(&id, "N42SH", &a));
    }
    let s = lot::summarise(rows);
    let weak = s.rows.iter().find(|r| r.id == "LOT-06").unwrap();
    assert!(
        weak.outlier
            .iter()
            .any(|o| o.to_string().contains("room-temperature flux")),
        "{:?}",
        weak.outlier
    );
    let clean = s
        .rows
        .iter()
        .filter(|r| r.id != "LOT-06")
        .all(|r| r.outlier.is_empty());
    assert!(
        clean,
        "{}",
        remanent::report::lot_text(&s, &remanent::units::DisplayUnits::SI)
    );
    assert_eq!(s.rows.last().unwrap().id, "LOT-06", "ranked last by flux");
    assert!(s.alpha.sd < 0.001, "α spread {:.5}", s.alpha.sd);
    let csv = remanent::report::tables::lot_csv(&s);
    assert_eq!(csv.lines().count(), 7);
    assert!(csv.contains(&format!("{:.5}", weak.alpha)));
    let stem = dir.path().join("lot");
    let figure = remanent::plots::lot_figure(
        "lot",
        &s,
        SpecTable::builtin().find("N42SH"),
        "test lot",
        &remanent::units::DisplayUnits::SI,
    )
    .unwrap();
    remanent::plots::write_figure(&stem, &figure, false).unwrap();
    // the axes, every magnet by its id, and a point for each of the six
    crate::util::assert_plot_shows(
        &stem,
        &[
            "magnet (ranked by room-temperature flux)",
            "α(Br)",
            "LOT-01",
            "LOT-02",
            "LOT-03",
            "LOT-04",
            "LOT-05",
            "LOT-06",
        ],
        6,
    );
}

#[test]
fn sampling_plan_matches_the_textbook_example() {
    // Montgomery, Introduction to Statistical Quality Control (6th ed., §15.2), worked example
    // (values from memory): p1 = 0.01, 1 − α = 0.95, p2 = 0.06, β = 0.10; the binomial
    // nomograph gives n = 89, c = 2, whose OC the text reads as Pa(0.01) ≈ 0.94, Pa(0.06) ≈ 0.09.
    let pa1 = accept_probability(Model::Binomial, 89, 2, 0.01);
    let pa2 = accept_probability(Model::Binomial, 89, 2, 0.06);
    assert!((pa1 - 0.94).abs() < 0.005, "Pa(0.01) = {pa1}");
    assert!((pa2 - 0.09).abs() < 0.005, "Pa(0.06) = {pa2}");
    // The nomograph's plan falls just short of the producer's 0.95; the exact search returns
    // the smallest plan that meets both risks, and it must really meet them.
    let plan = design(Model::Binomial, 0.01, 0.06, 0.05, 0.10).unwrap();
    assert!(plan.accept_at_aql >= 0.95 && plan.accept_at_rql <= 0.10);
    assert_eq!((plan.n, plan.c), (110, 3));
    // no smaller n meets both risks at any c
    for n in 1..plan.n {
        for c in 0..n.min(10) {
            let ok = accept_probability(Model::Binomial, n, c, 0.01) >= 0.95
                && accept_probability(Model::Binomial, n, c, 0.06) <= 0.10;
            assert!(!ok, "n = {n}, c = {c} also works");
        }
    }
    // binomial probabilities against a direct sum: P(X ≤ 1 | n = 10, p = 0.1) = 0.9^10 + 10·0.1·0.9^9
    let direct = 0.9f64.powi(10) + 10.0 * 0.1 * 0.9f64.powi(9);
    assert!((accept_probability(Model::Binomial, 10, 1, 0.1) - direct).abs() < 1e-12);
    // hypergeometric: lot of 20 with 4 defective, sample 5, accept on 0: C(16,5)/C(20,5) = 4368/15504
    let hg = accept_probability(Model::Hypergeometric(20), 5, 0, 0.2);
    assert!((hg - 4368.0 / 15504.0).abs() < 1e-12, "{hg}");
}

#[test]
fn a_survey_of_a_rotor_set_flags_the_damaged_magnets() {
    use remanent::jobs::survey::{self, SurveyOptions};
    struct Silent;
    impl survey::SurveyProgress for Silent {
        fn reading(&mut self, _: &survey::Reading) {}
        fn notice(&mut self, _: &remanent::event::Notice) {}
    }
    let m = magnets::resolve("RM-N42-D10x5").unwrap();
    let mut opts = VirtualRigOptions::new(m.model.unwrap());
    // a 12-pole rotor set; poles 4 and 9 were overheated and lost 5 % (invented scenario)
    opts.survey = remanent::virtual_rig::survey_set(m.model.unwrap(), 12, &[4, 9], 0.05, 9);
    let cal = Calibration::virtual_rig(&opts.params);
    let port = SimulatedPort::new(opts);
    let readings = survey::run(port, &SurveyOptions::new(cal, 12), None, &mut Silent).unwrap();
    assert_eq!(readings.len(), 12, "one reading per magnet");
    let ranked = survey::rank(&readings);
    let low: Vec<usize> = ranked
        .iter()
        .filter(|r| r.low)
        .map(|r| r.reading.index)
        .collect();
    assert_eq!(low.len(), 2, "{ranked:?}");
    assert!(low.contains(&4) && low.contains(&9), "flagged {low:?}");
    for r in ranked.iter().filter(|r| r.low) {
        assert!(
            (r.deviation_pct + 5.0).abs() < 1.2,
            "deviation {:.2} % for a 5 % loss",
            r.deviation_pct
        );
    }
    assert_eq!(
        remanent::report::tables::survey_csv(&ranked)
            .lines()
            .count(),
        13
    );
}
