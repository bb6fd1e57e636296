//! The lot plot: α per magnet with its U95 and the spec limits, the irreversible loss per
//! magnet against the heat-damage threshold, the counts in words, and the room-temperature
//! flux ranked as deviation from the lot's median.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style::{legend, tickable, Chart, DrawResult, COOLING, HEATING};
use crate::analysis::judge::HEAT_DAMAGE_PCT;
use crate::lot::LotSummary;
use crate::specs::GradeSpec;

/// Ids are shown whole up to this many characters.
const ID_CHARS: usize = 12;

/// The magnet id under each integer x.
fn id_labeller(s: &LotSummary) -> impl Fn(&f64) -> String {
    let ids: Vec<String> = s
        .rows
        .iter()
        .map(|r| r.id.chars().take(ID_CHARS).collect())
        .collect();
    move |x: &f64| {
        let i = x.round();
        if (x - i).abs() < 1e-6 && i >= 0.0 && (i as usize) < ids.len() {
            ids[i as usize].clone()
        } else {
            String::new()
        }
    }
}

/// Titles of one per-magnet panel.
struct Axes<'a> {
    caption: &'a str,
    caption_size: u32,
    x_desc: &'a str,
    y_desc: &'a str,
}

/// A panel with one slot per magnet along x (labelled by id) and `y` up the side.
fn magnet_chart<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, Shift>,
    n: usize,
    y: std::ops::Range<f64>,
    axes: &Axes,
    id_of: &dyn Fn(&f64) -> String,
) -> Result<Chart<'a, DB>, String> {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let mut c = ChartBuilder::on(area)
        .caption(axes.caption, ("sans-serif", axes.caption_size))
        .margin(15)
        .x_label_area_size(40)
        .y_label_area_size(80)
        .build_cartesian_2d(-0.5..(n as f64 - 0.5), tickable(y))
        .map_err(e)?;
    c.configure_mesh()
        .x_labels(n.min(24) * 2 + 1)
        .x_label_formatter(id_of)
        .disable_x_mesh()
        .x_desc(axes.x_desc)
        .y_desc(axes.y_desc)
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16))
        .draw()
        .map_err(e)?;
    Ok(c)
}

/// The four panels of a lot.
pub fn lot_alpha<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &LotSummary,
    spec: Option<&GradeSpec>,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let halves = root.split_evenly((2, 2));
    alpha_panel(&halves[0], s, spec, title)?;
    loss_panel(&halves[2], s)?;
    counts_panel(&halves[3], s)?;
    flux_panel(&halves[1], s)?;
    root.present().map_err(e)
}

fn alpha_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &LotSummary,
    spec: Option<&GradeSpec>,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let n = s.rows.len();
    let id_of = id_labeller(s);
    // α per magnet with its U95 and the spec limits
    let mut lo = s
        .rows
        .iter()
        .map(|r| r.alpha - r.alpha_u95)
        .fold(f64::INFINITY, f64::min);
    let mut hi = s
        .rows
        .iter()
        .map(|r| r.alpha + r.alpha_u95)
        .fold(f64::NEG_INFINITY, f64::max);
    if let Some(g) = spec {
        lo = lo.min(g.alpha_min);
        hi = hi.max(g.alpha_max);
    }
    let pad = (hi - lo) * 0.08 + 1e-4;
    let caption = match spec {
        Some(g) => format!("α(Br) per magnet, {} limits in red — {title}", g.grade),
        None => format!("α(Br) per magnet — {title}"),
    };
    let axes = Axes {
        caption: &caption,
        caption_size: 18,
        x_desc: "magnet (ranked by room-temperature flux)",
        y_desc: "α(Br), %/°C",
    };
    let mut c = magnet_chart(area, n, (lo - pad)..(hi + pad), &axes, &id_of)?;
    for (i, r) in s.rows.iter().enumerate() {
        let x = i as f64;
        let col = if r.outlier.is_empty() {
            COOLING
        } else {
            HEATING
        };
        c.draw_series([PathElement::new(
            vec![(x, r.alpha - r.alpha_u95), (x, r.alpha + r.alpha_u95)],
            col.stroke_width(2),
        )])
        .map_err(e)?;
        c.draw_series([Circle::new((x, r.alpha), 5, col.filled())])
            .map_err(e)?;
    }
    if let Some(g) = spec {
        // the limits are labelled in the caption, so no legend covers the points
        for v in [g.alpha_min, g.alpha_max] {
            c.draw_series(LineSeries::new(
                [(-0.5, v), (n as f64 - 0.5, v)],
                RED.stroke_width(2),
            ))
            .map_err(e)?;
        }
    }
    Ok(())
}

fn loss_panel<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, s: &LotSummary) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let n = s.rows.len();
    let id_of = id_labeller(s);
    // irreversible loss per magnet with its U95, against the heat-damage threshold
    let losses: Vec<(usize, f64, f64)> = s
        .rows
        .iter()
        .enumerate()
        .filter_map(|(i, r)| Some((i, r.loss_pct?, r.loss_u95_pct.unwrap_or(0.0))))
        .collect();
    let lmax = losses.iter().map(|l| l.1 + l.2).fold(0.5f64, f64::max) * 1.15;
    let lmin = losses.iter().map(|l| l.1 - l.2).fold(-0.1f64, f64::min) * 1.15;
    let axes = Axes {
        caption: "Irreversible loss per magnet",
        caption_size: 20,
        x_desc: "magnet",
        y_desc: "loss, %",
    };
    let mut c = magnet_chart(area, n, lmin..lmax, &axes, &id_of)?;
    for (i, l, u) in &losses {
        let x = *i as f64;
        let col = if *l > u.max(HEAT_DAMAGE_PCT) {
            HEATING
        } else {
            COOLING
        };
        c.draw_series([PathElement::new(
            vec![(x, l - u), (x, l + u)],
            col.stroke_width(2),
        )])
        .map_err(e)?;
        c.draw_series([Circle::new((x, *l), 5, col.filled())])
            .map_err(e)?;
    }
    let thr = HEAT_DAMAGE_PCT;
    c.draw_series(LineSeries::new(
        [(-0.5, thr), (n as f64 - 0.5, thr)],
        RED.stroke_width(2),
    ))
    .map_err(e)?
    .label(format!("heat damage above {thr} % (and its U95)"))
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], RED));
    legend(&mut c, 13)?;
    Ok(())
}

fn counts_panel<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, s: &LotSummary) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    // the counts, in words
    let text_style = ("sans-serif", 18).into_font();
    let lines = [
        format!(
            "{} magnets: {} pass, {} fail, {} indeterminate",
            s.rows.len(),
            s.passed,
            s.failed,
            s.indeterminate
        ),
        format!(
            "α(Br): mean {:+.4} %/°C, sd {:.4}",
            s.alpha.mean, s.alpha.sd
        ),
        match s.loss {
            Some(l) => format!("loss: mean {:.3} %, sd {:.3}", l.mean, l.sd),
            None => "loss: not measured".into(),
        },
        format!(
            "B at 20 °C: median {:.2} mT, sd {:.2}",
            s.b20.median, s.b20.sd
        ),
        format!(
            "outliers: {}",
            s.rows
                .iter()
                .filter(|r| !r.outlier.is_empty())
                .map(|r| r.id.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    ];
    for (k, line) in lines.iter().enumerate() {
        area.draw(&Text::new(
            line.clone(),
            (30, 40 + 36 * k as i32),
            text_style.clone(),
        ))
        .map_err(e)?;
    }
    Ok(())
}

fn flux_panel<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>, s: &LotSummary) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let n = s.rows.len();
    let id_of = id_labeller(s);
    // room-temperature flux, ranked: deviation from the set's median, at least ±1 % shown
    let med = s.b20.median;
    let dev: Vec<f64> = s
        .rows
        .iter()
        .map(|r| (r.b20_mt - med) / med * 100.0)
        .collect();
    let lim = dev.iter().map(|d| d.abs()).fold(1.0, f64::max) * 1.15;
    let caption = format!("Flux at 20 °C vs the median, {med:.2} mT");
    let axes = Axes {
        caption: &caption,
        caption_size: 20,
        x_desc: "magnet",
        y_desc: "B at 20 °C − median, %",
    };
    let mut c = magnet_chart(area, n, -lim..lim, &axes, &id_of)?;
    c.draw_series(s.rows.iter().zip(&dev).enumerate().map(|(i, (r, d))| {
        let col = if r.outlier.is_empty() {
            COOLING
        } else {
            HEATING
        };
        Rectangle::new(
            [(i as f64 - 0.35, 0.0), (i as f64 + 0.35, *d)],
            col.filled(),
        )
    }))
    .map_err(e)?;
    c.draw_series(LineSeries::new(
        [(-0.5, 0.0), (n as f64 - 0.5, 0.0)],
        BLACK.stroke_width(1),
    ))
    .map_err(e)?;
    Ok(())
}
