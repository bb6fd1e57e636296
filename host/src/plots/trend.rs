//! A supplier's control chart: α, Br and loss against the date of each run, with the centre
//! line and the limits of the baseline, and the runs beyond them marked.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style::{
    draw_keys, tick, tickable, with_key_strip, DrawResult, Key, COOLING, FIT, HEATING, REFERENCE,
};
use crate::history::trend::{Panel, TrendChart};

const DAY_S: f64 = 86_400.0;

/// The chart: one panel per quantity, stacked, sharing the date axis.
pub fn control_chart<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: &TrendChart,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let title = format!(
        "{}{}: {} runs; limits from the first {} of each",
        c.supplier,
        c.grade
            .as_deref()
            .map(|g| format!(", grade {g}"))
            .unwrap_or_default(),
        c.runs,
        c.panels
            .iter()
            .filter_map(|p| p.limits.map(|l| l.baseline))
            .max()
            .unwrap_or(0)
    );
    let root = root.titled(&title, ("sans-serif", 22)).map_err(e)?;
    let (t0, t1) = c
        .panels
        .iter()
        .flat_map(|p| p.points.iter().map(|q| q.0))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), t| {
            (a.min(t), b.max(t))
        });
    let pad = ((t1 - t0) * 0.03).max(DAY_S);
    let x = tickable((t0 - pad) / DAY_S..(t1 + pad) / DAY_S);
    let areas = root.split_evenly((c.panels.len().max(1), 1));
    for (i, (area, panel)) in areas.iter().zip(&c.panels).enumerate() {
        draw_panel(area, panel, x.clone(), i + 1 == c.panels.len())?;
    }
    Ok(())
}

fn y_range(p: &Panel) -> std::ops::Range<f64> {
    let mut vals: Vec<f64> = p.points.iter().map(|q| q.1).collect();
    if let Some(l) = p.limits {
        vals.extend([l.lower, l.upper]);
    }
    let (lo, hi) = super::style::range(vals.into_iter());
    lo..hi
}

fn draw_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    p: &Panel,
    x: std::ops::Range<f64>,
    last: bool,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    // the key has a strip of its own at the right: it never covers a run
    let (plot, side) = with_key_strip(area);
    let mut c = ChartBuilder::on(&plot)
        .margin(8)
        .x_label_area_size(if last { 45 } else { 25 })
        .y_label_area_size(90)
        .build_cartesian_2d(x.clone(), tickable(y_range(p)))
        .map_err(e)?;
    let mut mesh = c.configure_mesh();
    // a date once per label: over a few days the labels carry the time of day as well
    let short = x.end - x.start < 3.0;
    let label = move |d: &f64| {
        let s = crate::timestamps::format_utc((d * DAY_S).max(0.0) as u64);
        if short {
            s[5..16].replace('T', " ")
        } else {
            s[..10].to_string()
        }
    };
    mesh.y_desc(&p.quantity)
        .y_label_formatter(&tick)
        .x_labels(6)
        .x_label_formatter(&label)
        .label_style(("sans-serif", 13))
        .axis_desc_style(("sans-serif", 15));
    if last {
        mesh.x_desc("date the run started (UTC)");
    }
    mesh.draw().map_err(e)?;
    let mut keys = Vec::new();
    if let Some(l) = p.limits {
        for (v, colour) in [(l.centre, FIT), (l.upper, HEATING), (l.lower, HEATING)] {
            c.draw_series(LineSeries::new(
                [(x.start, v), (x.end, v)],
                colour.stroke_width(2),
            ))
            .map_err(e)?;
        }
        keys.push(Key::Line(FIT, format!("centre {}", tick(&l.centre))));
        keys.push(Key::Line(
            HEATING,
            format!("limits {} … {}", tick(&l.lower), tick(&l.upper)),
        ));
        if let Some(end) = p.points.get(l.baseline.saturating_sub(1)) {
            let (y0, y1) = (c.y_range().start, c.y_range().end);
            let t = end.0 / DAY_S;
            c.draw_series(LineSeries::new([(t, y0), (t, y1)], REFERENCE.mix(0.5)))
                .map_err(e)?;
            keys.push(Key::Line(
                RGBColor(120, 120, 120),
                format!("end of the baseline ({} runs)", l.baseline),
            ));
        }
    } else {
        keys.push(Key::Text("no limits: fewer than 2 runs".into()));
    }
    let pts: Vec<(f64, f64)> = p.points.iter().map(|q| (q.0 / DAY_S, q.1)).collect();
    c.draw_series(LineSeries::new(pts.iter().copied(), COOLING.mix(0.4)))
        .map_err(e)?;
    c.draw_series(pts.iter().map(|&q| Circle::new(q, 3, COOLING.filled())))
        .map_err(e)?;
    keys.push(Key::Dot(COOLING, format!("run ({})", pts.len())));
    let out: Vec<(f64, f64)> = p.outside().iter().map(|q| (q.0 / DAY_S, q.1)).collect();
    if !out.is_empty() {
        c.draw_series(
            out.iter()
                .map(|&q| Cross::new(q, 7, REFERENCE.stroke_width(2))),
        )
        .map_err(e)?;
        keys.push(Key::Cross(
            REFERENCE,
            format!("beyond the limits ({})", out.len()),
        ));
    }
    draw_keys(&side, &keys, 20)
}
