//! A lot's outputs: the HTML page (counts, spread, the ranked table with outliers, the lot
//! plot), the text summary for the terminal, and the whole set a lot writes — `lot.csv`, the
//! plot, `lot.html` and, against a master sample, `master.csv`.

use std::fmt::Write as _;

use super::page::{esc, Page};
use super::tables;
use crate::lot::{LotSummary, Outlier, OutlierIn, Spread};
use crate::master::AgainstMaster;
use crate::output::Produced;
use crate::plots::{self, Figure, PlotError};
use crate::specs::GradeSpec;
use crate::units::{temp_q, DisplayUnits};

/// An outlier in words: `α (M = +3.6)`.
impl std::fmt::Display for Outlier {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let what = match self.quantity {
            OutlierIn::Alpha => "α",
            OutlierIn::Loss => "loss",
            OutlierIn::RoomFlux => "room-temperature flux",
        };
        write!(f, "{what} (M = {:+.1})", self.m)
    }
}

/// A row's outliers in words, `; ` between them (empty: none).
pub fn outliers_text(outliers: &[Outlier]) -> String {
    outliers
        .iter()
        .map(Outlier::to_string)
        .collect::<Vec<_>>()
        .join("; ")
}

/// Every output of a lot, rendered in memory: the table and page in the display units `u` (the
/// CSV files in SI-based units); `master.csv` when the lot was compared with a master sample.
pub fn lot_outputs(
    s: &LotSummary,
    spec: Option<&GradeSpec>,
    title: &str,
    master: Option<&[AgainstMaster]>,
    u: &DisplayUnits,
) -> Result<Vec<Produced>, PlotError> {
    let figure = plots::lot_figure("lot", s, spec, title, u)?;
    let mut files = vec![
        Produced::new("lot.csv", tables::lot_csv(s)),
        Produced::new("lot.html", lot_html(s, title, &figure, u)),
    ];
    files.extend(figure.files());
    if let Some(rows) = master {
        files.push(Produced::new("master.csv", tables::master_csv(rows)));
    }
    Ok(files)
}

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
            esc(&outliers_text(&r.outlier))
        ));
    }
    page.raw(&t)
        .raw("</table>")
        .figure("lot", figure.svg_element())
        .p("Outliers: modified z-score |M| > 3.5 (Iglewicz & Hoaglin).");
    page.finish()
}

/// A short text summary.
pub fn lot_text(s: &LotSummary, u: &crate::units::DisplayUnits) -> String {
    let at20 = crate::units::temp_q(20.0, 0).render(u);
    let (per, flux) = (u.per_degree(1.0), u.flux(1.0));
    let fd = u.flux_decimals(2);
    let (au, fu) = (u.alpha_symbol(), u.flux_symbol());
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{}: {} pass, {} fail, {} indeterminate",
        crate::units::count(s.rows.len() as u64, "magnet", "magnets"),
        s.passed,
        s.failed,
        s.indeterminate
    );
    let _ = writeln!(
        out,
        "α(Br):  mean {:+.4} {au}, sd {:.4}, median {:+.4}",
        s.alpha.mean * per,
        s.alpha.sd * per,
        s.alpha.median * per
    );
    if let Some(l) = s.loss {
        let _ = writeln!(
            out,
            "loss:   mean {} %, sd {:.3}, median {}",
            crate::units::fixed(l.mean, 3),
            l.sd,
            crate::units::fixed(l.median, 3)
        );
    }
    let _ = writeln!(
        out,
        "B at {at20}:  mean {:.fd$} {fu}, sd {:.fd$}, median {:.fd$}",
        s.b20.mean * flux,
        s.b20.sd * flux,
        s.b20.median * flux
    );
    let _ = writeln!(
        out,
        "\n{:<18} {:>10} {:>9} {:>8} {:>14}  outlier",
        "id",
        format!("α {au}"),
        "loss %",
        format!("B {fu}"),
        "verdict"
    );
    for r in &s.rows {
        let _ = writeln!(
            out,
            "{:<18} {:>+10.4} {:>9} {:>8.fd$} {:>14}  {}",
            r.id,
            r.alpha * per,
            r.loss_pct
                .map(|x| crate::units::fixed(x, 3))
                .unwrap_or_default(),
            r.b20_mt * flux,
            r.verdict.word(),
            outliers_text(&r.outlier)
        );
    }
    out
}
