//! `analysis.json` keeps its layout byte for byte when the code behind it is reorganised: a
//! record of the demo part (lockstep virtual rig, fixed seed) analysed now against the file it
//! gave when this test was written (`tests/data/golden/analysis-rapid-seed11.json`), the
//! run-specific times and name blanked. A change meant to alter the file is blessed with
//! `REMANENT_BLESS=1` and says why in its commit.

const GOLDEN: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/data/golden/analysis-rapid-seed11.json"
);

#[test]
fn analysis_json_keeps_its_layout_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run");
    crate::util::rapid_run(&run, 11);
    let req = remanent::jobs::InputRequest {
        input: run,
        ..Default::default()
    };
    let (_, a) = remanent::jobs::analyze_input::load_and_analyze(&req).unwrap();
    let mut v = serde_json::to_value(&a).unwrap();
    for k in ["run", "started_utc", "finished_utc", "analysed_utc"] {
        v["provenance"][k] = serde_json::Value::String("-".into());
    }
    let text = serde_json::to_string_pretty(&v).unwrap() + "\n";
    if std::env::var_os("REMANENT_BLESS").is_some() {
        std::fs::write(GOLDEN, &text).unwrap();
    }
    let golden = std::fs::read_to_string(GOLDEN).unwrap();
    assert!(
        text == golden,
        "analysis.json changed; first differing line: {:?}",
        text.lines().zip(golden.lines()).find(|(a, b)| a != b)
    );
}
