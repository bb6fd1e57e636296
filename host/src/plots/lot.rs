//! The lot plot: α per magnet with its U95 and the spec limits, the irreversible loss per
//! magnet against the heat-damage threshold, the counts in words, and the room-temperature
//! flux ranked as deviation from the lot's median.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style::{tickable, Chart, DrawResult, COOLING, HEATING};
use crate::analysis::judge::HEAT_DAMAGE_PCT;
use crate::lot::LotSummary;
use crate::specs::GradeSpec;
use crate::units::{temp_q, DisplayUnits, Kind, Qty};

/// A panel's width for ids, px, and the width a character of a label takes.
const PANEL_PX: usize = 440;
const CHAR_PX: usize = 7;

/// Whether the ids fit whole under their slots; else the slots are numbered and the ids
/// listed beside (never cut short).
fn ids_fit(s: &LotSummary) -> bool {
    let longest = s
        .rows
        .iter()
        .map(|r| r.id.chars().count())
        .max()
        .unwrap_or(0);
    s.rows.len() * (longest + 2) * CHAR_PX <= PANEL_PX
}

/// The magnet's id (or its number, when the ids do not fit) under each integer x.
fn id_labeller(s: &LotSummary) -> impl Fn(&f64) -> String {
    let whole = ids_fit(s);
    let ids: Vec<String> = s
        .rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            if whole {
                r.id.clone()
            } else {
                (i + 1).to_string()
            }
        })
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
        .x_label_area_size(45)
        .y_label_area_size(80)
        .build_cartesian_2d(-0.5..(n as f64 - 0.5), tickable(y))
        .map_err(e)?;
    c.configure_mesh()
        .x_labels(n.min(40) * 2 + 1)
        .x_label_formatter(id_of)
        .y_label_formatter(&super::style::tick)
        .label_style(("sans-serif", 14))
        .x_label_style(("sans-serif", 12))
        .disable_x_mesh()
        .x_desc(axes.x_desc)
        .y_desc(axes.y_desc)
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
    u: &DisplayUnits,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let root = root.titled(title, ("sans-serif", 20)).map_err(e)?;
    let halves = root.split_evenly((2, 2));
    alpha_panel(&halves[0], s, spec, u)?;
    loss_panel(&halves[2], s)?;
    counts_panel(&halves[3], s, u)?;
    flux_panel(&halves[1], s, u)?;
    root.present().map_err(e)
}

fn alpha_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &LotSummary,
    spec: Option<&GradeSpec>,
    u: &DisplayUnits,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let n = s.rows.len();
    let id_of = id_labeller(s);
    // α per magnet with its U95 and the spec limits, per displayed degree
    let a = |v: f64| u.per_degree(v);
    let limits = spec.map(|g| [a(g.alpha_min), a(g.alpha_max)]);
    let mut lo = s
        .rows
        .iter()
        .map(|r| a(r.alpha - r.alpha_u95))
        .fold(f64::INFINITY, f64::min);
    let mut hi = s
        .rows
        .iter()
        .map(|r| a(r.alpha + r.alpha_u95))
        .fold(f64::NEG_INFINITY, f64::max);
    if let Some([min, max]) = limits {
        lo = lo.min(min);
        hi = hi.max(max);
    }
    let pad = (hi - lo) * 0.08 + 1e-4;
    let caption = match spec {
        Some(g) => format!("α(Br) with U95 bars; red: {} limits", g.grade),
        None => "α(Br) with U95 bars".to_string(),
    };
    let axes = Axes {
        caption: &caption,
        caption_size: 18,
        x_desc: "magnet (ranked by room-temperature flux)",
        y_desc: &format!("α(Br), {}", u.alpha_symbol()),
    };
    let mut c = magnet_chart(area, n, (lo - pad)..(hi + pad), &axes, &id_of)?;
    for (i, r) in s.rows.iter().enumerate() {
        let x = i as f64;
        let col = if r.outlier.is_empty() {
            COOLING
        } else {
            HEATING
        };
        u95_bar(&mut c, x, a(r.alpha), a(r.alpha_u95), col)?;
    }
    if let Some(limits) = limits {
        // the limits are labelled in the caption, so no legend covers the points
        for v in limits {
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
    let losses: Vec<(usize, f64, f64, bool)> = s
        .rows
        .iter()
        .enumerate()
        .filter_map(|(i, r)| {
            let l = r.loss_pct?;
            Some((i, l, r.loss_u95_pct.unwrap_or(0.0), r.heat_damaged))
        })
        .collect();
    let lmax = losses.iter().map(|l| l.1 + l.2).fold(0.5f64, f64::max) * 1.15;
    let lmin = losses.iter().map(|l| l.1 - l.2).fold(-0.1f64, f64::min) * 1.15;
    // short enough for its panel: the whole rule is in the report's notes
    let caption = format!("Loss ± U95; red: heat damage (loss − U95 > {HEAT_DAMAGE_PCT} %)");
    let axes = Axes {
        caption: &caption,
        caption_size: 18,
        x_desc: "magnet",
        y_desc: "loss, %",
    };
    let mut c = magnet_chart(area, n, lmin..lmax, &axes, &id_of)?;
    for (i, l, u, damaged) in &losses {
        let x = *i as f64;
        // red exactly when the verdict says heat damage
        let col = if *damaged { HEATING } else { COOLING };
        u95_bar(&mut c, x, *l, *u, col)?;
    }
    let thr = HEAT_DAMAGE_PCT;
    c.draw_series(LineSeries::new(
        [(-0.5, thr), (n as f64 - 0.5, thr)],
        RED.stroke_width(2),
    ))
    .map_err(e)?;
    Ok(())
}

/// A value with its U95 as a bar with end caps (visible even when short) and a dot.
fn u95_bar<DB: DrawingBackend>(
    c: &mut Chart<'_, DB>,
    x: f64,
    v: f64,
    u95: f64,
    col: RGBColor,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let (lo, hi) = (v - u95, v + u95);
    c.draw_series([
        PathElement::new(vec![(x, lo), (x, hi)], col.stroke_width(2)),
        PathElement::new(vec![(x - 0.12, lo), (x + 0.12, lo)], col.stroke_width(2)),
        PathElement::new(vec![(x - 0.12, hi), (x + 0.12, hi)], col.stroke_width(2)),
    ])
    .map_err(e)?;
    c.draw_series([Circle::new((x, v), 4, col.filled())])
        .map_err(e)?;
    Ok(())
}

fn counts_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &LotSummary,
    u: &DisplayUnits,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    // the counts, in words
    let text_style = ("sans-serif", 18).into_font();
    let lines = [
        format!(
            "{}: {} pass, {} fail, {} indeterminate",
            crate::units::count(s.rows.len() as u64, "magnet", "magnets"),
            s.passed,
            s.failed,
            s.indeterminate
        ),
        format!(
            "α(Br): mean {}, sd {:.4}",
            Qty::one(Kind::Alpha, s.alpha.mean, 4).signed().render(u),
            u.per_degree(s.alpha.sd)
        ),
        match s.loss {
            Some(l) => format!("loss: mean {:.3} %, sd {:.3}", l.mean, l.sd),
            None => "loss: not measured".into(),
        },
        format!(
            "B at {}: median {}, sd {:.d$}",
            temp_q(20.0, 0).render(u),
            Qty::one(Kind::Flux, s.b20.median, 2).render(u),
            u.flux(s.b20.sd),
            d = u.flux_decimals(2)
        ),
        {
            let ids: Vec<&str> = s
                .rows
                .iter()
                .filter(|r| !r.outlier.is_empty())
                .map(|r| r.id.as_str())
                .collect();
            if ids.is_empty() {
                "outliers: none".to_string()
            } else {
                format!("outliers: {}", ids.join(", "))
            }
        },
    ];
    for (k, line) in lines.iter().enumerate() {
        area.draw(&Text::new(
            line.clone(),
            (30, 30 + 30 * k as i32),
            text_style.clone(),
        ))
        .map_err(e)?;
    }
    if !ids_fit(s) {
        // the slots are numbered: which magnet each number is, as many as fit (all in lot.csv)
        let small = ("sans-serif", 13).into_font();
        let y0 = 30 + 30 * lines.len() as i32;
        let per_col = ((area.dim_in_pixel().1 as i32 - y0 - 10) / 16).max(1) as usize;
        for (i, r) in s.rows.iter().enumerate().take(per_col * 3) {
            let (col, row) = (i / per_col, i % per_col);
            area.draw(&Text::new(
                format!("{} {}", i + 1, r.id),
                (30 + 170 * col as i32, y0 + 16 * row as i32),
                small.clone(),
            ))
            .map_err(e)?;
        }
    }
    Ok(())
}

fn flux_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    s: &LotSummary,
    u: &DisplayUnits,
) -> DrawResult {
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
    let at20 = temp_q(20.0, 0).render(u);
    let caption = format!(
        "Flux at {at20} vs the median, {}",
        Qty::one(Kind::Flux, med, 2).render(u)
    );
    let axes = Axes {
        caption: &caption,
        caption_size: 20,
        x_desc: "magnet",
        y_desc: &format!("B at {at20} − median, %"),
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
