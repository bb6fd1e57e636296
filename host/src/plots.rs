//! Plots of a run, PNG and SVG, with a bundled font (no system fonts): flux against
//! temperature with the fit, the residuals, and the time series. Large records are decimated
//! for drawing by keeping each bin's minimum and maximum, so outliers stay visible.

use std::path::{Path, PathBuf};
use std::sync::Once;

use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;

use crate::analysis::dataset::Series;
use crate::analysis::Analysis;
use crate::report::ReportError;

/// Pixel size of every plot.
pub const SIZE: (u32, u32) = (1100, 700);

const HEATING: RGBColor = RGBColor(200, 70, 30);
const COOLING: RGBColor = RGBColor(30, 100, 190);
const REFERENCE: RGBColor = RGBColor(20, 20, 20);
const FIT: RGBColor = RGBColor(40, 150, 60);
const DUTY: RGBColor = RGBColor(150, 90, 170);

static FONT: Once = Once::new();

/// Register the bundled DejaVu Sans as "sans-serif" (once).
pub fn ensure_font() {
    FONT.call_once(|| {
        let _ = plotters::style::register_font(
            "sans-serif",
            FontStyle::Normal,
            dejavu::sans::regular(),
        );
        let _ = plotters::style::register_font("sans-serif", FontStyle::Bold, dejavu::sans::bold());
    });
}

/// Keep the minimum and maximum of `y` in each of `bins` equal slices (in order).
pub fn decimate_minmax(x: &[f64], y: &[f64], bins: usize) -> Vec<(f64, f64)> {
    let n = x.len();
    if n <= 2 * bins {
        return x.iter().copied().zip(y.iter().copied()).collect();
    }
    let mut out = Vec::with_capacity(2 * bins);
    for b in 0..bins {
        let (lo, hi) = (b * n / bins, ((b + 1) * n / bins).max(b * n / bins + 1));
        let (mut imin, mut imax) = (lo, lo);
        for i in lo..hi {
            if y[i] < y[imin] {
                imin = i;
            }
            if y[i] > y[imax] {
                imax = i;
            }
        }
        let (a, c) = if imin <= imax {
            (imin, imax)
        } else {
            (imax, imin)
        };
        out.push((x[a], y[a]));
        if c != a {
            out.push((x[c], y[c]));
        }
    }
    out
}

/// Indices of each of `bins` slices of `r`: its minimum and maximum of `y`, in order.
pub fn minmax_indices(r: std::ops::Range<usize>, y: &[f64], bins: usize) -> Vec<usize> {
    let n = r.len();
    if n <= 2 * bins {
        return r.collect();
    }
    let mut out = Vec::with_capacity(2 * bins);
    for k in 0..bins {
        let (lo, hi) = (r.start + k * n / bins, r.start + (k + 1) * n / bins);
        let (mut imin, mut imax) = (lo, lo);
        for i in lo..hi {
            if y[i] < y[imin] {
                imin = i;
            }
            if y[i] > y[imax] {
                imax = i;
            }
        }
        out.push(imin.min(imax));
        if imin != imax {
            out.push(imin.max(imax));
        }
    }
    out
}

fn every(n: usize, max: usize) -> usize {
    (n / max).max(1)
}

fn range(v: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = v.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    let pad = ((hi - lo) * 0.05).max(1e-6);
    (lo - pad, hi + pad)
}

fn plot_error(path: &Path, reason: String) -> ReportError {
    ReportError::Plot {
        path: path.display().to_string(),
        reason,
    }
}

/// Render `$draw` (an expression using the drawing area `$area`) into `$stem`.png and .svg,
/// with the bundled font; evaluates to the two paths.
macro_rules! render_both {
    ($stem:expr, |$area:ident| $draw:expr) => {{
        ensure_font();
        let stem: &Path = $stem;
        let png = stem.with_extension("png");
        let svg = stem.with_extension("svg");
        {
            let $area = BitMapBackend::new(&png, SIZE).into_drawing_area();
            $draw
        }
        .map_err(|reason| plot_error(&png, reason))?;
        {
            let $area = SVGBackend::new(&svg, SIZE).into_drawing_area();
            let result = $draw;
            drop($area);
            result
        }
        .map_err(|reason| plot_error(&svg, reason))?;
        vec![png, svg]
    }};
}

type DrawResult = Result<(), String>;

/// The charts' common 2-D cartesian context.
type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Draw a chart's legend in the house style: white, framed, `size`-point text.
fn legend<'a, DB: DrawingBackend + 'a>(c: &mut Chart<'a, DB>, size: u32) -> DrawResult {
    c.configure_series_labels()
        .label_font(("sans-serif", size))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(|x| x.to_string())
}

/// One panel of the time series: the time axis (minutes) and a labelled value axis.
fn time_panel<'a, DB: DrawingBackend>(
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
        .build_cartesian_2d(x, y)
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

fn flux_vs_temp<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    a: &Analysis,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let seg = a.segments.as_ref().ok_or("no segments")?;
    let tm = &a.magnet_temp_c;
    let b = &a.flux_corrected_mt;
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
        minmax_indices(r, b, 1500)
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

fn residuals<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &Series,
    a: &Analysis,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let tm = &a.magnet_temp_c;
    let seg = a.segments.as_ref().ok_or("no segments")?;
    let loss = a.irreversible_loss_pct.unwrap_or(0.0).max(0.0) / 100.0;
    let all: Vec<f64> = (0..s.time_s.len())
        .map(|i| {
            let b = if i > seg.peak {
                a.flux_corrected_mt[i] / (1.0 - loss)
            } else {
                a.flux_corrected_mt[i]
            };
            b - a.fitted_mt(tm[i])
        })
        .collect();
    let res: Vec<(f64, f64, bool)> = minmax_indices(0..s.time_s.len(), &all, 3000)
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
        .build_cartesian_2d(tlo..thi, -lim..lim)
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

fn timeline<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &Series,
    a: &Analysis,
    title: &str,
) -> DrawResult {
    draw_timeline(root, s, Some(&a.magnet_temp_c), title)
}

/// The time series: temperatures with the setpoint, flux, heater duty; faults (red) and gaps
/// (orange) marked. `magnet_c` is the lag-corrected magnet temperature when an analysis has it.
fn draw_timeline<DB: DrawingBackend>(
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
    let t0 = s.time_s[0];
    let t_min: Vec<f64> = s.time_s.iter().map(|t| (t - t0) / 60.0).collect();
    let (x0, x1) = (0.0, t_min.last().copied().unwrap_or(1.0).max(1e-3));
    let bins = 1500;
    let faults: Vec<(f64, &str)> = s
        .faults
        .iter()
        .map(|(t, w)| ((t - t0) / 60.0, w.as_str()))
        .collect();
    let period = if s.time_s.len() > 1 {
        (s.time_s[s.time_s.len() - 1] - t0) / (s.time_s.len() - 1) as f64
    } else {
        1.0
    };
    let gaps: Vec<f64> = s
        .time_s
        .windows(2)
        .filter(|w| w[1] - w[0] > 3.0 * period)
        .map(|w| (w[0] - t0) / 60.0)
        .collect();
    let orange = RGBColor(230, 140, 0);

    // temperatures
    let (lo, hi) = range(s.temp_c.iter().copied());
    let mut c = time_panel(&panels[0], x0..x1, lo..hi, "temperature, °C", None)?;
    c.draw_series(LineSeries::new(
        decimate_minmax(&t_min, &s.temp_c, bins),
        HEATING.stroke_width(2),
    ))
    .map_err(e)?
    .label("thermocouple")
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], HEATING));
    if let Some(m) = magnet_c {
        c.draw_series(LineSeries::new(
            decimate_minmax(&t_min, m, bins),
            COOLING.stroke_width(2),
        ))
        .map_err(e)?
        .label("magnet (lag-corrected)")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], COOLING));
    }
    if let Some(p) = &s.probe_c {
        c.draw_series(LineSeries::new(
            decimate_minmax(&t_min, p, bins),
            FIT.stroke_width(2),
        ))
        .map_err(e)?
        .label("Hall probe")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], FIT));
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
                r.push((t_min[i], *v));
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
    for (x, what) in &faults {
        c.draw_series([PathElement::new(
            vec![(*x, lo), (*x, hi)],
            RED.stroke_width(2),
        )])
        .map_err(e)?
        .label(format!("fault: {what}"))
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], RED));
    }
    legend(&mut c, 14)?;

    // flux
    let (lo, hi) = range(s.flux_mt.iter().copied());
    let mut c = time_panel(&panels[1], x0..x1, lo..hi, "flux density, mT", None)?;
    c.draw_series(LineSeries::new(
        decimate_minmax(&t_min, &s.flux_mt, bins),
        REFERENCE.stroke_width(1),
    ))
    .map_err(e)?;
    c.draw_series(
        gaps.iter()
            .map(|&g| PathElement::new(vec![(g, lo), (g, hi)], orange.stroke_width(1))),
    )
    .map_err(e)?;
    c.draw_series(
        faults
            .iter()
            .map(|(x, _)| PathElement::new(vec![(*x, lo), (*x, hi)], RED.stroke_width(2))),
    )
    .map_err(e)?;

    // duty
    let mut c = time_panel(
        &panels[2],
        x0..x1,
        0.0..100.0,
        "heater duty, %",
        Some("time since start, min"),
    )?;
    if let Some(d) = &s.duty_pct {
        c.draw_series(LineSeries::new(
            decimate_minmax(&t_min, d, bins),
            DUTY.stroke_width(1),
        ))
        .map_err(e)?;
    }
    c.draw_series(
        faults
            .iter()
            .map(|(x, _)| PathElement::new(vec![(*x, 0.0), (*x, 100.0)], RED.stroke_width(2))),
    )
    .map_err(e)?;
    root.present().map_err(e)
}

/// The time-series plot alone (for a record the analysis could not use), as `stem`.png/.svg.
pub fn write_timeline_only(
    stem: &Path,
    s: &Series,
    title: &str,
) -> Result<Vec<PathBuf>, ReportError> {
    Ok(render_both!(stem, |area| draw_timeline(
        &area, s, None, title
    )))
}

/// The plots of one run, by file stem.
pub const RUN_PLOTS: [&str; 3] = ["flux_vs_temp", "residuals", "timeline"];

/// Write every run plot into `dir`; refuses to replace files unless `force` (checked for all
/// of them before any is written).
pub fn write_run_plots(
    dir: &Path,
    s: &Series,
    a: &Analysis,
    title: &str,
    force: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    let stems: Vec<PathBuf> = RUN_PLOTS.iter().map(|n| dir.join(n)).collect();
    crate::report::refuse_existing(
        stems
            .iter()
            .flat_map(|p| [p.with_extension("png"), p.with_extension("svg")]),
        force,
    )?;
    let mut written = Vec::new();
    for (name, stem) in RUN_PLOTS.iter().zip(&stems) {
        written.extend(match *name {
            "flux_vs_temp" => render_both!(stem, |area| flux_vs_temp(&area, a, title)),
            "residuals" => render_both!(stem, |area| residuals(&area, s, a, title)),
            _ => render_both!(stem, |area| timeline(&area, s, a, title)),
        });
    }
    Ok(written)
}

fn lot_alpha<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &crate::lot::LotSummary,
    spec: Option<&crate::specs::GradeSpec>,
    title: &str,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let halves = root.split_evenly((2, 2));
    let n = s.rows.len();
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
    let mut c = ChartBuilder::on(&halves[0])
        .caption(
            match spec {
                Some(g) => format!("α(Br) per magnet, {} limits in red — {title}", g.grade),
                None => format!("α(Br) per magnet — {title}"),
            },
            ("sans-serif", 18),
        )
        .margin(15)
        .x_label_area_size(40)
        .y_label_area_size(80)
        .build_cartesian_2d(-0.5..(n as f64 - 0.5), (lo - pad)..(hi + pad))
        .map_err(e)?;
    let ids: Vec<String> = s
        .rows
        .iter()
        .map(|r| r.id.chars().take(12).collect())
        .collect();
    let id_of = |x: &f64| {
        let i = x.round();
        if (x - i).abs() < 1e-6 && i >= 0.0 && (i as usize) < ids.len() {
            ids[i as usize].clone()
        } else {
            String::new()
        }
    };
    c.configure_mesh()
        .x_labels(n.min(24) * 2 + 1)
        .x_label_formatter(&id_of)
        .disable_x_mesh()
        .x_desc("magnet (ranked by room-temperature flux)")
        .y_desc("α(Br), %/°C")
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16))
        .draw()
        .map_err(e)?;
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
    // irreversible loss per magnet with its U95, against the heat-damage threshold
    let losses: Vec<(usize, f64, f64)> = s
        .rows
        .iter()
        .enumerate()
        .filter_map(|(i, r)| Some((i, r.loss_pct?, r.loss_u95_pct.unwrap_or(0.0))))
        .collect();
    let lmax = losses.iter().map(|l| l.1 + l.2).fold(0.5f64, f64::max) * 1.15;
    let lmin = losses.iter().map(|l| l.1 - l.2).fold(-0.1f64, f64::min) * 1.15;
    let mut c = ChartBuilder::on(&halves[2])
        .caption("Irreversible loss per magnet", ("sans-serif", 20))
        .margin(15)
        .x_label_area_size(40)
        .y_label_area_size(80)
        .build_cartesian_2d(-0.5..(n as f64 - 0.5), lmin..lmax)
        .map_err(e)?;
    c.configure_mesh()
        .x_labels(n.min(24) * 2 + 1)
        .x_label_formatter(&id_of)
        .disable_x_mesh()
        .x_desc("magnet")
        .y_desc("loss, %")
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16))
        .draw()
        .map_err(e)?;
    for (i, l, u) in &losses {
        let x = *i as f64;
        let col = if *l > u.max(crate::analysis::HEAT_DAMAGE_PCT) {
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
    let thr = crate::analysis::HEAT_DAMAGE_PCT;
    c.draw_series(LineSeries::new(
        [(-0.5, thr), (n as f64 - 0.5, thr)],
        RED.stroke_width(2),
    ))
    .map_err(e)?
    .label(format!("heat damage above {thr} % (and its U95)"))
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], RED));
    legend(&mut c, 13)?;
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
        halves[3]
            .draw(&Text::new(
                line.clone(),
                (30, 40 + 36 * k as i32),
                text_style.clone(),
            ))
            .map_err(e)?;
    }
    // room-temperature flux, ranked: deviation from the set's median, at least ±1 % shown
    let med = s.b20.median;
    let dev: Vec<f64> = s
        .rows
        .iter()
        .map(|r| (r.b20_mt - med) / med * 100.0)
        .collect();
    let lim = dev.iter().map(|d| d.abs()).fold(1.0, f64::max) * 1.15;
    let mut c = ChartBuilder::on(&halves[1])
        .caption(
            format!("Flux at 20 °C vs the median, {med:.2} mT"),
            ("sans-serif", 20),
        )
        .margin(15)
        .x_label_area_size(40)
        .y_label_area_size(80)
        .build_cartesian_2d(-0.5..(n as f64 - 0.5), -lim..lim)
        .map_err(e)?;
    c.configure_mesh()
        .x_labels(n.min(24) * 2 + 1)
        .x_label_formatter(&id_of)
        .disable_x_mesh()
        .x_desc("magnet")
        .y_desc("B at 20 °C − median, %")
        .label_style(("sans-serif", 14))
        .axis_desc_style(("sans-serif", 16))
        .draw()
        .map_err(e)?;
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
    root.present().map_err(e)
}

/// α per magnet with the spec limits, and the ranked room-temperature flux, as `stem`.png/.svg.
pub fn write_lot_plot(
    stem: &Path,
    s: &crate::lot::LotSummary,
    spec: Option<&crate::specs::GradeSpec>,
    title: &str,
) -> Result<Vec<PathBuf>, ReportError> {
    Ok(render_both!(stem, |area| lot_alpha(&area, s, spec, title)))
}

fn oc_curve<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    model: crate::sampling::Model,
    plan: &crate::sampling::Plan,
    aql: f64,
    rql: f64,
) -> DrawResult {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let pmax = (rql * 2.5).min(1.0);
    let mut c = ChartBuilder::on(root)
        .caption(
            format!("Operating characteristic: n = {}, c = {}", plan.n, plan.c),
            ("sans-serif", 24),
        )
        .margin(20)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..pmax * 100.0, 0.0..1.0)
        .map_err(e)?;
    c.configure_mesh()
        .x_desc("fraction defective in the lot, %")
        .y_desc("probability of accepting the lot")
        .label_style(("sans-serif", 16))
        .axis_desc_style(("sans-serif", 18))
        .draw()
        .map_err(e)?;
    c.draw_series(LineSeries::new(
        (0..=300).map(|k| {
            let p = pmax * f64::from(k) / 300.0;
            (
                p * 100.0,
                crate::sampling::accept_probability(model, plan.n, plan.c, p),
            )
        }),
        COOLING.stroke_width(3),
    ))
    .map_err(e)?
    .label("OC curve")
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], COOLING.stroke_width(3)));
    c.draw_series([Circle::new(
        (aql * 100.0, plan.accept_at_aql),
        6,
        FIT.filled(),
    )])
    .map_err(e)?
    .label(format!(
        "AQL {:.2} %: Pa = {:.3}",
        aql * 100.0,
        plan.accept_at_aql
    ))
    .legend(|(x, y)| Circle::new((x + 10, y), 5, FIT.filled()));
    c.draw_series([Circle::new(
        (rql * 100.0, plan.accept_at_rql),
        6,
        HEATING.filled(),
    )])
    .map_err(e)?
    .label(format!(
        "RQL {:.2} %: Pa = {:.3}",
        rql * 100.0,
        plan.accept_at_rql
    ))
    .legend(|(x, y)| Circle::new((x + 10, y), 5, HEATING.filled()));
    legend(&mut c, 16)?;
    root.present().map_err(e)
}

/// The OC curve of `plan` as `stem`.png/.svg.
pub fn write_oc_plot(
    stem: &Path,
    model: crate::sampling::Model,
    plan: &crate::sampling::Plan,
    aql: f64,
    rql: f64,
) -> Result<Vec<PathBuf>, ReportError> {
    Ok(render_both!(stem, |area| oc_curve(
        &area, model, plan, aql, rql
    )))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimation_keeps_every_outlier() {
        let n = 1_000_000;
        let mut y: Vec<f64> = (0..n).map(|i| (i as f64 * 1e-3).sin()).collect();
        let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
        for &k in &[12_345usize, 500_000, 999_999] {
            y[k] = 50.0;
        }
        y[777_777] = -50.0;
        let idx = minmax_indices(0..n, &y, 1000);
        assert!(idx.len() <= 2000);
        for k in [12_345, 500_000, 999_999, 777_777] {
            assert!(idx.contains(&k), "outlier at {k} dropped");
        }
        assert!(idx.windows(2).all(|w| w[0] < w[1]), "in order");
        let pts = decimate_minmax(&x, &y, 1000);
        assert_eq!(pts.iter().filter(|p| p.1.abs() == 50.0).count(), 4);
    }
}
