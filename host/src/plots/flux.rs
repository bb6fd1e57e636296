//! The run's analysis plots: flux density against the lag-corrected magnet temperature with
//! the branches, the reference readings and the fit; and the fit's residuals.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::decimate::minmax_indices;
use super::style::{legend, range, tickable, DrawResult, COOLING, FIT, HEATING, REFERENCE};
use crate::analysis::dataset::Series;
use crate::analysis::Analysis;

/// Points of each branch drawn (each bin's extremes).
const BRANCH_BINS: usize = 1500;
/// Residual points drawn.
const RESIDUAL_BINS: usize = 3000;

/// B against the lag-corrected magnet temperature: branches, references, fit.
pub fn flux_vs_temp<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    a: &Analysis,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let seg = a.traces.segments.as_ref().ok_or("no segments")?;
    let tm = &a.traces.magnet_temp_c;
    let b = &a.traces.flux_corrected_mt;
    let (tlo, thi) = range(tm.iter().copied());
    let (blo, bhi) = range(b.iter().copied());
    let mut chart = ChartBuilder::on(root)
        .caption(
            format!("Flux density against magnet temperature — {title}"),
            ("sans-serif", 24),
        )
        .margin(20)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(tlo..thi, blo..bhi)
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc("magnet temperature (lag-corrected), °C")
        .y_desc("flux density at the probe, mT")
        .label_style(("sans-serif", 16))
        .axis_desc_style(("sans-serif", 18))
        .draw()
        .map_err(e)?;
    // keep each bin's extremes so a stray reading stays visible however long the record
    let pts = |r: std::ops::Range<usize>| {
        minmax_indices(r, b, BRANCH_BINS)
            .into_iter()
            .map(|i| (tm[i], b[i]))
            .collect::<Vec<_>>()
    };
    chart
        .draw_series(
            pts(seg.heating.clone())
                .into_iter()
                .map(|p| Circle::new(p, 2, HEATING.filled())),
        )
        .map_err(e)?
        .label("heating")
        .legend(|(x, y)| Circle::new((x + 10, y), 4, HEATING.filled()));
    chart
        .draw_series(
            pts(seg.cooling.clone())
                .into_iter()
                .map(|p| Circle::new(p, 2, COOLING.filled())),
        )
        .map_err(e)?
        .label("cooling")
        .legend(|(x, y)| Circle::new((x + 10, y), 4, COOLING.filled()));
    let mut refs = pts(seg.before.clone());
    if let Some(after) = &seg.after {
        refs.extend(pts(after.clone()));
    }
    chart
        .draw_series(
            refs.into_iter()
                .map(|p| TriangleMarker::new(p, 5, REFERENCE.filled())),
        )
        .map_err(e)?
        .label(match a.irreversible_loss_pct {
            Some(l) => format!(
                "reference readings (loss {:.2} %)",
                if l.abs() < 0.005 { 0.0 } else { l }
            ),
            None => "reference readings".into(),
        })
        .legend(|(x, y)| TriangleMarker::new((x + 10, y), 5, REFERENCE.filled()));
    let (f0, f1) = (a.fit_range_c[0], a.fit_range_c[1]);
    chart
        .draw_series(LineSeries::new(
            (0..=200).map(|k| {
                let t = f0 + (f1 - f0) * f64::from(k) / 200.0;
                (t, a.fitted_mt(t))
            }),
            FIT.stroke_width(3),
        ))
        .map_err(e)?
        .label(format!(
            "fit: α = {:+.4} ± {:.4} %/°C (k = 2), {:.0}…{:.0} °C",
            a.alpha_pct_per_c, a.alpha_u95_pct_per_c, f0, f1
        ))
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], FIT.stroke_width(3)));
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .label_font(("sans-serif", 16))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(e)?;
    root.present().map_err(e)
}

/// The residuals of every sample in the fitted range against the fit.
pub fn residuals<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &Series,
    a: &Analysis,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let tm = &a.traces.magnet_temp_c;
    let seg = a.traces.segments.as_ref().ok_or("no segments")?;
    let all = a.residuals_mt();
    let res: Vec<(f64, f64, bool)> = minmax_indices(0..s.time_s.len(), &all, RESIDUAL_BINS)
        .into_iter()
        .filter(|&i| tm[i] >= a.fit_range_c[0] && tm[i] <= a.fit_range_c[1])
        .map(|i| (tm[i], all[i], i > seg.peak))
        .collect();
    let (tlo, thi) = range(res.iter().map(|r| r.0));
    let lim = res.iter().map(|r| r.1.abs()).fold(0.0, f64::max).max(1e-3) * 1.1;
    let mut chart = ChartBuilder::on(root)
        .caption(format!("Fit residuals — {title}"), ("sans-serif", 24))
        .margin(20)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(tlo..thi, tickable(-lim..lim))
        .map_err(e)?;
    chart
        .configure_mesh()
        .x_desc("magnet temperature (lag-corrected), °C")
        .y_desc("measured − fitted, mT")
        .label_style(("sans-serif", 16))
        .axis_desc_style(("sans-serif", 18))
        .draw()
        .map_err(e)?;
    chart
        .draw_series(
            res.iter()
                .filter(|r| !r.2)
                .map(|r| Circle::new((r.0, r.1), 2, HEATING.filled())),
        )
        .map_err(e)?
        .label("heating")
        .legend(|(x, y)| Circle::new((x + 10, y), 4, HEATING.filled()));
    chart
        .draw_series(
            res.iter()
                .filter(|r| r.2)
                .map(|r| Circle::new((r.0, r.1), 2, COOLING.filled())),
        )
        .map_err(e)?
        .label("cooling (scaled by the loss)")
        .legend(|(x, y)| Circle::new((x + 10, y), 4, COOLING.filled()));
    chart
        .draw_series(LineSeries::new([(tlo, 0.0), (thi, 0.0)], BLACK))
        .map_err(e)?;
    legend(&mut chart, 16)?;
    root.present().map_err(e)
}
