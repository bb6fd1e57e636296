//! The time series of a run: temperatures with the setpoint, the flux, and the heater duty,
//! with faults (red) and gaps (orange) marked.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::decimate::decimate_minmax;
use super::style::{
    every, legend, range, time_panel, Chart, DrawResult, COOLING, DUTY, FIT, GAP, HEATING,
    REFERENCE,
};
use crate::analysis::dataset::Series;

/// Points per trace drawn (each bin's extremes).
const BINS: usize = 1500;
/// A step longer than this many sample periods is a gap.
const GAP_PERIODS: f64 = 3.0;

/// What the three panels share: the time axis and the marks.
struct Axis<'s> {
    t_min: Vec<f64>,
    x: std::ops::Range<f64>,
    faults: Vec<(f64, &'s str)>,
    gaps: Vec<f64>,
}

impl<'s> Axis<'s> {
    fn new(s: &'s Series) -> Axis<'s> {
        let t0 = s.time_s[0];
        let t_min: Vec<f64> = s.time_s.iter().map(|t| (t - t0) / 60.0).collect();
        let x1 = t_min.last().copied().unwrap_or(1.0).max(1e-3);
        let period = if s.time_s.len() > 1 {
            (s.time_s[s.time_s.len() - 1] - t0) / (s.time_s.len() - 1) as f64
        } else {
            1.0
        };
        Axis {
            faults: s
                .faults
                .iter()
                .map(|(t, w)| ((t - t0) / 60.0, w.as_str()))
                .collect(),
            gaps: s
                .time_s
                .windows(2)
                .filter(|w| w[1] - w[0] > GAP_PERIODS * period)
                .map(|w| (w[0] - t0) / 60.0)
                .collect(),
            t_min,
            x: 0.0..x1,
        }
    }

    /// Vertical marks at `xs` across `lo..hi`.
    fn marks<DB: DrawingBackend>(
        c: &mut Chart<'_, DB>,
        xs: impl Iterator<Item = f64>,
        (lo, hi): (f64, f64),
        style: ShapeStyle,
    ) -> DrawResult {
        c.draw_series(xs.map(|x| PathElement::new(vec![(x, lo), (x, hi)], style)))
            .map_err(|e| e.to_string())?;
        Ok(())
    }
}

/// The time series. `magnet_c` is the lag-corrected magnet temperature when an analysis has it.
pub fn draw_timeline<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &Series,
    magnet_c: Option<&[f64]>,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let root = root
        .titled(&format!("Time series — {title}"), ("sans-serif", 24))
        .map_err(e)?;
    let panels = root.split_evenly((3, 1));
    let axis = Axis::new(s);
    temperature_panel(&panels[0], &axis, s, magnet_c)?;
    flux_panel(&panels[1], &axis, s)?;
    duty_panel(&panels[2], &axis, s)?;
    root.present().map_err(e)
}

fn line<DB: DrawingBackend>(
    c: &mut Chart<'_, DB>,
    axis: &Axis,
    y: &[f64],
    color: RGBColor,
    width: u32,
    label: Option<&str>,
) -> DrawResult {
    let series = c
        .draw_series(LineSeries::new(
            decimate_minmax(&axis.t_min, y, BINS),
            color.stroke_width(width),
        ))
        .map_err(|e| e.to_string())?;
    if let Some(l) = label {
        series
            .label(l)
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], color));
    }
    Ok(())
}

fn temperature_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    axis: &Axis,
    s: &Series,
    magnet_c: Option<&[f64]>,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let (lo, hi) = range(s.temp_c.iter().copied());
    let mut c = time_panel(area, axis.x.clone(), lo..hi, "temperature, °C", None)?;
    line(&mut c, axis, &s.temp_c, HEATING, 2, Some("thermocouple"))?;
    if let Some(m) = magnet_c {
        line(&mut c, axis, m, COOLING, 2, Some("magnet (lag-corrected)"))?;
    }
    if let Some(p) = &s.probe_c {
        line(&mut c, axis, p, FIT, 2, Some("Hall probe"))?;
    }
    if let Some(sp) = &s.setpoint_c {
        // a step function with gaps while the heater is off: one line per stretch
        let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
        for (i, v) in sp.iter().enumerate().step_by(every(sp.len(), 3000)) {
            if v.is_nan() {
                if runs.last().is_some_and(|r| !r.is_empty()) {
                    runs.push(Vec::new());
                }
            } else if let Some(r) = runs.last_mut() {
                r.push((axis.t_min[i], *v));
            }
        }
        let mut first = true;
        for r in runs.into_iter().filter(|r| r.len() > 1) {
            let series = c
                .draw_series(LineSeries::new(r, BLACK.stroke_width(1)))
                .map_err(e)?;
            if first {
                series
                    .label("setpoint")
                    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK));
                first = false;
            }
        }
    }
    for (x, what) in &axis.faults {
        c.draw_series([PathElement::new(
            vec![(*x, lo), (*x, hi)],
            RED.stroke_width(2),
        )])
        .map_err(e)?
        .label(format!("fault: {what}"))
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], RED));
    }
    legend(&mut c, 14)
}

fn flux_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    axis: &Axis,
    s: &Series,
) -> DrawResult {
    let (lo, hi) = range(s.flux_mt.iter().copied());
    let mut c = time_panel(area, axis.x.clone(), lo..hi, "flux density, mT", None)?;
    line(&mut c, axis, &s.flux_mt, REFERENCE, 1, None)?;
    Axis::marks(
        &mut c,
        axis.gaps.iter().copied(),
        (lo, hi),
        GAP.stroke_width(1),
    )?;
    Axis::marks(
        &mut c,
        axis.faults.iter().map(|f| f.0),
        (lo, hi),
        RED.stroke_width(2),
    )
}

fn duty_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    axis: &Axis,
    s: &Series,
) -> DrawResult {
    let x_desc = Some("time since start, min");
    let mut c = time_panel(area, axis.x.clone(), 0.0..100.0, "heater duty, %", x_desc)?;
    if let Some(d) = &s.duty_pct {
        line(&mut c, axis, d, DUTY, 1, None)?;
    }
    Axis::marks(
        &mut c,
        axis.faults.iter().map(|f| f.0),
        (0.0, 100.0),
        RED.stroke_width(2),
    )
}
