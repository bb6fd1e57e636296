//! Report a run: analyse it and write every output, or — when the record cannot be
//! analysed — its time series and a plain statement of why.

use std::path::{Path, PathBuf};

use super::analyze_input::{load, InputRequest, JobError, Judging};
use crate::report::{self, ReportError};

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

/// Report the run in `dir`.
pub fn run(
    dir: &Path,
    judging: &Judging,
    force: bool,
    paper: crate::report::pdf_flow::Paper,
) -> Result<RunReport, RunReportError> {
    let req = InputRequest {
        input: dir.to_path_buf(),
        specs: judging.specs.clone(),
        reference: judging.reference.clone(),
        ..InputRequest::default()
    };
    let loaded = load(&req)?;
    Ok(match loaded.analyze(dir) {
        Ok(a) => RunReport {
            written: report::write_all_on(dir, &loaded.series, &a, &loaded.title, force, paper)?,
            not_analysed: None,
            analysis: Some(a),
        },
        Err(JobError::Analysis { source, .. }) => {
            let why = source.to_string();
            RunReport {
                written: report::write_unanalysed(dir, &loaded.series, &loaded.title, &why, force)?,
                not_analysed: Some(why),
                analysis: None,
            }
        }
        Err(e) => return Err(e.into()),
    })
}
