//! The HTML report of a run: the verdict, the facts, the results, the checks with their
//! reasons, the notes, the budgets, the plots (SVG, embedded), the method and the safety notes.

use super::notes::{budget_rows, facts, METHOD_NOTES, SAFETY_NOTES};
use super::page::{esc, Page};
use crate::analysis::Analysis;
use crate::plots::Figure;
use crate::run_dir::RunMeta;
use crate::units;

/// The results table's rows.
fn results(a: &Analysis) -> Vec<(String, String)> {
    let mut rows = vec![
        (
            "α(Br), mean 20 °C … top of range".to_string(),
            units::alpha_with_u95(a.alpha_pct_per_c, a.alpha_u95_pct_per_c),
        ),
        (
            "fitted range".into(),
            format!(
                "{} ({}, {} points)",
                units::range_c(a.fit_range_c),
                a.fit_method,
                a.fit_points
            ),
        ),
        (
            "tangent at 20 °C, quadratic term".into(),
            format!(
                "{:+.4} %/°C, {:+.6} %/°C²",
                a.alpha_at_20c_pct_per_c, a.gamma_pct_per_c2
            ),
        ),
        (
            "thermal lag".into(),
            a.lag_time_constant_s
                .map(|t| format!("τ = {t:.1} s"))
                .unwrap_or_else(|| "not estimated".into()),
        ),
        (
            "irreversible loss".into(),
            match (a.irreversible_loss_pct, a.irreversible_loss_u95_pct) {
                (Some(l), Some(u)) => format!(
                    "{} after {:.1} °C",
                    units::loss_with_u95(l, u),
                    a.max_magnet_temp_c
                ),
                _ => "not computed".into(),
            },
        ),
    ];
    if let Some(b) = a.br {
        rows.push(if a.br_referred {
            (
                "Br (referred to the fixture's reference magnet)".into(),
                format!("{:.4} ± {:.4} T (k = 2)", b.br_t, b.br_u95_t),
            )
        } else {
            (
                "Br from geometry".into(),
                format!(
                    "{:.3} ± {:.3} T (k = 2); {:+.2} % per +0.1 mm gap",
                    b.br_t, b.br_u95_t, b.pct_per_0_1_mm
                ),
            )
        });
    }
    rows.push(("material family".into(), a.material_family.clone()));
    rows
}

/// The page.
pub fn html(a: &Analysis, meta: Option<&RunMeta>, title: &str, figures: &[Figure]) -> String {
    let mut page = Page::new("report", title);
    let v = a.verdict;
    if a.uncalibrated {
        page.raw("<p class=\"v fail\">UNCALIBRATED BENCH: recorded without a valid calibration; the numbers are not traceable</p>");
    }
    let i = &a.provenance.inspection;
    let dash = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".into());
    page.raw(&format!("<p class=\"v {}\">Verdict: {v}</p>", v.word()))
        .h2("Inspection")
        .facts(&[
            ("lot".into(), dash(&i.lot)),
            ("purchase order".into(), dash(&i.purchase_order)),
            ("supplier".into(), dash(&i.supplier)),
            ("operator".into(), dash(&i.operator)),
        ])
        .facts(&facts(meta))
        .h2("Results")
        .facts(&results(a))
        .h2("Verdict and reasons");
    let mut checks = String::from("<table><tr><th>check</th><th>outcome</th><th>reason</th></tr>");
    for c in &a.checks {
        let o = c.outcome.word();
        checks.push_str(&format!(
            "<tr><td>{}</td><td class=\"{o}\">{o}</td><td>{}</td></tr>",
            esc(&c.what),
            esc(&c.reason)
        ));
    }
    page.raw("<div class=\"keep\">")
        .raw(&checks)
        .raw("</table></div>");
    for n in &a.notes {
        page.p(&format!("Note: {n}"));
    }
    for (name, lines) in [
        ("α (%/°C)", &a.alpha_budget),
        ("irreversible loss (%)", &a.loss_budget),
        ("Br (relative, %)", &a.br_budget),
    ] {
        if lines.is_empty() {
            continue;
        }
        let rows: Vec<Vec<String>> = budget_rows(lines)
            .into_iter()
            .map(|(s, k, u)| vec![s, k, u])
            .collect();
        page.h2(&format!("Uncertainty budget: {name}"))
            .table(&["source", "type", "standard uncertainty"], &rows);
    }
    page.h2("Plots");
    for f in figures {
        page.figure(&f.name, f.svg_element());
    }
    page.raw(
        "<div class=\"sign\"><div>Tested by: name and signature</div><div>role</div><div>date</div></div>\
         <div class=\"sign\"><div>Reviewed and released by: name and signature</div><div>role</div><div>date</div></div>",
    );
    // printed, the method stays on screen: the certificate and the notes carry it
    page.raw("<div class=\"screen\">")
        .h2("Method")
        .list(METHOD_NOTES)
        .raw("</div>")
        .h2("Safety")
        .list(SAFETY_NOTES);
    page.finish()
}
