//! Report a run or a logger's CSV file: analyse it and write every output (plots, HTML,
//! Markdown, JSON, the certificate), or — when the record cannot be analysed — its time series
//! and a plain statement of why.

use std::path::{Path, PathBuf};

use super::analyze_input::{load, InputRequest, JobError, Judging};
use crate::report::{self, Look, ReportError};

/// The report job failed.
#[derive(Debug, thiserror::Error)]
pub enum RunReportError {
    /// Loading the run or the spec table failed.
    #[error(transparent)]
    Job(#[from] JobError),
    /// Writing failed.
    #[error(transparent)]
    Report(#[from] ReportError),
}

/// What was written, and why the analysis was left out if it was.
pub struct RunReport {
    /// Files written.
    pub written: Vec<PathBuf>,
    /// Why the record could not be analysed.
    pub not_analysed: Option<String>,
    /// The analysis, when there is one (for the history).
    pub analysis: Option<crate::analysis::Analysis>,
}

/// Report the run in `dir` (its outputs beside it).
pub fn run(
    dir: &Path,
    judging: &Judging,
    force: bool,
    look: &Look,
) -> Result<RunReport, RunReportError> {
    let req = InputRequest {
        input: dir.to_path_buf(),
        specs: judging.specs.clone(),
        reference: judging.reference.clone(),
        ..InputRequest::default()
    };
    run_input(&req, dir, force, look)
}

/// Where a report of `input` goes unless told: beside a run directory's data, or a new folder
/// `<name>-report` beside a log file.
pub fn default_out(input: &Path) -> PathBuf {
    if input.is_dir() {
        return input.to_path_buf();
    }
    let stem = input
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "log".into());
    input.with_file_name(format!("{stem}-report"))
}

/// A run directory reported against a fixture reference keeps a copy of it, so every later
/// analysis of the run (an import into the history) judges it the same way. A different one
/// already kept is replaced only with `force` (otherwise refused, before anything is written).
fn keep_reference(req: &InputRequest, force: bool) -> Result<(), RunReportError> {
    let Some(given) = req.reference.as_deref().filter(|_| req.input.is_dir()) else {
        return Ok(());
    };
    let kept = req.input.join(crate::run_dir::REFERENCE_FILE);
    let read = |p: &Path| {
        std::fs::read(p).map_err(|source| {
            ReportError::Output(crate::output::OutputError::Io {
                path: p.display().to_string(),
                source,
            })
        })
    };
    let bytes = read(given)?;
    if kept.is_file() && read(&kept)? == bytes {
        return Ok(());
    }
    crate::output::write(&kept, &bytes, force).map_err(ReportError::Output)?;
    Ok(())
}

/// Report any input — a run directory or a logger's CSV file — into `out`.
pub fn run_input(
    req: &InputRequest,
    out: &Path,
    force: bool,
    look: &Look,
) -> Result<RunReport, RunReportError> {
    let loaded = load(req)?;
    keep_reference(req, force)?;
    // the record's raw bytes, which the certificate fingerprints
    let raw = if req.input.is_dir() {
        req.input.join(crate::run_dir::RAW_FILE)
    } else {
        req.input.clone()
    };
    std::fs::create_dir_all(out).map_err(|source| {
        ReportError::Output(crate::output::OutputError::Io {
            path: out.display().to_string(),
            source,
        })
    })?;
    Ok(match loaded.analyze_traced(&req.input) {
        Ok((a, traces)) => RunReport {
            written: report::write_all_as(
                out,
                &report::Subject {
                    series: &loaded.series,
                    analysis: &a,
                    traces: &traces,
                    title: &loaded.title,
                },
                &report::Source {
                    meta: loaded.meta.as_ref(),
                    raw: Some(raw.as_path()).filter(|p| p.is_file()),
                },
                force,
                look,
            )?,
            not_analysed: None,
            analysis: Some(a),
        },
        Err(JobError::Analysis { source, .. }) => {
            let why = source.to_string();
            RunReport {
                written: report::write_unanalysed(
                    out,
                    loaded.meta.as_ref(),
                    &loaded.series,
                    &loaded.title,
                    &why,
                    force,
                    &look.units,
                )?,
                not_analysed: Some(why),
                analysis: None,
            }
        }
        Err(e) => return Err(e.into()),
    })
}
