//! Values that cannot be true — NaN or infinity anywhere, a zero or negative sensitivity, a
//! negative gap, a zero Beta, a NaN rated temperature — are refused with the file, line and
//! field; nothing hangs on them and no verdict is computed from them.

use crate::util::ctx;
use std::sync::mpsc;
use std::time::Duration;

use remanent::analysis::verdict::{judge, Outcome};
use remanent::analysis::{analyze, AnalysisError};
use remanent::calibration::Calibration;
use remanent::input::dataset::Series;

fn cycle(n: usize) -> Series {
    let mut s = Series::default();
    for i in 0..n {
        let t = i as f64;
        let temp = 25.0 + 60.0 * (std::f64::consts::PI * t / n as f64).sin();
        s.time_s.push(t);
        s.temp_c.push(temp);
        s.flux_mt.push(200.0 * (1.0 - 0.0011 * (temp - 20.0)));
    }
    s
}

/// The calibration file of the notes with one line replaced.
fn calibration_with(dir: &std::path::Path, key: &str, value: &str) -> std::path::PathBuf {
    let text = toml::to_string(&Calibration::virtual_rig(
        &remanent_rig_model::RigParams::REFERENCE,
    ))
    .unwrap();
    let edited: String = text
        .lines()
        .map(|l| {
            if l.split('=').next().map(str::trim) == Some(key) {
                format!("{key} = {value}\n")
            } else {
                format!("{l}\n")
            }
        })
        .collect();
    assert_ne!(edited, text, "{key} is in the calibration");
    let p = dir.join(format!("cal-{key}.toml"));
    std::fs::write(&p, edited).unwrap();
    p
}

#[test]
fn impossible_calibration_values_are_refused_with_file_line_and_field() {
    let dir = tempfile::tempdir().unwrap();
    for (key, value, field) in [
        ("sensitivity_mv_per_mt", "0.0", "hall.sensitivity_mv_per_mt"),
        (
            "sensitivity_mv_per_mt",
            "-5.0",
            "hall.sensitivity_mv_per_mt",
        ),
        ("gap_mm", "-3.0", "gap.gap_mm"),
        ("beta_k", "0.0", "ntc.beta_k"),
        ("offset_mv", "nan", "hall.offset_mv"),
        ("offset_c", "inf", "thermocouple.offset_c"),
    ] {
        let p = calibration_with(dir.path(), key, value);
        let e = Calibration::load(&p).unwrap_err().to_string();
        assert!(e.contains(&p.display().to_string()), "{e}");
        assert!(e.contains(&format!("`{field}`")), "{e}");
        assert!(e.contains("(line "), "{e}");
    }
}

#[test]
fn a_nan_rated_temperature_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("m.toml");
    std::fs::write(
        &p,
        "id = \"x\"\ngrade = \"N42\"\nmax_working_C = nan\n[shape.cylinder]\ndiameter_mm = 10.0\nlength_mm = 5.0\n",
    )
    .unwrap();
    let e = remanent::magnets::resolve(p.to_str().unwrap())
        .unwrap_err()
        .to_string();
    assert!(e.contains("`max_working_C` = NaN (line 3)"), "{e}");
}

#[test]
fn a_nan_in_the_series_is_refused_naming_the_sample_and_field() {
    let mut s = cycle(400);
    s.flux_mt[123] = f64::NAN;
    match analyze(&s, &ctx()) {
        Err(AnalysisError::NotFinite(why)) => {
            assert!(
                why.contains("sample 124") && why.contains("flux_mT"),
                "{why}"
            )
        }
        Err(e) => panic!("wrong error {e}"),
        Ok(a) => panic!("analysed a NaN into {}", a.judgement.verdict),
    }
}

#[test]
fn no_verdict_comes_from_a_nan() {
    // a NaN inside any limits would otherwise compare false both ways
    assert_eq!(judge(f64::NAN, 0.001, -0.13, -0.09), Outcome::Indeterminate);
    assert_eq!(judge(-0.11, f64::NAN, -0.13, -0.09), Outcome::Indeterminate);
    assert_eq!(
        judge(f64::INFINITY, 0.001, -0.13, -0.09),
        Outcome::Indeterminate
    );
    assert_eq!(judge(-0.11, 0.001, -0.13, -0.09), Outcome::Pass);
}

#[test]
fn plotting_an_all_nan_series_finishes() {
    let mut s = cycle(400);
    s.temp_c.iter_mut().for_each(|v| *v = f64::NAN);
    s.flux_mt.iter_mut().for_each(|v| *v = f64::NAN);
    let dir = tempfile::tempdir().unwrap();
    let stem = dir.path().join("timeline");
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let r = remanent::plots::timeline_figure(
            "timeline",
            &s,
            "all NaN",
            &remanent::units::DisplayUnits::SI,
        )
        .and_then(|f| remanent::plots::write_figure(&stem, &f, false))
        .map(|_| ());
        let _ = tx.send(r.map_err(|e| e.to_string()));
    });
    // a hang, not a speed: plotters' tick search never ends on a NaN range
    let r = rx
        .recv_timeout(Duration::from_secs(120))
        .expect("the plot of an all-NaN series never finished");
    r.unwrap();
    assert!(dir.path().join("timeline.png").is_file());
}
