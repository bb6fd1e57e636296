//! Plots, PNG and SVG, one module per subject: the run's flux against temperature and
//! residuals ([`flux`]), its time series ([`timeline`]), a lot ([`lot`]) and a sampling
//! plan's operating characteristic ([`oc`]) and a supplier's control chart ([`trend`]). Rendering into memory is in [`figure`] (nothing here writes a file), the
//! house style in [`style`], decimation for long records in [`decimate`].

pub mod decimate;
pub mod figure;
pub mod flux;
pub mod live;
pub mod lot;
pub mod oc;
pub mod style;
pub mod timeline;
pub mod trend;

pub use decimate::{decimate_minmax, minmax_indices};
pub use figure::{ensure_font, Figure, PlotError, SIZE};

use crate::analysis::{Analysis, Traces};
use crate::input::dataset::Series;
use crate::specs::GradeSpec;
use crate::units::DisplayUnits;
use figure::render_figure;

/// The plots of one run, by name (file stem).
pub const RUN_PLOTS: [&str; 3] = ["flux_vs_temp", "residuals", "timeline"];

/// Every run plot, in the display units `u`.
pub fn run_figures(
    s: &Series,
    a: &Analysis,
    t: &Traces,
    title: &str,
    u: &DisplayUnits,
) -> Result<Vec<Figure>, PlotError> {
    let magnet_c = Some(t.magnet_temp_c.as_slice());
    Ok(vec![
        render_figure!(RUN_PLOTS[0], |area| flux::flux_vs_temp(
            &area, a, t, title, u
        ))?,
        render_figure!(RUN_PLOTS[1], |area| flux::residuals(
            &area, s, a, t, title, u
        ))?,
        render_figure!(RUN_PLOTS[2], |area| timeline::draw_timeline(
            &area, s, magnet_c, title, u
        ))?,
    ])
}

/// The time-series plot alone (for a record the analysis could not use), named `name`.
pub fn timeline_figure(
    name: &str,
    s: &Series,
    title: &str,
    u: &DisplayUnits,
) -> Result<Figure, PlotError> {
    render_figure!(name, |area| timeline::draw_timeline(
        &area, s, None, title, u
    ))
}

/// The lot plot, named `name`.
pub fn lot_figure(
    name: &str,
    s: &crate::lot::LotSummary,
    spec: Option<&GradeSpec>,
    title: &str,
    u: &DisplayUnits,
) -> Result<Figure, PlotError> {
    render_figure!(name, |area| lot::lot_alpha(&area, s, spec, title, u))
}

/// The OC curve of `plan`, named `name`.
pub fn oc_figure(
    name: &str,
    model: crate::acceptance_plan::Model,
    plan: &crate::acceptance_plan::Plan,
    aql: f64,
    rql: f64,
) -> Result<Figure, PlotError> {
    render_figure!(name, |area| oc::oc_curve(&area, model, plan, aql, rql))
}

/// A supplier's control chart, named `name`.
pub fn trend_figure(
    name: &str,
    chart: &crate::history::trend::TrendChart,
) -> Result<Figure, PlotError> {
    render_figure!(name, |area| trend::control_chart(&area, chart))
}

/// Write `figure` as `stem`.png and `stem`.svg, any extension of `stem` replaced (both refused
/// where either is there, unless `force`); returns the two paths.
pub fn write_figure(
    stem: &std::path::Path,
    figure: &Figure,
    force: bool,
) -> Result<Vec<std::path::PathBuf>, PlotError> {
    let dir = stem.parent().unwrap_or(std::path::Path::new(""));
    let name = stem
        .file_stem()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let files = figure.files_named(&name);
    Ok(crate::output::write_set(dir, &files, force)?)
}
