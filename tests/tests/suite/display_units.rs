//! Display units: one run reported in SI-based units and again in gauss and degrees
//! Fahrenheit. Every summary, report, plot axis and the certificate show the chosen units,
//! with numbers that are the SI ones converted by the definitions (NIST SP 811, 2008 ed.,
//! §B.8–B.9: t/°F = 1.8·t/°C + 32, a kelvin of difference is 1.8 °F, 1 G = 1e-4 T); the JSON
//! and CSV files are the same whatever is shown.

use std::path::{Path, PathBuf};

use remanent::report::Look;
use remanent::units::{DisplayUnits, FluxUnit, TempUnit};

const US: DisplayUnits = DisplayUnits {
    flux: FluxUnit::Gauss,
    temp: TempUnit::Fahrenheit,
};

/// The demo part on `rapid` into `dir/name`, reported in `look`.
fn reported(dir: &Path, name: &str, look: &Look) -> PathBuf {
    let out = dir.join(name);
    crate::util::rapid_run(&out, 11);
    remanent::jobs::report::run(&out, &Default::default(), false, look).unwrap();
    out
}

/// `analysis.json` without its provenance (the run's name and when it was made).
fn analysis_json(run: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(run.join("analysis.json")).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
    v.as_object_mut().unwrap().remove("provenance");
    v
}

/// The number after `label` on the line that holds it.
fn number_after(text: &str, label: &str) -> f64 {
    let at = text
        .find(label)
        .unwrap_or_else(|| panic!("no `{label}` in\n{text}"));
    let rest = text[at + label.len()..].trim_start();
    let end = rest
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-' || c == '+'))
        .unwrap_or(rest.len());
    rest[..end]
        .parse()
        .unwrap_or_else(|_| panic!("no number after `{label}`: {rest:.40}"))
}

#[test]
fn a_report_in_gauss_and_fahrenheit_converts_every_shown_number_and_no_file() {
    let dir = tempfile::tempdir().unwrap();
    let si = reported(dir.path(), "si", &Look::default());
    let us = reported(
        dir.path(),
        "us",
        &Look {
            units: US,
            ..Default::default()
        },
    );
    // the machine-readable files do not change with what is shown
    assert_eq!(analysis_json(&si), analysis_json(&us));
    assert_eq!(
        std::fs::read(si.join("samples.csv")).unwrap(),
        std::fs::read(us.join("samples.csv")).unwrap()
    );
    let a = analysis_json(&si);
    let alpha = a["alpha_pct_per_C"].as_f64().unwrap();
    let b20 = a["b20_mT"].as_f64().unwrap();
    let top = a["fit_range_C"][1].as_f64().unwrap();

    let md = std::fs::read_to_string(us.join("report.md")).unwrap();
    // α per °F is α per °C / 1.8; B20 in G is ten times mT; the range's top is 1.8·t + 32
    let line = md
        .lines()
        .find(|l| l.trim_start().starts_with("α(Br), 68 …"))
        .unwrap_or_else(|| panic!("no α line in °F:\n{md}"));
    let a_f = number_after(line, ":");
    assert!(
        (a_f - alpha / 1.8).abs() <= 0.00006,
        "{line} vs {alpha} %/°C"
    );
    assert!(line.contains("%/°F"), "{line}");
    let top_f = number_after(line, "68 …");
    assert!((top_f - (top * 1.8 + 32.0)).abs() <= 0.6, "{line}");
    // the field at 20 °C named in °F too (it once said "B20 =")
    assert!(!md.contains("B20 ="), "{md}");
    let b_g = number_after(&md, "B at 68 °F = ");
    assert!((b_g - b20 * 10.0).abs() <= 0.06, "{b_g} G vs {b20} mT");
    assert!(md.contains("Shown in °F and G"), "{md}");
    // the checks and notes are shown in the chosen units too
    let checks: Vec<&str> = md.lines().filter(|l| l.contains("measured ")).collect();
    assert!(
        checks
            .iter()
            .all(|l| l.contains("%/°F") && !l.contains("%/°C")),
        "{checks:?}"
    );
    assert!(
        md.contains("estimated ") && md.contains(" G against "),
        "{md}"
    );

    let html = std::fs::read_to_string(us.join("report.html")).unwrap();
    assert!(html.contains("%/°F (95 %)") && html.contains("Shown in °F and G"));
    // plot axes, in the SVG text
    let svg = |name: &str| std::fs::read_to_string(us.join(name)).unwrap();
    assert!(svg("flux_vs_temp.svg").contains("flux density at the probe, G"));
    assert!(svg("flux_vs_temp.svg").contains("magnet temperature (lag-corrected), °F"));
    assert!(svg("residuals.svg").contains("measured − fitted, G"));
    assert!(svg("timeline.svg").contains("temperature, °F"));
    let si_md = std::fs::read_to_string(si.join("report.md")).unwrap();
    assert!(!si_md.contains("°F") && !si_md.contains("Shown in"));
}

#[test]
fn a_lot_page_and_plot_show_alpha_per_degree_fahrenheit_and_flux_in_tesla() {
    let dir = tempfile::tempdir().unwrap();
    let run = reported(dir.path(), "one", &Look::default());
    let units = DisplayUnits {
        flux: FluxUnit::Tesla,
        temp: TempUnit::Fahrenheit,
    };
    let out = dir.path().join("lot");
    let done = remanent::jobs::lot::run(
        std::slice::from_ref(&run),
        &out,
        &Default::default(),
        false,
        false,
        &units,
    )
    .unwrap();
    let row = &done.summary.rows[0];
    let html = std::fs::read_to_string(out.join("lot.html")).unwrap();
    assert!(html.contains("<th>α %/°F</th>") && html.contains("<th>B at 68 °F, T</th>"));
    // the row's α in %/°F and B20 in T, converted from the SI row
    assert!(
        html.contains(&format!("{:+.4}", row.alpha / 1.8)),
        "{:+.4} not in the page",
        row.alpha / 1.8
    );
    assert!(html.contains(&format!("{:.5}", row.b20_mt / 1000.0)));
    let svg = std::fs::read_to_string(out.join("lot.svg")).unwrap();
    assert!(svg.contains("α(Br), %/°F") && svg.contains("B at 68 °F"));
    // one magnet is one, not "1 magnets"
    assert!(svg.contains("1 magnet, grade N42SH"), "title");
    // lot.csv stays SI-based
    let csv = std::fs::read_to_string(out.join("lot.csv")).unwrap();
    assert!(csv.contains(&format!("{:.5}", row.alpha)), "{csv}");
}
