//! Analyse a lot: every run analysed (those that cannot be are listed, not fatal), the
//! summary with robust outliers, and its outputs (`report::lot_outputs`) in a new folder.

use std::path::{Path, PathBuf};

use super::analyze_input::{load_and_analyze, spec_table, InputRequest, JobError, Judging};
use crate::lot::{self, LotRow, LotSummary};
use crate::output::{self, OutputError};
use crate::plots::PlotError;
use crate::report;

/// The lot job failed.
#[derive(Debug, thiserror::Error)]
pub enum LotError {
    /// None of the runs could be analysed.
    #[error("none of the {0} runs could be analysed")]
    Empty(usize),
    /// The runs are of more than one grade.
    #[error("the runs are of several grades ({0}); a lot is one grade — pass --mixed-grades to compare them anyway")]
    MixedGrades(String),
    /// A run's metadata, the spec table, or the like.
    #[error(transparent)]
    Job(#[from] JobError),
    /// Reading a run's metadata failed.
    #[error(transparent)]
    RunDir(#[from] crate::run_dir::RunDirError),
    /// Writing an output failed.
    #[error(transparent)]
    Output(#[from] OutputError),
    /// The plot failed.
    #[error(transparent)]
    Plot(#[from] PlotError),
}

/// What the lot job did.
pub struct LotOutcome {
    /// The summary.
    pub summary: LotSummary,
    /// Runs left out, with why.
    pub skipped: Vec<(PathBuf, String)>,
    /// Files written.
    pub written: Vec<PathBuf>,
    /// Things the user should know (duplicate runs or magnets, a master that cannot judge).
    pub warnings: Vec<LotWarning>,
    /// Each part against the master sample, when one was given.
    pub against_master: Vec<crate::master::AgainstMaster>,
    /// Each analysed run with its analysis (for the history).
    pub analyses: Vec<(PathBuf, crate::analysis::Analysis)>,
}

/// What the user should know about a lot's analysis (none stops it).
#[derive(Debug, Clone, PartialEq)]
pub enum LotWarning {
    /// The same run given twice.
    SameRun(PathBuf, PathBuf),
    /// One magnet id in two runs.
    SameMagnet(String, PathBuf, PathBuf),
    /// The lot's grade is not in the spec table, so nothing is judged against the master.
    GradeNotInTable,
    /// This part is not the master's shape: its field is not compared with the master's.
    NotMastersShape(String),
}

impl std::fmt::Display for LotWarning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LotWarning::SameRun(a, b) => {
                write!(f, "{} and {} are the same run", a.display(), b.display())
            }
            LotWarning::SameMagnet(id, a, b) => write!(
                f,
                "magnet {id} appears twice ({} and {})",
                a.display(),
                b.display()
            ),
            LotWarning::GradeNotInTable => f.write_str(
                "the lot's grade is not in the spec table: it cannot be judged against the master",
            ),
            LotWarning::NotMastersShape(id) => write!(
                f,
                "{id} is not the master's shape: its field cannot be compared with the master's"
            ),
        }
    }
}

/// Warnings for the same run given twice, or the same magnet id in two runs.
fn duplicates(runs: &[PathBuf], ids: &[(PathBuf, String)]) -> Vec<LotWarning> {
    let mut out = Vec::new();
    let mut seen = std::collections::BTreeMap::new();
    for r in runs {
        let key = std::fs::canonicalize(r).unwrap_or_else(|_| r.clone());
        if let Some(first) = seen.insert(key, r.clone()) {
            out.push(LotWarning::SameRun(first, r.clone()));
        }
    }
    let mut by_id = std::collections::BTreeMap::new();
    for (r, id) in ids {
        if let Some(first) = by_id.insert(id.clone(), r.clone()) {
            if std::fs::canonicalize(&first).ok() != std::fs::canonicalize(r).ok() {
                out.push(LotWarning::SameMagnet(id.clone(), first, r.clone()));
            }
        }
    }
    out
}

/// Analyse `runs` into `out` (a new folder unless `force`); the plot and page in the display
/// units `u`, the CSV files in SI-based units.
pub fn run(
    runs: &[PathBuf],
    out: &Path,
    judging: &Judging,
    mixed_grades: bool,
    force: bool,
    u: &crate::units::DisplayUnits,
) -> Result<LotOutcome, LotError> {
    output::refuse_existing([out.to_path_buf()], force)?;
    let mut rows = Vec::new();
    let mut grades: Vec<String> = Vec::new();
    let mut ids = Vec::new();
    let mut skipped = Vec::new();
    let mut analysed = Vec::new();
    let mut analysed_runs = Vec::new();
    for run in runs {
        let req = InputRequest {
            input: run.clone(),
            specs: judging.specs.clone(),
            reference: judging.reference.clone(),
            ..InputRequest::default()
        };
        let analysis = match load_and_analyze(&req) {
            Ok((_, a)) => a,
            Err(e) => {
                skipped.push((run.clone(), e.to_string()));
                continue;
            }
        };
        let meta = crate::run_dir::read_meta(run)?;
        grades.push(meta.magnet.grade.clone());
        ids.push((run.clone(), meta.magnet.id.clone()));
        rows.push(LotRow::new(&meta.magnet.id, &meta.magnet.grade, &analysis));
        analysed.push((meta.magnet, analysis));
        analysed_runs.push(run.clone());
    }
    if rows.is_empty() {
        return Err(LotError::Empty(runs.len()));
    }
    let mut distinct: Vec<&str> = grades.iter().map(String::as_str).collect();
    distinct.sort_unstable();
    distinct.dedup();
    if distinct.len() > 1 && !mixed_grades {
        return Err(LotError::MixedGrades(distinct.join(", ")));
    }
    let warnings = duplicates(runs, &ids);
    let summary = lot::summarise(rows);
    let table = spec_table(judging.specs.as_deref()).map_err(JobError::from)?;
    // a lot's limits only when it is one grade; a mixed lot names every grade in it
    let spec = (distinct.len() == 1)
        .then(|| grades.first().and_then(|g| table.find(g)))
        .flatten();
    let title = match distinct.as_slice() {
        [one] => format!("{}, grade {one}", magnets(summary.rows.len())),
        many => format!(
            "{}, mixed grades: {}",
            magnets(summary.rows.len()),
            many.join(", ")
        ),
    };
    let mut warnings = warnings;
    let against_master = match (&judging.master, spec) {
        (Some(m), Some(spec)) => {
            let (rows, mut w) = against_master(m, judging, &analysed, spec)?;
            warnings.append(&mut w);
            Some(rows)
        }
        (Some(_), None) => {
            warnings.push(LotWarning::GradeNotInTable);
            None
        }
        _ => None,
    };
    let files = report::lot_outputs(&summary, spec, &title, against_master.as_deref(), u)?;
    std::fs::create_dir_all(out).map_err(|source| OutputError::Io {
        path: out.display().to_string(),
        source,
    })?;
    let written = output::write_set(out, &files, force)?;
    Ok(LotOutcome {
        summary,
        skipped,
        written,
        warnings,
        against_master: against_master.unwrap_or_default(),
        analyses: analysed_runs
            .into_iter()
            .zip(analysed.into_iter().map(|(_, a)| a))
            .collect(),
    })
}

/// Each analysed part against the master run `m`.
fn against_master(
    m: &Path,
    judging: &Judging,
    parts: &[(crate::magnets::MagnetInfo, crate::analysis::Analysis)],
    spec: &crate::specs::GradeSpec,
) -> Result<(Vec<crate::master::AgainstMaster>, Vec<LotWarning>), LotError> {
    let req = InputRequest {
        input: m.to_path_buf(),
        specs: judging.specs.clone(),
        ..InputRequest::default()
    };
    let (_, analysis) = load_and_analyze(&req)?;
    let info = crate::run_dir::read_meta(m)?.magnet;
    let master = crate::master::Master {
        info: &info,
        analysis: &analysis,
    };
    let mut rows = Vec::new();
    let mut warnings = Vec::new();
    for (pi, pa) in parts {
        match crate::master::compare(&master, pi, pa, spec) {
            Some(r) => rows.push(r),
            None => warnings.push(LotWarning::NotMastersShape(pi.id.clone())),
        }
    }
    Ok((rows, warnings))
}

/// `1 magnet`, `12 magnets`.
fn magnets(n: usize) -> String {
    crate::units::count(n as u64, "magnet", "magnets")
}
