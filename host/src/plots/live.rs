//! The console's live charts, drawn into memory as SVG while a part records: flux against
//! temperature with the heating and the cooling branch apart, and temperature with the setpoint
//! against time. Every sample is kept by the recorder; only what is drawn is decimated (at most
//! [`MAX_DRAWN`] points a chart), so a whole record stays light to draw and to send.

use plotters::prelude::*;

use super::style::{range, tickable, COOLING, HEATING, REFERENCE};
use crate::units::DisplayUnits;

/// Most points drawn per chart.
pub const MAX_DRAWN: usize = 600;

/// Size of a live chart, px.
pub const LIVE_SIZE: (u32, u32) = (720, 440);

/// A sample as the charts take it: device time s, temperature °C, flux mT, setpoint °C (NaN:
/// heater off), and whether the profile had started.
pub type LivePoint = (f64, f64, f64, f64, bool);

/// Indices of at most `max` of `n` points, evenly spread, the last one always among them.
fn drawn(n: usize, max: usize) -> Vec<usize> {
    if n <= max {
        return (0..n).collect();
    }
    let mut v: Vec<usize> = (0..max).map(|k| k * (n - 1) / (max - 1)).collect();
    v.dedup();
    v
}

/// Flux against temperature: heating (up to the hottest sample) and cooling after it, as
/// points; before the profile starts, the rest at room temperature in the reference colour.
pub fn flux_vs_temp_svg(points: &[LivePoint], u: &DisplayUnits) -> Result<String, String> {
    super::ensure_font();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, LIVE_SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let peak = points
            .iter()
            .enumerate()
            .filter(|(_, p)| p.4)
            .max_by(|a, b| a.1 .1.total_cmp(&b.1 .1))
            .map_or(usize::MAX, |(i, _)| i);
        let (t0, t1) = range(points.iter().map(|p| u.temp(p.1)));
        let (b0, b1) = range(points.iter().map(|p| u.flux(p.2)));
        let mut c = ChartBuilder::on(&root)
            .margin(12)
            .x_label_area_size(44)
            .y_label_area_size(70)
            .build_cartesian_2d(tickable(t0..t1), tickable(b0..b1))
            .map_err(|e| e.to_string())?;
        c.configure_mesh()
            .x_desc(format!("temperature, {}", u.temp_symbol()))
            .y_desc(format!("flux density, {}", u.flux_symbol()))
            .label_style(("sans-serif", 15))
            .draw()
            .map_err(|e| e.to_string())?;
        for (name, colour, pick) in [
            ("at rest", REFERENCE, 0u8),
            ("heating", HEATING, 1),
            ("cooling", COOLING, 2),
        ] {
            let branch: Vec<&LivePoint> = points
                .iter()
                .enumerate()
                .filter(|(i, p)| match pick {
                    0 => !p.4,
                    1 => p.4 && *i <= peak,
                    _ => p.4 && *i > peak,
                })
                .map(|(_, p)| p)
                .collect();
            let shown = drawn(branch.len(), MAX_DRAWN / 3);
            c.draw_series(shown.into_iter().map(|i| {
                let p = branch[i];
                Circle::new((u.temp(p.1), u.flux(p.2)), 2, colour.filled())
            }))
            .map_err(|e| e.to_string())?
            .label(name)
            .legend(move |(x, y)| Circle::new((x, y), 4, colour.filled()));
        }
        super::style::legend(&mut c, 15)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// Temperature and the setpoint against time since the first sample, min.
pub fn temp_vs_time_svg(points: &[LivePoint], u: &DisplayUnits) -> Result<String, String> {
    super::ensure_font();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, LIVE_SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let start = points.first().map_or(0.0, |p| p.0);
        let minutes = |p: &LivePoint| (p.0 - start) / 60.0;
        let (x0, x1) = range(points.iter().map(minutes));
        let temps = points.iter().flat_map(|p| [u.temp(p.1), u.temp(p.3)]);
        let (y0, y1) = range(temps);
        let mut c = ChartBuilder::on(&root)
            .margin(12)
            .x_label_area_size(44)
            .y_label_area_size(60)
            .build_cartesian_2d(tickable(x0.max(0.0)..x1), tickable(y0..y1))
            .map_err(|e| e.to_string())?;
        c.configure_mesh()
            .x_desc("time since the first sample, min")
            .y_desc(format!("temperature, {}", u.temp_symbol()))
            .label_style(("sans-serif", 15))
            .draw()
            .map_err(|e| e.to_string())?;
        let shown = drawn(points.len(), MAX_DRAWN);
        let line = |f: &dyn Fn(&LivePoint) -> f64| -> Vec<(f64, f64)> {
            shown
                .iter()
                .map(|&i| &points[i])
                .filter(|p| f(p).is_finite())
                .map(|p| (minutes(p), u.temp(f(p))))
                .collect()
        };
        c.draw_series(LineSeries::new(line(&|p| p.1), HEATING.stroke_width(2)))
            .map_err(|e| e.to_string())?
            .label("thermocouple")
            .legend(|(x, y)| PathElement::new([(x, y), (x + 18, y)], HEATING.stroke_width(2)));
        c.draw_series(LineSeries::new(line(&|p| p.3), REFERENCE.stroke_width(1)))
            .map_err(|e| e.to_string())?
            .label("setpoint (heater on)")
            .legend(|(x, y)| PathElement::new([(x, y), (x + 18, y)], REFERENCE.stroke_width(1)));
        super::style::legend(&mut c, 15)?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_long_record_is_drawn_decimated_with_both_branches() {
        // a 15-minute record at 10 samples/s: 9000 samples, heated to 100 °C and back
        let pts: Vec<LivePoint> = (0..9000)
            .map(|i| {
                let t = f64::from(i) * 0.1;
                let temp = 25.0 + 75.0 * (std::f64::consts::PI * t / 900.0).sin();
                (
                    t,
                    temp,
                    300.0 * (1.0 - 0.0011 * (temp - 20.0)),
                    100.0,
                    i > 100,
                )
            })
            .collect();
        let svg = flux_vs_temp_svg(&pts, &DisplayUnits::SI).unwrap();
        let circles = svg.matches("<circle").count();
        // three branches (plus their legend marks), never more than the cap
        assert!(circles > 300 && circles <= MAX_DRAWN + 3, "{circles}");
        assert!(svg.contains("heating") && svg.contains("cooling"));
        let svg = temp_vs_time_svg(&pts, &DisplayUnits::SI).unwrap();
        assert!(svg.contains("setpoint"));
        assert_eq!(drawn(5, 10), vec![0, 1, 2, 3, 4]);
        assert_eq!(*drawn(9000, 600).last().unwrap(), 8999);
    }
}
