//! The plots show the data as they are: residuals near zero are drawn (not only each bin's
//! extremes), the fit sits on the data it was fitted to, lines break at gaps, keys stand
//! clear of the data, ticks carry no needless ".0", and a lot's plot names every grade and
//! every magnet whole. Each check reads what is drawn (the marks, or the SVG text).

use remanent::input::dataset;
use remanent::jobs::trial::{self, TrialSpec};
use remanent::plots::flux::{fit_line, residual_marks, ResidualMarks};
use remanent::profiles::{ProfileSpec, SegmentSpec};

fn run(magnet: &str, profile: ProfileSpec, dir: &std::path::Path) -> trial::Trial {
    let spec = TrialSpec {
        magnet: magnet.into(),
        magnet_tau_s: 45.0,
        profile,
        auto_end: None,
        preroll_s: 60.0,
        seed: 5,
    };
    trial::run(&spec, dir).unwrap()
}

/// An exposure above a thin disc's onset: it loses more than 1 % (the accuracy sweep's case).
fn lossy() -> ProfileSpec {
    let seg = |target_c, ramp_c_per_min, hold_s| SegmentSpec {
        target_c,
        ramp_c_per_min,
        hold_s,
    };
    ProfileSpec {
        name: "lossy".into(),
        description: "exposure above the onset".into(),
        limit_c: 125.0,
        segments: vec![
            seg(25.0, 0.0, 400.0),
            seg(110.0, 10.0, 900.0),
            seg(25.0, 10.0, 500.0),
        ],
    }
}

#[test]
fn residuals_near_zero_are_drawn_whether_few_or_many() {
    let dir = tempfile::tempdir().unwrap();
    let t = run(
        "RM-N42SH-D10x5",
        ProfileSpec::resolve("quick-alpha").unwrap(),
        &dir.path().join("r"),
    );
    let (s, _) = dataset::load_run(&dir.path().join("r"), None).unwrap();
    let a = &t.analysis;
    // the data have points within ±0.01 mT of the fit …
    let near = t
        .traces
        .residuals_mt(a)
        .iter()
        .filter(|r| r.abs() < 0.01)
        .count();
    assert!(near > 100, "{near}");
    // … and so does what is drawn (a long record: as its density)
    let (marks, _) = residual_marks(&s, a, &t.traces);
    let drawn_near = match marks {
        ResidualMarks::Density(cells) => cells
            .iter()
            .filter(|(c, _)| c[2] < 0.01 && c[3] > -0.01)
            .map(|(_, n)| n)
            .sum::<usize>(),
        ResidualMarks::Points(p) => p.iter().filter(|r| r.1.abs() < 0.01).count(),
    };
    assert!(drawn_near >= near, "drawn {drawn_near} of {near} near zero");
}

#[test]
fn after_a_loss_the_fit_is_drawn_on_the_cooling_branch_it_was_fitted_to() {
    let dir = tempfile::tempdir().unwrap();
    let t = run("RM-N35-D10x2", lossy(), &dir.path().join("r"));
    let a = &t.analysis;
    assert_eq!(a.alpha.method_code, "cooling_branch");
    assert!(a.loss.pct.unwrap() > 1.0);
    let (line, label) = fit_line(a, &remanent::units::DisplayUnits::SI);
    assert!(label.contains("cooling branch"), "{label}");
    // the line against the cooling samples in the fitted range: within the noise, not the loss
    let seg = t.traces.segments.as_ref().unwrap();
    let (tm, b) = (&t.traces.magnet_temp_c, &t.traces.flux_corrected_mt);
    let at = |t: f64| {
        let k = line.partition_point(|p| p.0 < t).min(line.len() - 1);
        line[k].1
    };
    let mut off: Vec<f64> = seg
        .cooling
        .clone()
        .filter(|&i| tm[i] > a.alpha.range_c[0] + 1.0 && tm[i] < a.alpha.range_c[1] - 1.0)
        .map(|i| ((b[i] - at(tm[i])) / b[i]).abs() * 100.0)
        .collect();
    off.sort_by(f64::total_cmp);
    let median = off[off.len() / 2];
    assert!(
        median < 0.05,
        "the fit line is {median:.3} % off the cooling data"
    );
}

#[test]
fn lines_break_at_gaps_and_keys_and_ticks_are_clean() {
    // a record with a 60 s hole: two stretches, and no line across the hole
    let mut time_s: Vec<f64> = (0..600).map(|i| f64::from(i) * 0.1).collect();
    time_s.extend((0..600).map(|i| 120.0 + f64::from(i) * 0.1));
    let pieces = remanent::plots::timeline::drawn_stretches(&time_s);
    assert_eq!(pieces, vec![0..600, 600..1200]);
    // the B–T plot of a real run: keys in their strip at the right, ticks without ".0"
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("r");
    let t = run(
        "RM-N42SH-D10x5",
        ProfileSpec::resolve("rapid").unwrap(),
        &out,
    );
    let (s, _) = dataset::load_run(&out, None).unwrap();
    let figs = remanent::plots::run_figures(
        &s,
        &t.analysis,
        &t.traces,
        "test",
        &remanent::units::DisplayUnits::SI,
    )
    .unwrap();
    let svg = &figs[0].svg;
    let texts = svg_texts(svg);
    let key_x = (remanent::plots::SIZE.0 - remanent::plots::style::KEY_WIDTH) as f64;
    let cooling = texts
        .iter()
        .find(|(_, t)| t.starts_with("cooling"))
        .expect("a cooling key");
    assert!(
        cooling.0 >= key_x,
        "the key at x = {} is over the data",
        cooling.0
    );
    let ticks: Vec<&String> = texts
        .iter()
        .map(|(_, t)| t)
        .filter(|t| t.ends_with(".0"))
        .collect();
    assert!(ticks.is_empty(), "{ticks:?}");
}

/// Every `<text x=…>…</text>` of an SVG: its x and its text.
fn svg_texts(svg: &str) -> Vec<(f64, String)> {
    svg.split("<text")
        .skip(1)
        .filter_map(|t| {
            let x = t.split("x=\"").nth(1)?.split('"').next()?.parse().ok()?;
            let body = t.split('>').nth(1)?.split('<').next()?.trim().to_string();
            Some((x, body))
        })
        .collect()
}

#[test]
fn a_mixed_lot_names_every_grade_and_every_magnet_whole() {
    let dir = tempfile::tempdir().unwrap();
    let parts = ["RM-N42SH-D10x5", "RM-N42-D10x5", "RM-S2C17-D10x5"];
    let runs: Vec<std::path::PathBuf> = parts
        .iter()
        .map(|p| {
            let out = dir.path().join(p);
            run(p, ProfileSpec::resolve("rapid").unwrap(), &out);
            out
        })
        .collect();
    let out = dir.path().join("lot");
    let judging = remanent::jobs::Judging::default();
    let done = remanent::jobs::lot::run(
        &runs,
        &out,
        &judging,
        true,
        false,
        &remanent::units::DisplayUnits::SI,
    )
    .unwrap();
    assert_eq!(done.analyses.len(), 3);
    let svg = std::fs::read_to_string(out.join("lot.svg")).unwrap();
    let texts = svg_texts(&svg);
    let title = texts.iter().find(|(_, t)| t.contains("magnets")).unwrap();
    assert!(
        title.1.contains("mixed grades")
            && title.1.contains("Sm2Co17-28")
            && title.1.contains("N42SH"),
        "{}",
        title.1
    );
    for p in parts {
        assert!(
            texts.iter().any(|(_, t)| t.contains(p)),
            "{p} is not shown whole"
        );
    }
    assert!(texts.iter().any(|(_, t)| t.contains("U95 bars")));
}

#[test]
fn a_timeline_without_a_heater_column_has_no_heater_panel() {
    // a logger's CSV with time, temperature and flux only once showed an empty "heater duty"
    // panel with a legend entry for a line that was not there
    let mut s = remanent::input::dataset::Series::default();
    for i in 0..600 {
        let t = f64::from(i);
        s.time_s.push(t);
        s.temp_c.push(25.0 + 0.1 * t);
        s.flux_mt.push(200.0 - 0.02 * t);
    }
    let dir = tempfile::tempdir().unwrap();
    let draw = |s: &remanent::input::dataset::Series, name: &str| {
        let stem = dir.path().join(name);
        let f = remanent::plots::timeline_figure(name, s, name, &Default::default()).unwrap();
        remanent::plots::write_figure(&stem, &f, false).unwrap();
        std::fs::read_to_string(stem.with_extension("svg")).unwrap()
    };
    let logged = draw(&s, "logged");
    assert!(!logged.contains("heater duty"), "an empty heater panel");
    assert!(
        logged.contains("time since start, min"),
        "the time axis is named"
    );
    s.duty_pct = Some(vec![40.0; 600]);
    assert!(draw(&s, "recorded").contains("heater duty"));
}

/// Centred texts of an SVG: (centre x, font size, the text).
fn centred_texts(svg: &str) -> Vec<(f64, f64, String)> {
    let attr = |t: &str, k: &str| -> Option<f64> {
        t.split(&format!(" {k}=\""))
            .nth(1)?
            .split('"')
            .next()?
            .parse()
            .ok()
    };
    svg.split("<text")
        .skip(1)
        .filter(|t| t.contains("text-anchor=\"middle\"") && !t.contains("rotate("))
        .filter_map(|t| {
            let body = t.split('>').nth(1)?.split('<').next()?.trim().to_string();
            Some((attr(t, "x")?, attr(t, "font-size")?, body))
        })
        .collect()
}

#[test]
fn every_caption_of_a_lot_plot_fits_inside_the_figure() {
    // a lot with a loss, so every panel is drawn; its loss caption once ran off the left edge
    let row = |id: &str, loss: f64| remanent::lot::LotRow {
        id: id.into(),
        grade: "N42SH".into(),
        alpha: -0.116,
        alpha_u95: 0.0015,
        loss_pct: Some(loss),
        loss_u95_pct: Some(0.03),
        b20_mt: 218.4,
        br_t: None,
        verdict: remanent::analysis::verdict::Outcome::Pass,
        heat_damaged: false,
        outlier: Vec::new(),
    };
    let s = remanent::lot::summarise(vec![row("a", 0.0), row("b", 0.01), row("c", 3.2)]);
    let spec = remanent::specs::SpecTable::builtin().find("N42SH").cloned();
    let f = remanent::plots::lot_figure("lot", &s, spec.as_ref(), "test lot", &Default::default())
        .unwrap();
    let width = f64::from(remanent::plots::SIZE.0);
    // DejaVu Sans averages a little over half an em a character (common practice: 0.55 em)
    for (x, size, text) in centred_texts(&f.svg) {
        let half = text.chars().count() as f64 * size * 0.55 / 2.0;
        assert!(
            x - half >= 0.0 && x + half <= width,
            "`{text}` spans {:.0}…{:.0} px of {width}",
            x - half,
            x + half
        );
    }
}
