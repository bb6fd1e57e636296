//! What the history files for a run is what was certified. A run reported against a fixture
//! reference keeps that reference beside it, so whatever analyses the run later judges it as
//! its certificate did (before, `history import` re-analysed such runs from the geometry alone
//! and filed INDETERMINATE for parts whose certificates said PASS); an import stores the filed
//! analysis itself; a logger's CSV is filed with the magnet it was analysed for.

use remanent::analysis::verdict::Outcome;
use remanent::history::{Filter, Location, Store};
use remanent::jobs::{history::import, report, Judging};
use remanent_rig_model::RigParams;

#[test]
fn an_import_judges_a_run_with_the_reference_its_certificate_was_issued_with() {
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run");
    crate::util::rapid_run(&run, 5);
    // the reference magnet read in the same (reference) fixture
    let reference = crate::reference_path::reference_in(RigParams::REFERENCE);
    let ref_file = dir.path().join("fixture.toml");
    std::fs::write(&ref_file, toml::to_string(&reference).unwrap()).unwrap();
    // the certificate: judged against the reference
    let judging = Judging {
        reference: Some(ref_file.clone()),
        ..Default::default()
    };
    let r = report::run(&run, &judging, false, &Default::default()).unwrap();
    let issued = r.analysis.expect("analysed");
    assert!(
        issued.remanence.referred,
        "the certificate's Br is referred to the reference"
    );
    let kept = run.join(remanent::run_dir::REFERENCE_FILE);
    assert!(kept.is_file(), "the run keeps what it was judged with");
    // the history, imported later with no reference named
    let at = Location::Sqlite(dir.path().join("h.sqlite"));
    let done = import(
        &at,
        std::slice::from_ref(&run),
        &Default::default(),
        &Judging::default(),
        false,
    )
    .unwrap();
    assert_eq!(done.new_analyses, 1);
    let found = Store::open(&at).unwrap().find(&Filter::default()).unwrap();
    assert_eq!(
        found[0].verdict,
        Some(issued.judgement.verdict),
        "filed as the certificate says"
    );
    // a different reference for the same run is not taken silently
    let other = dir.path().join("other.toml");
    let mut moved = reference.clone();
    moved.b20_mt *= 1.01;
    std::fs::write(&other, toml::to_string(&moved).unwrap()).unwrap();
    let judging = Judging {
        reference: Some(other),
        ..Default::default()
    };
    let e = report::run(&run, &judging, false, &Default::default())
        .err()
        .expect("refused without --force")
        .to_string();
    assert!(
        e.contains("fixture-reference.toml") && e.contains("--force"),
        "{e}"
    );
}

#[test]
fn a_report_written_elsewhere_carries_the_runs_own_facts() {
    // `report RUN --out DIR` once said "Rig: a logger's CSV file" and lost the magnet, the
    // profile, the port and the calibration: the facts were read from where the outputs went
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run");
    crate::util::rapid_run(&run, 6);
    report::run(&run, &Judging::default(), false, &Default::default()).unwrap();
    let req = remanent::jobs::InputRequest {
        input: run.clone(),
        ..Default::default()
    };
    let out = dir.path().join("elsewhere");
    report::run_input(&req, &out, false, &Default::default()).unwrap();
    let facts = |d: &std::path::Path| -> Vec<String> {
        std::fs::read_to_string(d.join("report.md"))
            .unwrap()
            .lines()
            .filter(|l| l.starts_with("- **"))
            .map(str::to_string)
            .collect()
    };
    let (here, there) = (facts(&run), facts(&out));
    assert!(here.iter().any(|l| l.contains("**magnet**")), "{here:#?}");
    assert!(here.iter().any(|l| l.contains("**profile**")), "{here:#?}");
    assert_eq!(here, there);
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(
        html.contains("RM-N42SH-D10x5") && html.contains("simulated"),
        "the run table"
    );
}

#[test]
fn an_import_files_the_analysis_as_filed_and_a_reanalysis_only_beside_it() {
    // `history import` re-analysed every run with whatever it was given, so a part certified
    // FAIL against the supplier's datasheet came into the history as the built-in table judged
    // it. The filed analysis.json is what the certificate states: it is stored as filed.
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run");
    crate::util::rapid_run(&run, 8);
    // a datasheet whose α window no N42SH meets (the built-in table's is −0.13…−0.09 %/°C)
    let sheet = dir.path().join("datasheet.toml");
    let row = "[[grade]]\ngrade = \"N42SH\"\nfamily = \"sintered NdFeB\"\nbr_min_T = 1.27\n\
               br_max_T = 1.33\nalpha_min_pct_per_C = -0.05\nalpha_max_pct_per_C = -0.01\n\
               max_working_C = 150\nhcj_min_kA_per_m = 1592\nbeta_hcj_pct_per_C = -0.55\n\
               source = \"the supplier's datasheet (invented for this test)\"\n";
    std::fs::write(&sheet, row).unwrap();
    let judging = Judging {
        specs: Some(sheet),
        ..Default::default()
    };
    let filed = report::run(&run, &judging, false, &Default::default())
        .unwrap()
        .analysis
        .expect("analysed");
    assert_eq!(
        filed.judgement.verdict.to_string(),
        "FAIL",
        "{:?}",
        filed.judgement.checks
    );
    let at = Location::Sqlite(dir.path().join("h.sqlite"));
    let verdicts = || {
        let mut s = Store::open(&at).unwrap();
        let latest = s.find(&Filter::default()).unwrap()[0].verdict;
        (latest, s.counts().unwrap())
    };
    let plain = Judging::default();
    let done = import(
        &at,
        std::slice::from_ref(&run),
        &Default::default(),
        &plain,
        false,
    );
    let done = done.unwrap();
    assert_eq!((done.as_filed, done.analysed), (1, 0));
    assert_eq!(verdicts(), (Some(Outcome::Fail), (1, 1)), "stored as filed");
    // re-analysing is an explicit act, and the filed analysis stays beside the new one
    let again = import(
        &at,
        std::slice::from_ref(&run),
        &Default::default(),
        &plain,
        true,
    );
    assert_eq!(again.unwrap().analysed, 1);
    let (latest, counts) = verdicts();
    assert_ne!(
        latest,
        Some(Outcome::Fail),
        "the built-in table's judgement"
    );
    assert_eq!(counts, (1, 2), "both analyses kept");
}

#[test]
fn a_logged_csv_analysed_with_its_magnet_is_filed_with_the_magnet_and_grade() {
    // a CSV analysed with --magnet was once stored with magnet and grade "—"; the tool's own
    // samples.csv (time column `device_time_s`) is read as any logger's file
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run");
    crate::util::rapid_run(&run, 9);
    let csv = run.join("samples.csv");
    let req = remanent::jobs::InputRequest {
        input: csv.clone(),
        magnet: Some("RM-N42SH-D10x5".into()),
        ..Default::default()
    };
    let (_, a) = remanent::jobs::analyze_input::load_and_analyze(&req).unwrap();
    let at = Location::Sqlite(dir.path().join("h.sqlite"));
    remanent::jobs::history::store_analysis(&at, &csv, &a).unwrap();
    let found = Store::open(&at).unwrap().find(&Filter::default()).unwrap();
    assert_eq!(found.len(), 1);
    assert_eq!(found[0].magnet_id.as_deref(), Some("RM-N42SH-D10x5"));
    assert_eq!(found[0].grade.as_deref(), Some("N42SH"));
}
