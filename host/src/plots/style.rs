//! The plots' house style: colours, the shared chart type, axis ranges, tick labels, the
//! legend, the key strip beside a chart (so no key covers data) and the time panel.

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
        .x_label_formatter(&tick)
        .y_label_formatter(&tick)
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16));
    if let Some(d) = x_desc {
        mesh.x_desc(d);
    }
    mesh.draw().map_err(e)?;
    Ok(c)
}

/// A tick label as short as the number allows: `20`, not `20.0`; `0.25`, not `0.250`.
pub fn tick(v: &f64) -> String {
    let t = format!("{v:.6}");
    let t = t.trim_end_matches('0').trim_end_matches('.');
    if t == "-0" {
        "0".into()
    } else {
        t.to_string()
    }
}

/// One entry of a key drawn beside a chart: how it is marked and what it says.
pub enum Key {
    /// A line of this colour.
    Line(RGBColor, String),
    /// A dashed line of this colour.
    Dashed(RGBColor, String),
    /// A filled dot of this colour.
    Dot(RGBColor, String),
    /// A triangle of this colour.
    Triangle(RGBColor, String),
    /// A cross of this colour.
    Cross(RGBColor, String),
    /// A shaded box of this colour (a density of points).
    Shade(RGBColor, String),
    /// Words alone, no mark.
    Text(String),
}

/// Width of the key strip beside a chart, px.
pub const KEY_WIDTH: u32 = 260;

/// The chart's area and, at its right, a strip for its key: the key never covers data.
pub fn with_key_strip<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
) -> (DrawingArea<DB, Shift>, DrawingArea<DB, Shift>) {
    let width = area.dim_in_pixel().0;
    area.split_horizontally(width.saturating_sub(KEY_WIDTH))
}

/// Draw `keys` top-down in `side` (long labels wrap onto a second line).
pub fn draw_keys<DB: DrawingBackend>(
    side: &DrawingArea<DB, Shift>,
    keys: &[Key],
    top: i32,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    let font = ("sans-serif", 14).into_font().color(&BLACK);
    let mut y = top;
    for k in keys {
        let label = match k {
            Key::Line(c, l) => {
                side.draw(&PathElement::new(vec![(6, y), (30, y)], c.stroke_width(2)))
                    .map_err(e)?;
                l
            }
            Key::Dashed(c, l) => {
                for x in [6, 16, 26] {
                    side.draw(&PathElement::new(
                        vec![(x, y), (x + 5, y)],
                        c.stroke_width(2),
                    ))
                    .map_err(e)?;
                }
                l
            }
            Key::Dot(c, l) => {
                side.draw(&Circle::new((18, y), 4, c.filled())).map_err(e)?;
                l
            }
            Key::Triangle(c, l) => {
                side.draw(&TriangleMarker::new((18, y), 5, c.filled()))
                    .map_err(e)?;
                l
            }
            Key::Cross(c, l) => {
                side.draw(&Cross::new((18, y), 6, c.stroke_width(2)))
                    .map_err(e)?;
                l
            }
            Key::Text(l) => l,
            Key::Shade(c, l) => {
                side.draw(&Rectangle::new(
                    [(8, y - 6), (28, y + 6)],
                    c.mix(0.6).filled(),
                ))
                .map_err(e)?;
                l
            }
        };
        for line in crate::units::wrap_words(label, 30) {
            side.draw(&Text::new(line, (38, y - 8), font.clone()))
                .map_err(e)?;
            y += 18;
        }
        y += 6;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn ticks_carry_no_needless_zeros_and_keys_wrap() {
        assert_eq!(super::tick(&20.0), "20");
        assert_eq!(super::tick(&0.25), "0.25");
        assert_eq!(super::tick(&-0.0), "0");
        assert_eq!(super::tick(&-1.5e-3), "-0.0015");
        let w = crate::units::wrap_words("fit: α = -0.1142 ± 0.0016 %/°C (95 %), 22…98 °C", 30);
        assert!(
            w.len() == 2 && w.iter().all(|l| l.chars().count() <= 30),
            "{w:?}"
        );
    }
}
