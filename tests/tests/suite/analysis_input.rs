//! The analysis on plain CSV logs: units, column mapping, the soak-only fallback and plain
//! answers when something cannot be computed; magnet files and profile checks.

use crate::util::ctx;
use remanent::analysis::analyze;
use remanent::input::dataset::{self, CsvOptions};

/// A staircase of soaks only (a logger that records each soak's steady state for a few
/// minutes), in gauss, with a column named by the logger: α = −0.04 %/°C (a SmCo-like magnet).
fn staircase_csv(dir: &std::path::Path) -> std::path::PathBuf {
    let mut text = String::from("seconds,temp_C,flux_G\n");
    let mut t = 0.0;
    for (k, target) in [25.0, 50.0, 75.0, 100.0, 125.0].iter().enumerate() {
        for i in 0..300 {
            let wobble = 0.02 * ((i * 7 + k) % 5) as f64 - 0.04;
            let temp = target + wobble;
            let flux_g = 2500.0 * (1.0 - 0.0004 * (temp - 20.0));
            text.push_str(&format!("{t:.1},{temp:.3},{flux_g:.3}\n"));
            t += 1.0;
        }
        t += 1200.0; // the logger paused between soaks
    }
    let p = dir.join("staircase.csv");
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn soak_points_alone_give_alpha_and_say_so() {
    let dir = tempfile::tempdir().unwrap();
    let p = staircase_csv(dir.path());
    let opts = CsvOptions {
        rename: [("time_s".to_string(), "seconds".to_string())]
            .into_iter()
            .collect(),
        ..Default::default()
    };
    let s = dataset::load_csv(&p, &opts).unwrap();
    assert!(
        (s.flux_mt[0] - 250.0 * (1.0 - 0.0004 * 5.0)).abs() < 0.01,
        "gauss converted to mT"
    );
    let a = analyze(&s, &ctx()).unwrap();
    assert_eq!(a.alpha.method, "soak points");
    assert!(
        (a.alpha.pct_per_c + 0.04).abs() < 0.001,
        "α {}",
        a.alpha.pct_per_c
    );
    assert!(a.lag.time_constant_s.is_none());
    assert!(a.loss.pct.is_none());
    assert!(
        a.notes
            .iter()
            .any(|n| n.to_string().contains("no cooling branch")),
        "{:?}",
        a.notes
    );
    assert!(
        a.judgement.material_family.contains("SmCo5"),
        "{}",
        a.judgement.material_family
    );
}

#[test]
fn a_record_that_never_heats_gets_a_plain_answer() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("flat.csv");
    let mut text = String::from("time_s,temp_C,flux_mT\n");
    for i in 0..100 {
        text.push_str(&format!(
            "{i},{:.2},200.0\n",
            22.0 + 0.01 * f64::from(i % 3)
        ));
    }
    std::fs::write(&p, text).unwrap();
    let s = dataset::load_csv(&p, &CsvOptions::default()).unwrap();
    let e = analyze(&s, &ctx()).unwrap_err().to_string();
    assert!(
        e.contains("changed only 0.0 K") && e.contains("10 K"),
        "{e}"
    );
}

#[test]
fn the_probe_coefficient_option_corrects_a_csv_log() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("probe.csv");
    // a probe whose sensitivity rises 0.05 %/°C as it warms from 25 to 35 °C in a constant field
    let mut text = String::from("time_s,temp_C,flux_mT,probe_temp_C\n");
    for i in 0..50 {
        let tp = 25.0 + 0.2 * f64::from(i);
        text.push_str(&format!(
            "{i},{},{:.6},{tp}\n",
            20 + i,
            200.0 * (1.0 + 0.0005 * (tp - 25.0))
        ));
    }
    std::fs::write(&p, text).unwrap();
    let s = dataset::load_csv(
        &p,
        &CsvOptions {
            probe_tc_pct_per_c: Some(0.05),
            ..Default::default()
        },
    )
    .unwrap();
    assert!(
        s.flux_mt.iter().all(|b| (b - 200.0).abs() < 1e-4),
        "{:?}",
        &s.flux_mt[..3]
    );
}

#[test]
fn a_magnet_file_describes_a_part_and_its_model() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("lot7-01.toml");
    std::fs::write(
        &p,
        r#"
id = "LOT7-01"
grade = "N42"
description = "rotor segment, supplier lot 7 (invented example)"
max_working_C = 80

[shape.block]
a_mm = 20
b_mm = 10
length_mm = 4

[model]
br_20_t = 1.3
alpha_pct_per_c = -0.11
gamma_pct_per_c2 = 0.0
irreversible_onset_c = 85
irreversible_pct_per_c = 0.08
curie_c = 320
max_working_c = 80
shape = { block = { a_mm = 20, b_mm = 10, length_mm = 4 } }
"#,
    )
    .unwrap();
    let m = remanent::magnets::resolve(p.to_str().unwrap()).unwrap();
    assert_eq!(m.info.grade, "N42");
    assert!(matches!(m.info.shape, remanent_physics::Shape::Block { a_mm, .. } if a_mm == 20.0));
    assert_eq!(m.model.unwrap().alpha_pct_per_c, -0.11);
    let e = remanent::magnets::resolve("no-such-part")
        .unwrap_err()
        .to_string();
    assert!(e.contains("remanent magnets"), "{e}");
}

#[test]
fn the_calibration_example_in_the_hardware_notes_parses() {
    let notes = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../hardware-notes/calibration.md"
    ))
    .unwrap();
    let start = notes.find("```toml").unwrap() + 7;
    let end = start + notes[start..].find("```").unwrap();
    let cal: remanent::calibration::Calibration = toml::from_str(&notes[start..end]).unwrap();
    assert_eq!(cal.hall.sensor.sensitivity_mv_per_mt, 5.0);
    assert_eq!(cal.gap.standoff.gap_mm, 3.0);
}
