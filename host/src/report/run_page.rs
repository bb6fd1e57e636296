//! The HTML report of a run: the verdict, the facts, the results, the checks with their
//! reasons, the notes, the budgets, the plots (SVG, embedded), the method and the safety notes.

use super::notes::{budget_rows, facts, safety_notes, METHOD_NOTES};
use super::page::{esc, Page};
use crate::analysis::Analysis;
use crate::plots::Figure;
use crate::run_dir::RunMeta;
use crate::units::{self, temp_q, DisplayUnits, Kind, Qty};

/// The results table's rows, in the display units `u`.
fn results(a: &Analysis, u: &DisplayUnits) -> Vec<(String, String)> {
    let at20 = temp_q(20.0, 0).render(u);
    let mut rows = vec![
        (
            format!("α(Br), mean {at20} … top of range"),
            units::alpha_with_u95(u, a.alpha.pct_per_c, a.alpha.u95_pct_per_c),
        ),
        (
            "fitted range".into(),
            format!(
                "{} ({}, {} points)",
                units::temp_range(u, a.alpha.range_c),
                a.alpha.method,
                a.alpha.points
            ),
        ),
        (
            format!("tangent at {at20}, quadratic term"),
            format!(
                "{}, {}",
                Qty::one(Kind::Alpha, a.alpha.at_20c_pct_per_c, 4)
                    .signed()
                    .render(u),
                Qty::one(Kind::Alpha2, a.alpha.gamma_pct_per_c2, 6)
                    .signed()
                    .render(u)
            ),
        ),
        (
            "thermal lag".into(),
            a.lag
                .time_constant_s
                .map(|t| format!("τ = {t:.1} s"))
                .unwrap_or_else(|| "not estimated".into()),
        ),
        (
            "irreversible loss".into(),
            crate::report::summary::loss_words(a, u),
        ),
    ];
    if let Some(p) = &a.judgement.safe_peak {
        rows.push(("safe test peak".into(), p.explain().render(u)));
    }
    if let Some(b) = a.remanence.estimate {
        rows.push(if a.remanence.referred {
            (
                "Br (referred to the fixture's reference magnet)".into(),
                format!(
                    "{} (k = 2)",
                    Qty::pm(Kind::Br, b.br_t, b.br_u95_t, 4).render(u)
                ),
            )
        } else {
            (
                "Br from geometry".into(),
                format!(
                    "{} (k = 2); {:+.2} % per +0.1 mm gap",
                    Qty::pm(Kind::Br, b.br_t, b.br_u95_t, 3).render(u),
                    b.pct_per_0_1_mm
                ),
            )
        });
    }
    rows.push((
        "material family".into(),
        a.judgement.material_family.clone(),
    ));
    rows
}

/// The page, in the display units `u`.
pub fn html(
    a: &Analysis,
    meta: Option<&RunMeta>,
    title: &str,
    figures: &[Figure],
    u: &DisplayUnits,
) -> String {
    let mut page = Page::new("report", title);
    let v = a.judgement.verdict;
    if a.input.uncalibrated {
        page.raw("<p class=\"v fail\">UNCALIBRATED BENCH: recorded without a valid calibration; the numbers are not traceable</p>");
    }
    let i = &a.provenance.inspection;
    let dash = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".into());
    if let Some(note) = u.shown_note() {
        page.p(&note);
    }
    page.raw(&format!("<p class=\"v {}\">Verdict: {v}</p>", v.word()))
        .h2("Inspection")
        .facts(&[
            ("lot".into(), dash(&i.lot)),
            ("purchase order".into(), dash(&i.purchase_order)),
            ("supplier".into(), dash(&i.supplier)),
            ("operator".into(), dash(&i.operator)),
        ])
        .facts(&facts(meta, u))
        .h2("Results")
        .facts(&results(a, u))
        .h2("Verdict and reasons");
    let mut checks = String::from("<table><tr><th>check</th><th>outcome</th><th>reason</th></tr>");
    for c in &a.judgement.checks {
        let o = c.outcome.word();
        checks.push_str(&format!(
            "<tr><td>{}</td><td class=\"{o}\">{o}</td><td>{}</td></tr>",
            esc(c.what.name()),
            esc(&c.reason.render(u))
        ));
    }
    page.raw("<div class=\"keep\">")
        .raw(&checks)
        .raw("</table></div>");
    if let Some(q) = &a.judgement.quarantine {
        page.raw(&format!("<p class=\"v fail\">{}</p>", esc(&q.render(u))));
    }
    for n in &a.notes {
        page.p(&format!("Note: {}", n.render(u)));
    }
    for (name, lines, scale) in [
        (
            format!("α ({})", u.alpha_symbol()),
            &a.alpha.budget,
            u.per_degree(1.0),
        ),
        ("irreversible loss (%)".into(), &a.loss.budget, 1.0),
        ("Br (relative, %)".into(), &a.remanence.budget, 1.0),
    ] {
        if lines.is_empty() {
            continue;
        }
        let rows: Vec<Vec<String>> = budget_rows(lines, scale)
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
        .list(safety_notes(u).iter().map(String::as_str));
    page.finish()
}
