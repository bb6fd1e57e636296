//! The time series of a run: temperatures with the setpoint, the flux, and the heater duty,
//! with faults (red) and gaps (orange) marked and explained. Lines break at a gap: nothing is
//! drawn where nothing was measured.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::decimate::minmax_indices;
use super::style::{
    draw_keys, range, time_panel, with_key_strip, Chart, DrawResult, Key, COOLING, DUTY, FIT, GAP,
    HEATING, REFERENCE,
};
use crate::event::words::fault_mark;
use crate::input::dataset::Series;
use crate::units::DisplayUnits;

/// Points per trace drawn (each bin's extremes).
const BINS: usize = 1500;
/// A step longer than this many sample periods is a gap.
const GAP_PERIODS: f64 = 3.0;

/// Indices of the first sample after each gap (a step longer than `GAP_PERIODS` periods).
fn gap_starts(time_s: &[f64], period: f64) -> Vec<usize> {
    (1..time_s.len())
        .filter(|&i| time_s[i] - time_s[i - 1] > GAP_PERIODS * period)
        .collect()
}

/// The stretches of `n` samples between the gaps that start at `breaks`.
fn stretches(n: usize, breaks: &[usize]) -> Vec<std::ops::Range<usize>> {
    let mut pieces = Vec::new();
    let mut start = 0;
    for &b in breaks {
        pieces.push(start..b);
        start = b;
    }
    pieces.push(start..n);
    pieces
}

/// The stretches a record's lines are drawn in: one per run of samples between gaps.
pub fn drawn_stretches(time_s: &[f64]) -> Vec<std::ops::Range<usize>> {
    let n = time_s.len();
    let period = if n > 1 {
        (time_s[n - 1] - time_s[0]) / (n - 1) as f64
    } else {
        1.0
    };
    stretches(n, &gap_starts(time_s, period))
}

/// What the three panels share: the time axis, where the record is whole, and the marks.
struct Axis {
    t_min: Vec<f64>,
    x: std::ops::Range<f64>,
    /// Each fault's time, min, and its words in the display units.
    faults: Vec<(f64, String)>,
    /// Where each gap starts and ends, min.
    gaps: Vec<(f64, f64)>,
    /// The stretches between gaps, as index ranges.
    pieces: Vec<std::ops::Range<usize>>,
}

impl Axis {
    fn new(s: &Series, u: &DisplayUnits) -> Axis {
        let t0 = s.time_s[0];
        let t_min: Vec<f64> = s.time_s.iter().map(|t| (t - t0) / 60.0).collect();
        let x1 = t_min.last().copied().unwrap_or(1.0).max(1e-3);
        let n = s.time_s.len();
        let period = if n > 1 {
            (s.time_s[n - 1] - t0) / (n - 1) as f64
        } else {
            1.0
        };
        let breaks = gap_starts(&s.time_s, period);
        let pieces = stretches(n, &breaks);
        Axis {
            faults: s
                .faults
                .iter()
                .map(|(t, m)| ((t - t0) / 60.0, fault_mark(m).render(u)))
                .collect(),
            gaps: breaks.iter().map(|&i| (t_min[i - 1], t_min[i])).collect(),
            pieces,
            t_min,
            x: 0.0..x1,
        }
    }

    /// Shade each gap across `lo..hi`, and mark each fault.
    fn marks<DB: DrawingBackend>(&self, c: &mut Chart<'_, DB>, (lo, hi): (f64, f64)) -> DrawResult {
        let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
        c.draw_series(self.gaps.iter().map(|&(a, b)| {
            // at least a visible sliver for a short gap
            let b = b.max(a + (self.x.end - self.x.start) / 400.0);
            Rectangle::new([(a, lo), (b, hi)], GAP.mix(0.35).filled())
        }))
        .map_err(e)?;
        c.draw_series(
            self.faults
                .iter()
                .map(|f| PathElement::new(vec![(f.0, lo), (f.0, hi)], RED.stroke_width(2))),
        )
        .map_err(e)?;
        Ok(())
    }

    /// Keys for the marks, when there are any.
    fn keys(&self) -> Vec<Key> {
        let mut keys = Vec::new();
        if !self.gaps.is_empty() {
            keys.push(Key::Shade(
                GAP,
                format!(
                    "{}: no samples arrived (lines are not drawn across)",
                    crate::units::count(self.gaps.len() as u64, "gap", "gaps")
                ),
            ));
        }
        for (_, what) in &self.faults {
            keys.push(Key::Line(RED, format!("fault: {what}")));
        }
        keys
    }
}

/// The time series. `magnet_c` is the lag-corrected magnet temperature when an analysis has it.
pub fn draw_timeline<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &Series,
    magnet_c: Option<&[f64]>,
    title: &str,
    u: &DisplayUnits,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let root = root
        .titled(&format!("Time series — {title}"), ("sans-serif", 20))
        .map_err(e)?;
    // a logger's file with no heater column gets no (empty) heater panel
    let duty = s
        .duty_pct
        .as_deref()
        .filter(|d| d.iter().any(|v| v.is_finite()));
    let panels = root.split_evenly((if duty.is_some() { 3 } else { 2 }, 1));
    let axis = Axis::new(s, u);
    temperature_panel(&panels[0], &axis, s, magnet_c, u)?;
    flux_panel(&panels[1], &axis, s, u, duty.is_none())?;
    if let Some(d) = duty {
        duty_panel(&panels[2], &axis, d)?;
    }
    root.present().map_err(e)
}

/// `y` as lines, one per stretch between gaps.
fn line<DB: DrawingBackend>(
    c: &mut Chart<'_, DB>,
    axis: &Axis,
    y: &[f64],
    style: ShapeStyle,
) -> DrawResult {
    let per_piece = (BINS * 2 / axis.pieces.len().max(1)).max(50) / 2;
    for piece in &axis.pieces {
        let pts: Vec<(f64, f64)> = minmax_indices(piece.clone(), y, per_piece)
            .into_iter()
            .filter(|&i| y[i].is_finite())
            .map(|i| (axis.t_min[i], y[i]))
            .collect();
        c.draw_series(LineSeries::new(pts, style))
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

/// The setpoint: a dashed step line on top, one per stretch where the heater followed one.
fn setpoint<DB: DrawingBackend>(c: &mut Chart<'_, DB>, axis: &Axis, sp: &[f64]) -> DrawResult {
    let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    for (i, v) in sp
        .iter()
        .enumerate()
        .step_by(super::style::every(sp.len(), 3000))
    {
        let broken = axis.pieces.iter().any(|p| p.start == i && i > 0);
        if (v.is_nan() || broken) && runs.last().is_some_and(|r| !r.is_empty()) {
            runs.push(Vec::new());
        }
        if !v.is_nan() {
            if let Some(r) = runs.last_mut() {
                r.push((axis.t_min[i], *v));
            }
        }
    }
    for r in runs.into_iter().filter(|r| r.len() > 1) {
        c.draw_series(DashedLineSeries::new(r, 6, 4, BLACK.stroke_width(2)))
            .map_err(|e| e.to_string())?;
    }
    Ok(())
}

fn temperature_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    axis: &Axis,
    s: &Series,
    magnet_c: Option<&[f64]>,
    u: &DisplayUnits,
) -> DrawResult {
    let (plot, side) = with_key_strip(area);
    let shown = |v: &[f64]| v.iter().map(|&t| u.temp(t)).collect::<Vec<f64>>();
    let temp = shown(&s.temp_c);
    let (lo, hi) = range(temp.iter().copied());
    let y_desc = format!("temperature, {}", u.temp_symbol());
    let mut c = time_panel(&plot, axis.x.clone(), lo..hi, &y_desc, None)?;
    axis.marks(&mut c, (lo, hi))?;
    let mut keys = vec![Key::Line(HEATING, "thermocouple".into())];
    line(&mut c, axis, &temp, HEATING.stroke_width(2))?;
    if let Some(m) = magnet_c {
        line(&mut c, axis, &shown(m), COOLING.stroke_width(2))?;
        keys.push(Key::Line(COOLING, "magnet (lag-corrected)".into()));
    }
    if let Some(p) = &s.probe_c {
        line(&mut c, axis, &shown(p), FIT.stroke_width(2))?;
        keys.push(Key::Line(FIT, "Hall probe".into()));
    }
    if let Some(sp) = &s.setpoint_c {
        setpoint(&mut c, axis, &shown(sp))?;
        keys.push(Key::Dashed(
            BLACK,
            "setpoint (while the heater follows one)".into(),
        ));
    }
    keys.extend(axis.keys());
    draw_keys(&side, &keys, 16)
}

fn flux_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    axis: &Axis,
    s: &Series,
    u: &DisplayUnits,
    bottom: bool,
) -> DrawResult {
    let (plot, side) = with_key_strip(area);
    let flux: Vec<f64> = s.flux_mt.iter().map(|&b| u.flux(b)).collect();
    let (lo, hi) = range(flux.iter().copied());
    let y_desc = format!("flux density, {}", u.flux_symbol());
    let x_desc = bottom.then_some(X_DESC);
    let mut c = time_panel(&plot, axis.x.clone(), lo..hi, &y_desc, x_desc)?;
    axis.marks(&mut c, (lo, hi))?;
    line(&mut c, axis, &flux, REFERENCE.stroke_width(1))?;
    draw_keys(
        &side,
        &[Key::Line(REFERENCE, "flux density at the probe".into())],
        16,
    )
}

/// The time axis's name, on the bottom panel.
const X_DESC: &str = "time since start, min";

fn duty_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    axis: &Axis,
    duty_pct: &[f64],
) -> DrawResult {
    let (plot, side) = with_key_strip(area);
    let mut c = time_panel(
        &plot,
        axis.x.clone(),
        0.0..100.0,
        "heater duty, %",
        Some(X_DESC),
    )?;
    axis.marks(&mut c, (0.0, 100.0))?;
    line(&mut c, axis, duty_pct, DUTY.stroke_width(1))?;
    draw_keys(&side, &[Key::Line(DUTY, "heater duty".into())], 16)
}
