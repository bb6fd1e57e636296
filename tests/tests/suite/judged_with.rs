//! A run reported against a fixture reference keeps that reference beside it, so whatever
//! analyses the run later — an import into the history above all — judges it as its
//! certificate did. Before, `history import` re-analysed such runs from the geometry alone and
//! filed INDETERMINATE for parts whose certificates said PASS.

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
        issued.br_referred,
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
    )
    .unwrap();
    assert_eq!(done.new_analyses, 1);
    let found = Store::open(&at).unwrap().find(&Filter::default()).unwrap();
    assert_eq!(
        found[0].verdict.as_deref(),
        Some(issued.verdict.to_string().to_lowercase().as_str()),
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
