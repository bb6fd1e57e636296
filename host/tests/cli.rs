//! What the command line refuses, run as a user would run it.

use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_remanent");

fn run(args: &[&str]) -> (i32, String) {
    // no test writes to the user's own history store
    let out = Command::new(BIN)
        .args(args)
        .env("REMANENT_HISTORY", "off")
        .output()
        .unwrap();
    let text =
        String::from_utf8_lossy(&out.stderr).into_owned() + &String::from_utf8_lossy(&out.stdout);
    (out.status.code().unwrap_or(-1), text)
}

#[test]
fn a_speed_of_zero_or_below_is_refused_at_once() {
    for bad in ["--speed=0", "--speed=-3", "--speed=nan"] {
        let (code, text) = run(&["virtual-rig", bad]);
        assert_eq!(code, 2, "{bad}: {text}");
        assert!(text.contains("speed") || text.contains("number"), "{text}");
        let (code, _) = run(&["demo", bad]);
        assert_eq!(code, 2, "{bad}");
    }
}

#[test]
fn sampling_plan_never_replaces_a_plot_without_force() {
    let dir = tempfile::tempdir().unwrap();
    let stem = dir.path().join("oc");
    let stem = stem.to_str().unwrap();
    let args = [
        "sampling-plan",
        "--aql",
        "0.01",
        "--rql",
        "0.06",
        "--plot",
        stem,
    ];
    assert_eq!(run(&args).0, 0);
    let before = std::fs::metadata(format!("{stem}.png"))
        .unwrap()
        .modified()
        .unwrap();
    let (code, text) = run(&args);
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("already exists"), "{text}");
    let after = std::fs::metadata(format!("{stem}.png"))
        .unwrap()
        .modified()
        .unwrap();
    assert_eq!(before, after);
    let mut forced = args.to_vec();
    forced.push("--force");
    assert_eq!(run(&forced).0, 0);
}

#[test]
fn a_survey_started_late_still_reads_every_magnet_and_flags_the_damaged_one() {
    use std::io::{BufRead, BufReader};
    use std::process::Stdio;
    let mut rig = Command::new(BIN)
        .args([
            "virtual-rig",
            "--survey",
            "6",
            "--survey-damaged",
            "3",
            "--speed",
            "20",
        ])
        .env("REMANENT_HISTORY", "off")
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut port = String::new();
    BufReader::new(rig.stdout.take().unwrap())
        .read_line(&mut port)
        .unwrap();
    // the operator comes to the bench a while after the rig was switched on
    std::thread::sleep(std::time::Duration::from_secs(5));
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("survey.csv");
    let (code, text) = run(&[
        "survey",
        "--port",
        port.trim(),
        "--count",
        "6",
        "--label",
        "pole",
        "--out",
        out.to_str().unwrap(),
    ]);
    let _ = rig.kill();
    let _ = rig.wait();
    assert_eq!(code, 0, "{text}");
    assert!(text.contains("pole   3") && text.contains("LOW"), "{text}");
    let low: Vec<&str> = text.lines().filter(|l| l.contains("LOW")).collect();
    assert_eq!(low.len(), 1, "{text}");
    assert!(low[0].contains("pole   3"), "{text}");
    assert_eq!(std::fs::read_to_string(&out).unwrap().lines().count(), 7);
}

#[test]
fn a_negative_probe_coefficient_is_accepted_and_a_missing_probe_column_named() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("log.csv");
    let mut text = String::from("time_s,temp_C,flux_mT\n");
    for i in 0..100 {
        text.push_str(&format!("{i},25.0,200.0\n"));
    }
    std::fs::write(&p, text).unwrap();
    // negative is the usual sign of a probe's coefficient: the option must take it
    let (code, text) = run(&[
        "analyze",
        p.to_str().unwrap(),
        "--probe-tc-pct-per-c",
        "-0.06",
    ]);
    assert!(!text.contains("unexpected argument"), "{text}");
    assert_eq!(code, 2, "{text}");
    assert!(
        text.contains("probe_temp_C") && text.contains("--probe-tc-pct-per-c"),
        "the option needs a probe column the file does not have: {text}"
    );
}
