//! The HTML page of a lot: counts, spread, the ranked table with outliers, and the lot plot.

use super::page::{esc, Page};
use crate::lot::{LotSummary, Spread};
use crate::plots::Figure;
use crate::units::{temp_q, DisplayUnits};

/// The page, in the display units `u`.
pub fn lot_html(s: &LotSummary, title: &str, figure: &Figure, u: &DisplayUnits) -> String {
    let mut page = Page::new("lot", title);
    page.p(&format!(
        "{} pass, {} fail, {} indeterminate.",
        s.passed, s.failed, s.indeterminate
    ));
    // every figure here converts by a factor (α per degree, flux), spreads included
    let spread = |name: &str, x: &Spread, k: f64, p: usize| {
        vec![
            name.to_string(),
            format!("{:.p$}", x.mean * k),
            format!("{:.p$}", x.sd * k),
            format!("{:.p$}", x.median * k),
            format!("{:.p$}", x.mad * k),
        ]
    };
    let (per, alpha_unit) = (u.per_degree(1.0), u.alpha_symbol());
    let (flux, flux_d, flux_unit) = (u.flux(1.0), u.flux_decimals(2), u.flux_symbol());
    let at20 = temp_q(20.0, 0).render(u);
    let mut rows = vec![spread(&format!("α(Br), {alpha_unit}"), &s.alpha, per, 4)];
    if let Some(l) = &s.loss {
        rows.push(spread("irreversible loss, %", l, 1.0, 3));
    }
    rows.push(spread(
        &format!("B at {at20}, {flux_unit}"),
        &s.b20,
        flux,
        flux_d,
    ));
    page.table(&["", "mean", "sd", "median", "MAD"], &rows)
        .h2("Magnets, ranked by room-temperature flux");
    let mut t = format!("<table><tr><th>id</th><th>grade</th><th>α {alpha_unit}</th><th>U95</th><th>loss %</th><th>U95</th><th>B at {at20}, {flux_unit}</th><th>verdict</th><th>outlier</th></tr>");
    for r in &s.rows {
        t.push_str(&format!(
            "<tr><td>{}</td><td>{}</td><td>{:+.4}</td><td>{:.4}</td><td>{}</td><td>{}</td><td>{:.flux_d$}</td><td>{}</td><td class=\"o\">{}</td></tr>",
            esc(&r.id),
            esc(&r.grade),
            r.alpha * per,
            r.alpha_u95 * per,
            r.loss_pct.map(|x| format!("{x:.3}")).unwrap_or_default(),
            r.loss_u95_pct.map(|x| format!("{x:.3}")).unwrap_or_default(),
            r.b20_mt * flux,
            r.verdict,
            esc(&r.outlier.join("; "))
        ));
    }
    page.raw(&t)
        .raw("</table>")
        .figure("lot", figure.svg_element())
        .p("Outliers: modified z-score |M| > 3.5 (Iglewicz & Hoaglin).");
    page.finish()
}
