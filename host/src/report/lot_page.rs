//! The HTML page of a lot: counts, spread, the ranked table with outliers, and the lot plot.

use super::page::{esc, Page};
use crate::lot::{LotSummary, Spread};
use crate::plots::Figure;

/// The page.
pub fn lot_html(s: &LotSummary, title: &str, figure: &Figure) -> String {
    let mut page = Page::new("lot", title);
    page.p(&format!(
        "{} pass, {} fail, {} indeterminate.",
        s.passed, s.failed, s.indeterminate
    ));
    let spread = |name: &str, x: &Spread, p: usize| {
        vec![
            name.to_string(),
            format!("{:.p$}", x.mean),
            format!("{:.p$}", x.sd),
            format!("{:.p$}", x.median),
            format!("{:.p$}", x.mad),
        ]
    };
    let mut rows = vec![spread("α(Br), %/°C", &s.alpha, 4)];
    if let Some(l) = &s.loss {
        rows.push(spread("irreversible loss, %", l, 3));
    }
    rows.push(spread("B at 20 °C, mT", &s.b20, 2));
    page.table(&["", "mean", "sd", "median", "MAD"], &rows)
        .h2("Magnets, ranked by room-temperature flux");
    let mut t = String::from("<table><tr><th>id</th><th>grade</th><th>α %/°C</th><th>U95</th><th>loss %</th><th>U95</th><th>B20 mT</th><th>verdict</th><th>outlier</th></tr>");
    for r in &s.rows {
        t.push_str(&format!(
            "<tr><td>{}</td><td>{}</td><td>{:+.4}</td><td>{:.4}</td><td>{}</td><td>{}</td><td>{:.2}</td><td>{}</td><td class=\"o\">{}</td></tr>",
            esc(&r.id),
            esc(&r.grade),
            r.alpha,
            r.alpha_u95,
            r.loss_pct.map(|x| format!("{x:.3}")).unwrap_or_default(),
            r.loss_u95_pct.map(|x| format!("{x:.3}")).unwrap_or_default(),
            r.b20_mt,
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
