//! Reports: plots plus an HTML page and a Markdown file beside the run.

use std::path::{Path, PathBuf};

use crate::analysis::dataset::Series;
use crate::analysis::Analysis;

/// Writing the report failed.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// A file is already there.
    #[error("{0} already exists; pass --force to replace report files")]
    Exists(String),
    /// File system.
    #[error("{path}: {source}")]
    Io {
        /// File.
        path: String,
        /// Why.
        source: std::io::Error,
    },
    /// Plotting.
    #[error("plotting {path}: {reason}")]
    Plot {
        /// File.
        path: String,
        /// Why.
        reason: String,
    },
}

/// Write every output of a run; returns the files written.
pub fn write_all(
    dir: &Path,
    series: &Series,
    a: &Analysis,
    title: &str,
    force: bool,
) -> Result<Vec<PathBuf>, ReportError> {
    crate::plots::write_run_plots(dir, series, a, title, force)
}
