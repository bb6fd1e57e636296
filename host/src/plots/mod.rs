//! Plots, PNG and SVG, one module per subject: the run's flux against temperature and
//! residuals ([`flux`]), its time series ([`timeline`]), a lot ([`lot`]) and a sampling
//! plan's operating characteristic ([`oc`]) and a supplier's control chart ([`trend`]). Rendering and files are in [`figure`], the
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

use std::path::{Path, PathBuf};

pub use decimate::{decimate_minmax, minmax_indices};
pub use figure::{ensure_font, Figure, PlotError, SIZE};

use crate::analysis::dataset::Series;
use crate::analysis::Analysis;
use crate::output;
use crate::specs::GradeSpec;
use crate::units::DisplayUnits;
use figure::render_figure;

/// The plots of one run, by file stem.
pub const RUN_PLOTS: [&str; 3] = ["flux_vs_temp", "residuals", "timeline"];

/// Every run plot into `dir`, in the display units `u`; refuses to replace files unless
/// `force` (checked for all of them before any is written).
pub fn run_figures(
    dir: &Path,
    s: &Series,
    a: &Analysis,
    title: &str,
    force: bool,
    u: &DisplayUnits,
) -> Result<Vec<Figure>, PlotError> {
    let stems: Vec<PathBuf> = RUN_PLOTS.iter().map(|n| dir.join(n)).collect();
    output::refuse_existing(
        stems
            .iter()
            .flat_map(|p| [p.with_extension("png"), p.with_extension("svg")]),
        force,
    )?;
    let magnet_c = Some(a.traces.magnet_temp_c.as_slice());
    Ok(vec![
        render_figure!(&stems[0], true, |area| flux::flux_vs_temp(
            &area, a, title, u
        ))?,
        render_figure!(&stems[1], true, |area| flux::residuals(
            &area, s, a, title, u
        ))?,
        render_figure!(&stems[2], true, |area| timeline::draw_timeline(
            &area, s, magnet_c, title, u
        ))?,
    ])
}

/// [`run_figures`], as the files written.
pub fn write_run_plots(
    dir: &Path,
    s: &Series,
    a: &Analysis,
    title: &str,
    force: bool,
    u: &DisplayUnits,
) -> Result<Vec<PathBuf>, PlotError> {
    Ok(run_figures(dir, s, a, title, force, u)?
        .iter()
        .flat_map(Figure::files)
        .collect())
}

/// The time-series plot alone (for a record the analysis could not use).
pub fn timeline_figure(
    stem: &Path,
    s: &Series,
    title: &str,
    force: bool,
    u: &DisplayUnits,
) -> Result<Figure, PlotError> {
    render_figure!(stem, force, |area| timeline::draw_timeline(
        &area, s, None, title, u
    ))
}

/// The lot plot as `stem`.png/.svg.
pub fn lot_figure(
    stem: &Path,
    s: &crate::lot::LotSummary,
    spec: Option<&GradeSpec>,
    title: &str,
    force: bool,
    u: &DisplayUnits,
) -> Result<Figure, PlotError> {
    render_figure!(stem, force, |area| lot::lot_alpha(&area, s, spec, title, u))
}

/// [`lot_figure`], as the files written (refuses to replace them).
pub fn write_lot_plot(
    stem: &Path,
    s: &crate::lot::LotSummary,
    spec: Option<&GradeSpec>,
    title: &str,
) -> Result<Vec<PathBuf>, PlotError> {
    Ok(lot_figure(stem, s, spec, title, false, &DisplayUnits::SI)?
        .files()
        .to_vec())
}

/// The OC curve of `plan` as `stem`.png/.svg (refuses to replace them unless `force`).
pub fn write_oc_plot(
    stem: &Path,
    model: crate::acceptance_plan::Model,
    plan: &crate::acceptance_plan::Plan,
    aql: f64,
    rql: f64,
    force: bool,
) -> Result<Vec<PathBuf>, PlotError> {
    let f = render_figure!(stem, force, |area| oc::oc_curve(
        &area, model, plan, aql, rql
    ))?;
    Ok(f.files().to_vec())
}

/// A supplier's control chart as `stem`.png/.svg (refuses to replace them unless `force`).
pub fn write_trend_plot(
    stem: &Path,
    chart: &crate::history::trend::TrendChart,
    force: bool,
) -> Result<Vec<PathBuf>, PlotError> {
    let f = render_figure!(stem, force, |area| trend::control_chart(&area, chart))?;
    Ok(f.files().to_vec())
}
