//! Reports: the plots plus a self-contained HTML page (plots inlined as SVG, no network) and
//! a Markdown version, beside the run. Never replaces a file unless told to.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use crate::analysis::dataset::Series;
use crate::analysis::{summary, Analysis, BudgetLine};
use crate::run_dir::{self, RunMeta};

/// Writing the report failed.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// A file is already there.
    #[error("{0} already exists; pass --force to replace report files")]
    Exists(String),
    /// File system.
    #[error("{path}: {source}")]
    Io {
        /// File.
        path: String,
        /// Why.
        source: std::io::Error,
    },
    /// Plotting.
    #[error("plotting {path}: {reason}")]
    Plot {
        /// File.
        path: String,
        /// Why.
        reason: String,
    },
}

/// Report file names.
pub const HTML_FILE: &str = "report.html";
/// Markdown report.
pub const MD_FILE: &str = "report.md";
/// Machine-readable analysis.
pub const JSON_FILE: &str = "analysis.json";

/// Refuse if any of `paths` exists, unless `force`.
pub fn refuse_existing(
    paths: impl IntoIterator<Item = PathBuf>,
    force: bool,
) -> Result<(), ReportError> {
    if force {
        return Ok(());
    }
    match paths.into_iter().find(|p| p.exists()) {
        Some(p) => Err(ReportError::Exists(p.display().to_string())),
        None => Ok(()),
    }
}

fn write_new(path: &Path, text: &str, force: bool) -> Result<(), ReportError> {
    if path.exists() && !force {
        return Err(ReportError::Exists(path.display().to_string()));
    }
    std::fs::write(path, text).map_err(|source| ReportError::Io {
        path: path.display().to_string(),
        source,
    })
}

/// Write every output of a run; returns the files written.
pub fn write_all(
    dir: &Path,
    series: &Series,
    a: &Analysis,
    title: &str,
    force: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    refuse_existing([HTML_FILE, MD_FILE, JSON_FILE].map(|f| dir.join(f)), force)?;
    let mut written = crate::plots::write_run_plots(dir, series, a, title, force)?;
    let meta = run_dir::read_meta(dir).ok();
    let json = serde_json::to_string_pretty(a).expect("analysis serializes");
    write_new(&dir.join(JSON_FILE), &json, force)?;
    write_new(
        &dir.join(MD_FILE),
        &markdown(a, meta.as_ref(), title),
        force,
    )?;
    let svgs: Vec<(String, String)> = crate::plots::RUN_PLOTS
        .iter()
        .map(|stem| {
            let p = dir.join(stem).with_extension("svg");
            (
                stem.to_string(),
                std::fs::read_to_string(&p).unwrap_or_default(),
            )
        })
        .collect();
    write_new(
        &dir.join(HTML_FILE),
        &html(a, meta.as_ref(), title, &svgs),
        force,
    )?;
    written.extend([dir.join(JSON_FILE), dir.join(MD_FILE), dir.join(HTML_FILE)]);
    Ok(written)
}

/// Method notes shared by both formats.
pub const METHOD_NOTES: [&str; 6] = [
    "Thermocouple: ITS-90 Type K reference and inverse functions (NIST Monograph 175) with cold-junction compensation; the converter chip's linear 41.276 µV/°C approximation is undone.",
    "Flux: Hall code to mT with the rig calibration's offset, sensitivity and the probe's own temperature coefficient (probe temperature from its thermistor, Beta equation); readings are referred to the gap at 20 °C using the standoff's expansion.",
    "Thermal lag: the magnet follows the thermocouple as a first-order system; its time constant is the one that makes the heating and cooling branches coincide.",
    "Fit: B(T) = B20·(1 + α(T − 20) + γ(T − 20)²) by QR least squares on the lag-corrected temperature; α is reported as the mean coefficient between 20 °C and the top of the fitted range (two-point form), with the tangent at 20 °C beside it.",
    "Uncertainty: GUM (JCGM 100:2008) budget combining the fit (type A) with thermocouple gain tolerance, the probe coefficient's uncertainty, the standoff expansion and the lag model (type B), expanded with k = 2.",
    "Irreversible loss: settled readings at room temperature before and after the excursion, corrected to one temperature with the fitted reversible curve. Open-circuit measurement: for ferrite and AlNiCo the working point moves with temperature, so the field's coefficient is not exactly α(Br).",
];

/// Safety notes printed in every report.
pub const SAFETY_NOTES: [&str; 4] = [
    "Let the fixture cool below 50 °C before handling; metal at 65–70 °C burns in about a second. Use non-magnetic tools: a hot magnet still jumps to steel.",
    "Rare-earth magnets pinch, chip and shatter: eye protection; keep them away from pacemakers and implants.",
    "Coatings and adhesives give off fumes above about 120–150 °C: ventilate.",
    "Mains wiring, earthing and the independent thermal cut-off follow IEC 61010-1 / IEC 61010-2-010 and the local wiring code, done by a qualified person.",
];

fn budget_rows(lines: &[BudgetLine]) -> Vec<(String, String, String)> {
    lines
        .iter()
        .map(|l| (l.source.clone(), l.kind.to_string(), format!("{:.5}", l.u)))
        .collect()
}

fn facts(meta: Option<&RunMeta>) -> Vec<(String, String)> {
    let Some(m) = meta else {
        return vec![("source".into(), "plain CSV log".into())];
    };
    let mut f = vec![
        ("magnet".into(), format!("{} — {} ({})", m.magnet.id, m.magnet.description, m.magnet.grade)),
        ("rated maximum".into(), format!("{:.0} °C", m.magnet.max_working_c)),
        ("profile".into(), format!("{}: {}", m.profile.name, m.profile.description)),
        ("recorded".into(), format!("{} … {}", m.started_utc, m.finished_utc.clone().unwrap_or_else(|| "unfinished".into()))),
        ("port".into(), m.port.clone()),
        ("end".into(), m.end_reason.clone().unwrap_or_default()),
        (
            "counts".into(),
            format!(
                "{} samples, {} gaps ({} missing), {} rejected frames",
                m.counts.samples,
                m.counts.gaps,
                m.counts.gap_samples,
                m.counts.frames_bad_crc + m.counts.frames_bad_cobs + m.counts.frames_other
            ),
        ),
        (
            "calibration".into(),
            format!(
                "Hall {:.3} mV/mT, {:+.3} %/°C (u {:.3}); gap {:.2} mm (u {:.2}); thermocouple gain ±{} %",
                m.calibration.hall.sensor.sensitivity_mv_per_mt,
                m.calibration.hall.sensor.sensitivity_tc_pct_per_c,
                m.calibration.hall.sensitivity_tc_u_pct_per_c,
                m.calibration.gap.standoff.gap_mm,
                m.calibration.gap.gap_u_mm,
                m.calibration.thermocouple.gain_tolerance_pct
            ),
        ),
        ("software".into(), m.software.clone()),
    ];
    if let Some(d) = &m.device {
        f.push((
            "device".into(),
            format!(
                "board {}, firmware {}, protocol {} ({}), ceiling {:.0} °C",
                d.board, d.firmware, d.protocol, d.schema, d.ceiling_c
            ),
        ));
    }
    f
}

/// The Markdown report.
pub fn markdown(a: &Analysis, meta: Option<&RunMeta>, title: &str) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# Remanent report — {title}\n");
    for (k, v) in facts(meta) {
        let _ = writeln!(s, "- **{k}**: {v}");
    }
    let _ = writeln!(
        s,
        "\n## Results\n\n```text\n{}```\n",
        summary::text(a, title)
    );
    let _ = writeln!(s, "## Uncertainty budget of α (%/°C, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
    for (src, k, u) in budget_rows(&a.alpha_budget) {
        let _ = writeln!(s, "| {src} | {k} | {u} |");
    }
    if !a.loss_budget.is_empty() {
        let _ = writeln!(s, "\n## Uncertainty budget of the loss (%, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
        for (src, k, u) in budget_rows(&a.loss_budget) {
            let _ = writeln!(s, "| {src} | {k} | {u} |");
        }
    }
    let _ = writeln!(s, "\n## Plots\n\n![flux against temperature](flux_vs_temp.png)\n\n![residuals](residuals.png)\n\n![time series](timeline.png)\n");
    let _ = writeln!(s, "## Method\n");
    for n in METHOD_NOTES {
        let _ = writeln!(s, "- {n}");
    }
    let _ = writeln!(s, "\n## Safety\n");
    for n in SAFETY_NOTES {
        let _ = writeln!(s, "- {n}");
    }
    s
}

fn esc(t: &str) -> String {
    t.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// The HTML report, self-contained.
pub fn html(
    a: &Analysis,
    meta: Option<&RunMeta>,
    title: &str,
    svgs: &[(String, String)],
) -> String {
    let mut s = String::new();
    let verdict = format!("{:?}", a.verdict).to_uppercase();
    let _ = write!(
        s,
        "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>Remanent report — {t}</title>\
         <style>body{{font-family:sans-serif;max-width:1150px;margin:2em auto;color:#222}}\
         table{{border-collapse:collapse;margin:1em 0}}td,th{{border:1px solid #bbb;padding:4px 8px;text-align:left}}\
         .v{{font-size:1.4em;font-weight:bold}} .pass{{color:#1b6e2a}} .fail{{color:#a21d1d}} .indeterminate{{color:#8a6100}}\
         figure{{margin:1em 0}} svg{{max-width:100%;height:auto}}</style></head><body>\
         <h1>Remanent report — {t}</h1>",
        t = esc(title)
    );
    let _ = write!(
        s,
        "<p class=\"v {}\">Verdict: {verdict}</p><table>",
        format!("{:?}", a.verdict).to_lowercase()
    );
    for (k, v) in facts(meta) {
        let _ = write!(s, "<tr><th>{}</th><td>{}</td></tr>", esc(&k), esc(&v));
    }
    let _ = write!(s, "</table><h2>Results</h2><table>");
    let mut row = |k: &str, v: String| {
        let _ = write!(s, "<tr><th>{}</th><td>{}</td></tr>", esc(k), esc(&v));
    };
    row(
        "α(Br), mean 20 °C … top of range",
        format!(
            "{:+.4} ± {:.4} %/°C (k = 2)",
            a.alpha_pct_per_c, a.alpha_u95_pct_per_c
        ),
    );
    row(
        "fitted range",
        format!(
            "{:.1} … {:.1} °C ({}, {} points)",
            a.fit_range_c[0], a.fit_range_c[1], a.fit_method, a.fit_points
        ),
    );
    row(
        "tangent at 20 °C, quadratic term",
        format!(
            "{:+.4} %/°C, {:+.6} %/°C²",
            a.alpha_at_20c_pct_per_c, a.gamma_pct_per_c2
        ),
    );
    row(
        "thermal lag",
        a.lag_time_constant_s
            .map(|t| format!("τ = {t:.1} s"))
            .unwrap_or_else(|| "not estimated".into()),
    );
    row(
        "irreversible loss",
        match (a.irreversible_loss_pct, a.irreversible_loss_u95_pct) {
            (Some(l), Some(u)) => format!(
                "{l:.3} ± {u:.3} % (k = 2) after {:.1} °C",
                a.max_magnet_temp_c
            ),
            _ => "not computed".into(),
        },
    );
    if let Some(b) = a.br {
        row(
            "Br from geometry",
            format!(
                "{:.3} ± {:.3} T (k = 2); {:+.2} % per +0.1 mm gap",
                b.br_t, b.br_u95_t, b.pct_per_0_1_mm
            ),
        );
    }
    row("material family", a.material_family.clone());
    let _ = write!(s, "</table><h2>Verdict and reasons</h2><table><tr><th>check</th><th>outcome</th><th>reason</th></tr>");
    for c in &a.checks {
        let o = format!("{:?}", c.outcome).to_lowercase();
        let _ = write!(
            s,
            "<tr><td>{}</td><td class=\"{o}\">{o}</td><td>{}</td></tr>",
            esc(&c.what),
            esc(&c.reason)
        );
    }
    let _ = write!(s, "</table>");
    for n in &a.notes {
        let _ = write!(s, "<p>Note: {}</p>", esc(n));
    }
    for (name, rows) in [
        ("α (%/°C)", &a.alpha_budget),
        ("irreversible loss (%)", &a.loss_budget),
    ] {
        if rows.is_empty() {
            continue;
        }
        let _ = write!(s, "<h2>Uncertainty budget: {name}</h2><table><tr><th>source</th><th>type</th><th>standard uncertainty</th></tr>");
        for (src, k, u) in budget_rows(rows) {
            let _ = write!(s, "<tr><td>{}</td><td>{k}</td><td>{u}</td></tr>", esc(&src));
        }
        let _ = write!(s, "</table>");
    }
    let _ = write!(s, "<h2>Plots</h2>");
    for (name, svg) in svgs {
        let body = svg.find("<svg").map(|i| &svg[i..]).unwrap_or("");
        let _ = write!(s, "<figure id=\"{name}\">{body}</figure>");
    }
    let _ = write!(s, "<h2>Method</h2><ul>");
    for n in METHOD_NOTES {
        let _ = write!(s, "<li>{}</li>", esc(n));
    }
    let _ = write!(s, "</ul><h2>Safety</h2><ul>");
    for n in SAFETY_NOTES {
        let _ = write!(s, "<li>{}</li>", esc(n));
    }
    let _ = writeln!(s, "</ul></body></html>");
    s
}

/// The lot's HTML page.
pub fn lot_html(s: &crate::lot::LotSummary, title: &str, svg: &str) -> String {
    let mut h = String::new();
    let _ = write!(
        h,
        "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>Remanent lot — {t}</title>\
         <style>body{{font-family:sans-serif;max-width:1150px;margin:2em auto}}table{{border-collapse:collapse}}\
         td,th{{border:1px solid #bbb;padding:3px 8px}} .o{{color:#a21d1d;font-weight:bold}} svg{{max-width:100%;height:auto}}</style></head>\
         <body><h1>Remanent lot — {t}</h1><p>{} pass, {} fail, {} indeterminate.</p>",
        s.passed,
        s.failed,
        s.indeterminate,
        t = esc(title)
    );
    let _ = write!(
        h,
        "<table><tr><th></th><th>mean</th><th>sd</th><th>median</th><th>MAD</th></tr>"
    );
    let mut sp = |name: &str, x: &crate::lot::Spread, p: usize| {
        let _ = write!(
            h,
            "<tr><th>{name}</th><td>{:.p$}</td><td>{:.p$}</td><td>{:.p$}</td><td>{:.p$}</td></tr>",
            x.mean, x.sd, x.median, x.mad
        );
    };
    sp("α(Br), %/°C", &s.alpha, 4);
    if let Some(l) = &s.loss {
        sp("irreversible loss, %", l, 3);
    }
    sp("B at 20 °C, mT", &s.b20, 2);
    let _ = write!(h, "</table><h2>Magnets, ranked by room-temperature flux</h2><table><tr><th>id</th><th>grade</th><th>α %/°C</th><th>U95</th><th>loss %</th><th>U95</th><th>B20 mT</th><th>verdict</th><th>outlier</th></tr>");
    for r in &s.rows {
        let _ = write!(
            h,
            "<tr><td>{}</td><td>{}</td><td>{:+.4}</td><td>{:.4}</td><td>{}</td><td>{}</td><td>{:.2}</td><td>{:?}</td><td class=\"o\">{}</td></tr>",
            esc(&r.id),
            esc(&r.grade),
            r.alpha,
            r.alpha_u95,
            r.loss_pct.map(|x| format!("{x:.3}")).unwrap_or_default(),
            r.loss_u95_pct.map(|x| format!("{x:.3}")).unwrap_or_default(),
            r.b20_mt,
            r.verdict,
            esc(&r.outlier.join("; "))
        );
    }
    let body = svg.find("<svg").map(|i| &svg[i..]).unwrap_or("");
    let _ = writeln!(h, "</table><figure>{body}</figure><p>Outliers: modified z-score |M| &gt; 3.5 (Iglewicz &amp; Hoaglin).</p></body></html>");
    h
}

/// The report of a record the analysis could not use: the time series, the run's facts and,
/// plainly, what could not be computed and why.
pub fn write_unanalysed(
    dir: &Path,
    series: &Series,
    title: &str,
    reason: &str,
    force: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    let stem = dir.join("timeline");
    refuse_existing(
        [
            dir.join(HTML_FILE),
            dir.join(MD_FILE),
            stem.with_extension("png"),
            stem.with_extension("svg"),
        ],
        force,
    )?;
    let mut written = crate::plots::write_timeline_only(&stem, series, title)?;
    let meta = run_dir::read_meta(dir).ok();
    let mut md = format!("# Remanent report — {title}\n\n**Not analysed:** {reason}\n\n");
    for (k, v) in facts(meta.as_ref()) {
        let _ = writeln!(md, "- **{k}**: {v}");
    }
    let _ = writeln!(md, "\n![time series](timeline.png)\n\n## Safety\n");
    for n in SAFETY_NOTES {
        let _ = writeln!(md, "- {n}");
    }
    write_new(&dir.join(MD_FILE), &md, force)?;
    let svg = std::fs::read_to_string(stem.with_extension("svg")).unwrap_or_default();
    let body = svg.find("<svg").map(|i| &svg[i..]).unwrap_or("");
    let mut html = format!(
        "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>Remanent report — {t}</title>\
         <style>body{{font-family:sans-serif;max-width:1150px;margin:2em auto}}td,th{{border:1px solid #bbb;padding:4px 8px;text-align:left}}\
         table{{border-collapse:collapse}} svg{{max-width:100%;height:auto}}</style></head><body><h1>Remanent report — {t}</h1>\
         <p><strong>Not analysed:</strong> {r}</p><table>",
        t = esc(title),
        r = esc(reason)
    );
    for (k, v) in facts(meta.as_ref()) {
        let _ = write!(html, "<tr><th>{}</th><td>{}</td></tr>", esc(&k), esc(&v));
    }
    let _ = write!(html, "</table><figure>{body}</figure><h2>Safety</h2><ul>");
    for n in SAFETY_NOTES {
        let _ = write!(html, "<li>{}</li>", esc(n));
    }
    let _ = writeln!(html, "</ul></body></html>");
    write_new(&dir.join(HTML_FILE), &html, force)?;
    written.extend([dir.join(MD_FILE), dir.join(HTML_FILE)]);
    Ok(written)
}
