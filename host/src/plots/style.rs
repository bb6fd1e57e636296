//! The plots' house style: colours, the shared chart type, axis ranges, the legend and the
//! time panel.

use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;

/// Heating branch and warnings.
pub const HEATING: RGBColor = RGBColor(200, 70, 30);
/// Cooling branch and ordinary points.
pub const COOLING: RGBColor = RGBColor(30, 100, 190);
/// Reference readings and the flux trace.
pub const REFERENCE: RGBColor = RGBColor(20, 20, 20);
/// The fit, the probe.
pub const FIT: RGBColor = RGBColor(40, 150, 60);
/// Heater duty.
pub const DUTY: RGBColor = RGBColor(150, 90, 170);
/// Gaps in a record.
pub const GAP: RGBColor = RGBColor(230, 140, 0);

/// Stride that keeps at most `max` of `n` points.
pub fn every(n: usize, max: usize) -> usize {
    (n / max).max(1)
}

/// The range of `v` with 5 % padding.
pub fn range(v: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = v
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
    if lo > hi {
        // nothing finite to show: an empty unit axis rather than one plotters cannot tick
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.05).max(1e-6 * (1.0 + hi.abs()));
    (lo - pad, hi + pad)
}

/// An axis range plotters can tick: finite, in order, not empty (else 0 … 1).
pub fn tickable(r: std::ops::Range<f64>) -> std::ops::Range<f64> {
    if r.start.is_finite() && r.end.is_finite() && r.end > r.start {
        r
    } else {
        0.0..1.0
    }
}

/// What a drawing function returns (plotters' errors as text).
pub type DrawResult = Result<(), String>;

/// The charts' common 2-D cartesian context.
pub type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Draw a chart's legend in the house style: white, framed, `size`-point text.
pub fn legend<'a, DB: DrawingBackend + 'a>(c: &mut Chart<'a, DB>, size: u32) -> DrawResult {
    c.configure_series_labels()
        .label_font(("sans-serif", size))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(|x| x.to_string())
}

/// One panel of the time series: the time axis (minutes) and a labelled value axis.
pub fn time_panel<'a, DB: DrawingBackend>(
    area: &'a DrawingArea<DB, Shift>,
    x: std::ops::Range<f64>,
    y: std::ops::Range<f64>,
    y_desc: &str,
    x_desc: Option<&str>,
) -> Result<Chart<'a, DB>, String> {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let mut c = ChartBuilder::on(area)
        .margin(10)
        .x_label_area_size(if x_desc.is_some() { 45 } else { 30 })
        .y_label_area_size(80)
        .build_cartesian_2d(tickable(x), tickable(y))
        .map_err(e)?;
    let mut mesh = c.configure_mesh();
    mesh.y_desc(y_desc)
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16));
    if let Some(d) = x_desc {
        mesh.x_desc(d);
    }
    mesh.draw().map_err(e)?;
    Ok(c)
}
