//! What the command line refuses, run as a user would run it.

use std::process::Command;

const BIN: &str = env!("CARGO_BIN_EXE_remanent");

fn run(args: &[&str]) -> (i32, String) {
    run_with(args, &[])
}

fn run_with(args: &[&str], env: &[(&str, &str)]) -> (i32, String) {
    // no test writes to the user's own history store or reads the user's own config file
    let out = Command::new(BIN)
        .args(args)
        .env("REMANENT_HISTORY", "off")
        .env("XDG_CONFIG_HOME", "/nonexistent/remanent-test-config")
        .envs(env.iter().copied())
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
    let args = ["sampling-plan", "--aql", "1", "--rql", "6%", "--plot", stem];
    let (code, text) = run(&args);
    assert_eq!(code, 0, "{text}");
    // AQL and RQL in percent, as practitioners write them, and said back as read
    assert!(
        text.contains("AQL 1.00 %") && text.contains("RQL 6.00 %"),
        "{text}"
    );
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

#[test]
fn two_rigs_record_side_by_side_on_one_host_and_a_busy_port_is_refused() {
    use std::io::{BufRead, BufReader};
    use std::process::Stdio;
    let dir = tempfile::tempdir().unwrap();
    let store = dir.path().join("history.sqlite");
    let rig = |magnet: &str| {
        let mut c = Command::new(BIN)
            .args(["virtual-rig", "--magnet", magnet, "--speed", "50"])
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let mut port = String::new();
        BufReader::new(c.stdout.take().unwrap())
            .read_line(&mut port)
            .unwrap();
        (c, port.trim().to_string())
    };
    let (mut rig_a, port_a) = rig("RM-N42SH-D10x5");
    let (mut rig_b, port_b) = rig("RM-S2C17-D10x5");
    let record = |port: &str, magnet: &str, out: &str| {
        Command::new(BIN)
            .args([
                "record",
                "--port",
                port,
                "--magnet",
                magnet,
                "--profile",
                "rapid",
            ])
            .args(["--lot", "L-TWO", "--allow-over-rating", "--out"])
            .arg(dir.path().join(out))
            .env("REMANENT_HISTORY", &store)
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap()
    };
    let a = record(&port_a, "RM-N42SH-D10x5", "a");
    let b = record(&port_b, "RM-S2C17-D10x5", "b");
    // rig A's port is taken by its recorder: a second recorder is refused, saying why
    std::thread::sleep(std::time::Duration::from_millis(500));
    let (code, text) = run(&[
        "record",
        "--port",
        &port_a,
        "--magnet",
        "RM-N42SH-D10x5",
        "--out",
    ]
    .iter()
    .copied()
    .chain([dir.path().join("c").to_str().unwrap()])
    .collect::<Vec<_>>());
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("is in use by another program"), "{text}");
    for (child, name) in [(a, "a"), (b, "b")] {
        let out = child.wait_with_output().unwrap();
        let text = String::from_utf8_lossy(&out.stdout).into_owned()
            + &String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(0), "{name}: {text}");
        assert!(text.contains("0 gaps"), "{name}: {text}");
    }
    let _ = rig_a.kill();
    let _ = rig_b.kill();
    let _ = (rig_a.wait(), rig_b.wait());
    // both records went into the one store, written by two processes
    let db = rusqlite::Connection::open(&store).unwrap();
    let n: i64 = db
        .query_row("SELECT COUNT(*) FROM runs WHERE lot = 'L-TWO'", [], |r| {
            r.get(0)
        })
        .unwrap();
    assert_eq!(n, 2);
    assert!(
        !dir.path().join("c").exists(),
        "the refused record left nothing behind"
    );
}

#[test]
fn reading_a_history_store_that_is_not_there_says_so_and_creates_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let store = dir.path().join("typo").join("history.sqlite");
    for sub in ["find", "info"] {
        let (code, text) = run(&["history", sub, "--store", store.to_str().unwrap()]);
        assert_eq!(code, 2, "{text}");
        assert!(text.contains("no history store at"), "{text}");
    }
    assert!(!store.exists() && !dir.path().join("typo").exists());
}

#[test]
fn display_units_come_from_the_config_file_unless_given_and_a_bad_file_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let cfg = dir.path().join("config.toml");
    std::fs::write(&cfg, "[display]\nflux = \"G\"\ntemperature = \"F\"\n").unwrap();
    let env = [("REMANENT_CONFIG", cfg.to_str().unwrap())];
    let n42sh = |text: &str| {
        text.lines()
            .find(|l| l.starts_with("N42SH "))
            .unwrap_or_else(|| panic!("no N42SH row:\n{text}"))
            .to_string()
    };
    // the built-in table's N42SH α limits, -0.130 … -0.090 %/°C, are -0.072 … -0.050 %/°F
    // (a kelvin is 1.8 °F, NIST SP 811 §B.9); Br 1.27 … 1.33 T is 12700 … 13300 G
    let (code, text) = run_with(&["specs"], &env);
    assert_eq!(code, 0, "{text}");
    assert!(
        text.contains("α(Br) %/°F") && text.contains("Br G"),
        "{text}"
    );
    let row = n42sh(&text);
    assert!(row.contains("-0.072") && row.contains("-0.050"), "{row}");
    assert!(row.contains("12700") && row.contains("13300"), "{row}");
    // an option on the command line wins over the file
    let (code, text) = run_with(&["specs", "--temp-unit", "C", "--flux-unit", "T"], &env);
    assert_eq!(code, 0, "{text}");
    let row = n42sh(&text);
    assert!(row.contains("-0.130") && row.contains("1.27"), "{row}");
    // no file: SI-based
    let (_, text) = run(&["specs"]);
    assert!(
        text.contains("α(Br) %/°C") && text.contains("Br T"),
        "{text}"
    );
    // a unit that is not one is refused, naming the file, the key and the line
    std::fs::write(&cfg, "[display]\nflux = \"kG\"\n").unwrap();
    let (code, text) = run_with(&["specs"], &env);
    assert_eq!(code, 2, "{text}");
    assert!(
        text.contains("config.toml") && text.contains("kG") && text.contains("mT, G or T"),
        "{text}"
    );
    let (code, text) = run(&["specs", "--flux-unit", "kG"]);
    assert_eq!(code, 2, "{text}");
    assert!(text.contains("mT, G or T"), "{text}");
}

#[test]
fn the_same_demo_twice_gives_the_same_samples_and_the_same_analysis() {
    // the thin N35 gave two different α from two runs of the same demo before the rig ran in
    // lockstep with the recorder
    let dir = tempfile::tempdir().unwrap();
    let runs: Vec<std::path::PathBuf> = ["one", "two"].iter().map(|n| dir.path().join(n)).collect();
    for r in &runs {
        let (code, text) = run(&[
            "demo",
            "--magnet",
            "RM-N35-D10x2",
            "--out",
            r.to_str().unwrap(),
        ]);
        assert_eq!(code, 0, "{text}");
    }
    let read = |r: &std::path::Path, f: &str| std::fs::read(r.join(f)).unwrap();
    assert_eq!(read(&runs[0], "samples.csv"), read(&runs[1], "samples.csv"));
    // byte for byte, but for the run's own name and the wall-clock times it was made at
    let json = |r: &std::path::Path| {
        String::from_utf8(read(r, "analysis.json"))
            .unwrap()
            .lines()
            .filter(|l| !l.contains("_utc\""))
            .collect::<Vec<_>>()
            .join("\n")
            .replace(
                &format!("\"run\": \"{}\"", r.file_name().unwrap().to_str().unwrap()),
                "\"run\": \"·\"",
            )
    };
    assert_eq!(json(&runs[0]), json(&runs[1]));
    // and another seed gives other noise
    let other = dir.path().join("three");
    let (code, _) = run(&[
        "demo",
        "--magnet",
        "RM-N35-D10x2",
        "--seed",
        "8",
        "--out",
        other.to_str().unwrap(),
    ]);
    assert_eq!(code, 0);
    assert_ne!(read(&runs[0], "samples.csv"), read(&other, "samples.csv"));
}

#[test]
fn a_report_of_a_record_that_cannot_be_analysed_says_why_and_exits_3() {
    // a log that never heats: the time series and the reason are written, but it is no result
    let dir = tempfile::tempdir().unwrap();
    let log = dir.path().join("flat.csv");
    let mut text = String::from("time_s,temp_C,flux_mT\n");
    for i in 0..100 {
        text.push_str(&format!(
            "{i},{:.2},200.0\n",
            22.0 + 0.01 * f64::from(i % 3)
        ));
    }
    std::fs::write(&log, text).unwrap();
    let (code, out) = run(&["report", log.to_str().unwrap()]);
    assert_eq!(code, 3, "{out}");
    assert!(
        out.contains("not analysed") && out.contains("changed only"),
        "{out}"
    );
    assert!(dir.path().join("flat-report").join("report.html").is_file());
}
