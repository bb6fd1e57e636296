//! The run's analysis plots: flux density against the lag-corrected magnet temperature with
//! both branches, the reference readings and the fit drawn over what it was fitted to; and the
//! fit's residuals, every point when there are few, their density when there are many.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::decimate::minmax_indices;
use super::style::{
    draw_keys, range, tick, tickable, with_key_strip, DrawResult, Key, COOLING, FIT, HEATING,
    REFERENCE,
};
use crate::analysis::{Analysis, Traces};
use crate::input::dataset::Series;
use crate::units::{self, DisplayUnits, Kind, Qty};

/// Points of each branch drawn (each bin's extremes).
const BRANCH_BINS: usize = 1500;

/// What the fit line is drawn over (°C, mT), and what it says in `u`: after a loss the curve
/// was fitted to the cooling branch, whose level is the flux left after the loss, so it is
/// drawn there.
pub fn fit_line(a: &Analysis, u: &DisplayUnits) -> (Vec<(f64, f64)>, String) {
    let (f0, f1) = (a.alpha.range_c[0], a.alpha.range_c[1]);
    let after_loss = a.alpha.method_code == crate::analysis::result::FitMethod::CoolingBranch;
    let level = if after_loss {
        1.0 - a.loss_fraction()
    } else {
        1.0
    };
    let pts = (0..=400)
        .map(|k| {
            let t = f0 + (f1 - f0) * f64::from(k) / 400.0;
            (t, a.fitted_mt(t) * level)
        })
        .collect();
    let what = if after_loss {
        "fit to the cooling branch"
    } else {
        "fit"
    };
    (
        pts,
        format!(
            "{what}: α = {} over {}",
            units::alpha_with_u95(u, a.alpha.pct_per_c, a.alpha.u95_pct_per_c),
            Qty::range(Kind::Temp, f0, f1, 0).render(u)
        ),
    )
}

/// B against the lag-corrected magnet temperature: branches, references, fit.
pub fn flux_vs_temp<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    a: &Analysis,
    t: &Traces,
    title: &str,
    u: &DisplayUnits,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    // drawn in the display units: temperature across, flux up
    let at = |t: f64, b: f64| (u.temp(t), u.flux(b));
    root.fill(&WHITE).map_err(e)?;
    let root = root
        .titled(
            &format!("Flux density against magnet temperature — {title}"),
            ("sans-serif", 20),
        )
        .map_err(e)?;
    let (plot, side) = with_key_strip(&root);
    let seg = t.segments.as_ref().ok_or("no segments")?;
    let tm = &t.magnet_temp_c;
    let b = &t.flux_corrected_mt;
    let (tlo, thi) = range(tm.iter().map(|&t| u.temp(t)));
    let (blo, bhi) = range(b.iter().map(|&v| u.flux(v)));
    let mut chart = ChartBuilder::on(&plot)
        .margin(15)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(tickable(tlo..thi), tickable(blo..bhi))
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc(format!(
            "magnet temperature (lag-corrected), {}",
            u.temp_symbol()
        ))
        .y_desc(format!("flux density at the probe, {}", u.flux_symbol()))
        .x_label_formatter(&tick)
        .y_label_formatter(&tick)
        .label_style(("sans-serif", 16))
        .axis_desc_style(("sans-serif", 18))
        .draw()
        .map_err(e)?;
    // keep each bin's extremes so a stray reading stays visible however long the record
    let pts = |r: std::ops::Range<usize>| {
        minmax_indices(r, b, BRANCH_BINS)
            .into_iter()
            .map(|i| at(tm[i], b[i]))
            .collect::<Vec<_>>()
    };
    // cooling first as rings, then heating over it as dots, so where the branches coincide
    // both show; the fit last and thin
    chart
        .draw_series(
            pts(seg.cooling.clone())
                .into_iter()
                .map(|p| Circle::new(p, 3, COOLING.stroke_width(1))),
        )
        .map_err(e)?;
    chart
        .draw_series(
            pts(seg.heating.clone())
                .into_iter()
                .map(|p| Circle::new(p, 2, HEATING.filled())),
        )
        .map_err(e)?;
    let mut refs = pts(seg.before.clone());
    if let Some(after) = &seg.after {
        refs.extend(pts(after.clone()));
    }
    chart
        .draw_series(
            refs.into_iter()
                .map(|p| TriangleMarker::new(p, 5, REFERENCE.filled())),
        )
        .map_err(e)?;
    let (line, fit_label) = fit_line(a, u);
    chart
        .draw_series(LineSeries::new(
            line.into_iter().map(|(t, b)| at(t, b)),
            FIT.mix(0.9).stroke_width(2),
        ))
        .map_err(e)?;
    let loss = match a.loss.pct {
        Some(l) => format!(" (loss {:.2} %)", if l.abs() < 0.005 { 0.0 } else { l }),
        None => String::new(),
    };
    let mut keys = vec![
        Key::Dot(HEATING, "heating (dots)".into()),
        Key::Dot(COOLING, "cooling (rings under the dots)".into()),
        Key::Triangle(REFERENCE, format!("reference readings at rest{loss}")),
        Key::Line(FIT, fit_label),
    ];
    if a.alpha.method_code == crate::analysis::result::FitMethod::CoolingBranch {
        keys.push(Key::Text(
            "the heating branch is shown for context: it mixes reversible change and the loss"
                .into(),
        ));
    }
    draw_keys(&side, &keys, 30)?;
    root.present().map_err(e)
}

/// Residuals at most this many are drawn one by one; more are drawn as their density.
pub const RESIDUAL_POINTS: usize = 6000;
/// Density cells across and up.
const CELLS: (usize, usize) = (140, 70);

/// What the residual plot shows: every (temperature, residual, after the peak) when there are
/// few, or the count of points in each cell of a grid when there are many.
pub enum ResidualMarks {
    /// Each point.
    Points(Vec<(f64, f64, bool)>),
    /// Cells `[t0, t1] × [r0, r1]` with their counts (empty cells left out).
    Density(Vec<([f64; 4], usize)>),
}

/// The residuals in the fitted range and how they are drawn, with the y half-range.
pub fn residual_marks(s: &Series, a: &Analysis, t: &Traces) -> (ResidualMarks, f64) {
    let tm = &t.magnet_temp_c;
    let peak = t.segments.as_ref().map_or(usize::MAX, |g| g.peak);
    let all = t.residuals_mt(a);
    let res: Vec<(f64, f64, bool)> = (0..s.time_s.len().min(all.len()))
        .filter(|&i| {
            tm[i] >= a.alpha.range_c[0] && tm[i] <= a.alpha.range_c[1] && all[i].is_finite()
        })
        .map(|i| (tm[i], all[i], i > peak))
        .collect();
    let lim = res.iter().map(|r| r.1.abs()).fold(0.0, f64::max).max(1e-3) * 1.1;
    if res.len() <= RESIDUAL_POINTS {
        return (ResidualMarks::Points(res), lim);
    }
    let (t0, t1) = (
        a.alpha.range_c[0],
        a.alpha.range_c[1].max(a.alpha.range_c[0] + 1e-9),
    );
    let (nx, ny) = CELLS;
    let mut counts = vec![0usize; nx * ny];
    for &(t, r, _) in &res {
        let ix = (((t - t0) / (t1 - t0)) * nx as f64)
            .floor()
            .clamp(0.0, nx as f64 - 1.0) as usize;
        let iy = (((r + lim) / (2.0 * lim)) * ny as f64)
            .floor()
            .clamp(0.0, ny as f64 - 1.0) as usize;
        counts[iy * nx + ix] += 1;
    }
    let (dx, dy) = ((t1 - t0) / nx as f64, 2.0 * lim / ny as f64);
    let cells = counts
        .iter()
        .enumerate()
        .filter(|(_, &c)| c > 0)
        .map(|(k, &c)| {
            let (ix, iy) = ((k % nx) as f64, (k / nx) as f64);
            (
                [
                    t0 + ix * dx,
                    t0 + (ix + 1.0) * dx,
                    -lim + iy * dy,
                    -lim + (iy + 1.0) * dy,
                ],
                c,
            )
        })
        .collect();
    (ResidualMarks::Density(cells), lim)
}

/// The residuals of every sample in the fitted range against the fit.
pub fn residuals<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &Series,
    a: &Analysis,
    t: &Traces,
    title: &str,
    u: &DisplayUnits,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    // drawn in the display units: a residual is a flux difference, which converts as a flux
    let at = |t: f64, r: f64| (u.temp(t), u.flux(r));
    root.fill(&WHITE).map_err(e)?;
    let root = root
        .titled(&format!("Fit residuals — {title}"), ("sans-serif", 20))
        .map_err(e)?;
    let (plot, side) = with_key_strip(&root);
    let (marks, lim) = residual_marks(s, a, t);
    let lim = u.flux(lim);
    let (t0, t1) = (u.temp(a.alpha.range_c[0]), u.temp(a.alpha.range_c[1]));
    let mut chart = ChartBuilder::on(&plot)
        .margin(15)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(tickable(t0..t1), tickable(-lim..lim))
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc(format!(
            "magnet temperature (lag-corrected), {}",
            u.temp_symbol()
        ))
        .y_desc(format!("measured − fitted, {}", u.flux_symbol()))
        .x_label_formatter(&tick)
        .y_label_formatter(&tick)
        .label_style(("sans-serif", 16))
        .axis_desc_style(("sans-serif", 18))
        .draw()
        .map_err(e)?;
    let keys = match &marks {
        ResidualMarks::Points(p) => {
            chart
                .draw_series(
                    p.iter()
                        .filter(|r| r.2)
                        .map(|r| Circle::new(at(r.0, r.1), 2, COOLING.filled())),
                )
                .map_err(e)?;
            chart
                .draw_series(
                    p.iter()
                        .filter(|r| !r.2)
                        .map(|r| Circle::new(at(r.0, r.1), 2, HEATING.filled())),
                )
                .map_err(e)?;
            vec![
                Key::Dot(
                    HEATING,
                    format!("heating ({} points)", p.iter().filter(|r| !r.2).count()),
                ),
                Key::Dot(
                    COOLING,
                    format!(
                        "cooling, scaled by the loss ({})",
                        p.iter().filter(|r| r.2).count()
                    ),
                ),
            ]
        }
        ResidualMarks::Density(cells) => {
            let max = cells.iter().map(|c| c.1).max().unwrap_or(1) as f64;
            chart
                .draw_series(cells.iter().map(|([x0, x1, y0, y1], c)| {
                    // darker where more points fall (log scale: a lone point still shows)
                    let f = 0.15 + 0.85 * ((*c as f64).ln_1p() / max.ln_1p());
                    Rectangle::new([at(*x0, *y0), at(*x1, *y1)], COOLING.mix(f).filled())
                }))
                .map_err(e)?;
            let n: usize = cells.iter().map(|c| c.1).sum();
            vec![Key::Shade(
                COOLING,
                format!("{n} points as their density: darker where more fall (log scale); both branches, cooling scaled by the loss"),
            )]
        }
    };
    chart
        .draw_series(LineSeries::new([(t0, 0.0), (t1, 0.0)], BLACK))
        .map_err(e)?;
    let mut keys = keys;
    keys.push(Key::Line(BLACK, "zero: the fit".into()));
    draw_keys(&side, &keys, 30)?;
    root.present().map_err(e)
}
