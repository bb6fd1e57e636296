//! History workflows: store a finished record or an analysis as it happens, and import run
//! directories made before (or while the store was away). A failure here never touches the
//! run directory, which stays the record of truth.

use std::path::{Path, PathBuf};

use super::analyze_input::{load_and_analyze, InputRequest, JobError, Judging};
use crate::analysis::Analysis;
use crate::history::entry::fingerprint;
use crate::history::{Location, RunEntry, Store, StoreError};
use crate::inspection::Inspection;
use crate::run_dir::{read_meta, RunDirError, META_FILE};

/// A history workflow failed.
#[derive(Debug, thiserror::Error)]
pub enum HistoryError {
    /// The store.
    #[error(transparent)]
    Store(#[from] StoreError),
    /// A run directory.
    #[error(transparent)]
    RunDir(#[from] RunDirError),
    /// A file could not be read.
    #[error("{path}: {reason}")]
    Read {
        /// Which.
        path: String,
        /// Why.
        reason: String,
    },
    /// Nothing to import.
    #[error("{0}: no run directory (a folder with run.toml) here or in its sub-folders")]
    NoRuns(String),
}

/// The store entry of an input: its run directory's `run.toml`, or a log file's content.
pub fn entry_for(input: &Path, analysis: &Analysis) -> Result<RunEntry, HistoryError> {
    if input.is_dir() {
        let meta = read_meta(input)?;
        let mut e = RunEntry::from_run(input, &meta);
        e.inspection = meta.inspection.or(&analysis.provenance.inspection);
        return Ok(e);
    }
    Ok(RunEntry::from_log(input, &content_key(input)?, analysis))
}

/// A log file's identity: its length, first and last MiB (the same file copied elsewhere is
/// the same log).
fn content_key(file: &Path) -> Result<String, HistoryError> {
    use std::io::{Read, Seek, SeekFrom};
    let err = |e: std::io::Error| HistoryError::Read {
        path: file.display().to_string(),
        reason: e.to_string(),
    };
    let mut f = std::fs::File::open(file).map_err(err)?;
    let len = f.metadata().map_err(err)?.len();
    let mut head = Vec::new();
    (&mut f).take(1 << 20).read_to_end(&mut head).map_err(err)?;
    let mut tail = Vec::new();
    f.seek(SeekFrom::Start(len.saturating_sub(1 << 20)))
        .map_err(err)?;
    f.read_to_end(&mut tail).map_err(err)?;
    Ok(fingerprint(&[
        &len.to_string(),
        &String::from_utf8_lossy(&head),
        &String::from_utf8_lossy(&tail),
    ]))
}

/// Store a finished record; true if it was new.
pub fn store_record(at: &Location, dir: &Path) -> Result<bool, HistoryError> {
    let meta = read_meta(dir)?;
    Ok(Store::open(at)?.put_run(&RunEntry::from_run(dir, &meta))?)
}

/// Store an analysis of `input` (and its run, if the store lacks it); true if it was new.
pub fn store_analysis(at: &Location, input: &Path, a: &Analysis) -> Result<bool, HistoryError> {
    let entry = entry_for(input, a)?;
    Ok(Store::open(at)?.put_analysis(&entry, a)?)
}

/// Store the analysis of a report and file the certificate it wrote, if it wrote one (its
/// `certificate.toml` among `written`), in the store; true if the analysis was new.
pub fn store_reported(
    at: &Location,
    input: &Path,
    a: &Analysis,
    written: &[PathBuf],
) -> Result<bool, HistoryError> {
    use crate::report::seal;
    let entry = entry_for(input, a)?;
    let mut store = Store::open(at)?;
    // one row, stored and then named by the certificate
    let row = crate::history::entry::analysis_row(&entry.run_uid, a);
    let (_, new) = store.put_filed(&entry, &row)?;
    let Some(file) = written.iter().find(|f| f.ends_with(seal::SEAL_FILE)) else {
        return Ok(new);
    };
    let (s, folder) = seal::read_seal(file).map_err(|e| HistoryError::Read {
        path: file.display().to_string(),
        reason: e.to_string(),
    })?;
    let folder = std::fs::canonicalize(&folder).unwrap_or(folder);
    store.put_certificate(&crate::history::CertificateEntry {
        number: s.number,
        run_uid: entry.run_uid.clone(),
        analysis_uid: row
            .values
            .first()
            .and_then(crate::history::Value::text)
            .unwrap_or_default(),
        issued_utc: s.issued_utc,
        issuer: s.issuer,
        folder: folder.display().to_string(),
        raw_file: s.raw_file.display().to_string(),
        raw_sha256: s.raw_sha256,
        analysis_file: s.analysis_file.display().to_string(),
        analysis_sha256: s.analysis_sha256,
    })?;
    Ok(new)
}

/// Store several analyses (a lot's) in one transaction; true if any was new.
pub fn store_analyses(at: &Location, items: &[(PathBuf, Analysis)]) -> Result<bool, HistoryError> {
    let entries = items
        .iter()
        .map(|(input, a)| Ok((entry_for(input, a)?, a)))
        .collect::<Result<Vec<_>, HistoryError>>()?;
    Ok(Store::open(at)?.put_many(&entries)?.1 > 0)
}

/// What an import did.
#[derive(Debug, Default, PartialEq)]
pub struct Imported {
    /// Run directories found.
    pub found: usize,
    /// Runs new to the store.
    pub new_runs: u64,
    /// Analyses new to the store.
    pub new_analyses: u64,
    /// Runs whose filed `analysis.json` was stored as it was filed.
    pub as_filed: u64,
    /// Runs analysed here (no analysis filed with them, or `reanalyse`).
    pub analysed: u64,
    /// Runs stored without an analysis, with why it could not be made.
    pub not_analysed: Vec<(PathBuf, String)>,
    /// Filed analyses that could not be read (the run was analysed here instead), with why.
    pub unreadable_filed: Vec<(PathBuf, String)>,
}

/// A run's filed analysis (its `analysis.json`, as the report wrote it), as a store row; `None`
/// when the run has none.
fn filed(dir: &Path, run_uid: &str) -> Option<Result<crate::history::entry::AnalysisRow, String>> {
    let file = dir.join(crate::report::JSON_FILE);
    let text = std::fs::read_to_string(&file).ok()?;
    Some(
        serde_json::from_str::<serde_json::Value>(&text)
            .map_err(|e| format!("{}: {e}", file.display()))
            .and_then(|json| {
                crate::history::entry::filed_row(run_uid, &json).ok_or_else(|| {
                    format!(
                        "{}: not an analysis (no provenance, verdict or fit method)",
                        file.display()
                    )
                })
            }),
    )
}

/// Every run directory at or directly under each path (sorted).
pub fn run_dirs(paths: &[PathBuf]) -> Result<Vec<PathBuf>, HistoryError> {
    let mut out = Vec::new();
    for p in paths {
        if p.join(META_FILE).is_file() {
            out.push(p.clone());
            continue;
        }
        let rd = std::fs::read_dir(p).map_err(|e| HistoryError::Read {
            path: p.display().to_string(),
            reason: e.to_string(),
        })?;
        let mut here: Vec<PathBuf> = rd
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|d| d.join(META_FILE).is_file())
            .collect();
        if here.is_empty() {
            return Err(HistoryError::NoRuns(p.display().to_string()));
        }
        here.sort();
        out.extend(here);
    }
    Ok(out)
}

/// Import run directories: each run, with `given` filling in the lot, order, supplier or
/// operator it lacks, and its analysis *as filed* (the `analysis.json` its report wrote: the
/// verdict its certificate states). A run filed with no analysis is analysed here (with its own
/// calibration and kept reference, judged as `judging` says); `reanalyse` analyses every run
/// again and keeps the new analysis beside the filed one (it becomes the run's latest).
/// Importing the same runs again changes nothing.
pub fn import(
    at: &Location,
    paths: &[PathBuf],
    given: &Inspection,
    judging: &Judging,
    reanalyse: bool,
) -> Result<Imported, HistoryError> {
    let dirs = run_dirs(paths)?;
    let mut store = Store::open(at)?;
    let mut done = Imported {
        found: dirs.len(),
        ..Default::default()
    };
    for dir in dirs {
        let meta = read_meta(&dir)?;
        let mut entry = RunEntry::from_run(&dir, &meta);
        entry.inspection = meta.inspection.or(given);
        let mut have_filed = false;
        match filed(&dir, &entry.run_uid) {
            Some(Ok(row)) => {
                let (r, n) = store.put_filed(&entry, &row)?;
                done.new_runs += u64::from(r);
                done.new_analyses += u64::from(n);
                done.as_filed += 1;
                have_filed = true;
            }
            Some(Err(why)) => done.unreadable_filed.push((dir.clone(), why)),
            None => {}
        }
        if have_filed && !reanalyse {
            continue;
        }
        let req = InputRequest {
            input: dir.clone(),
            specs: judging.specs.clone(),
            reference: judging.reference.clone(),
            inspection: given.clone(),
            ..InputRequest::default()
        };
        match load_and_analyze(&req) {
            Ok((_, a)) => {
                let (r, n) = store.put_many(&[(entry, &a)])?;
                done.new_runs += r;
                done.new_analyses += n;
                done.analysed += 1;
            }
            Err(e @ (JobError::Analysis { .. } | JobError::Dataset(_))) => {
                done.new_runs += u64::from(store.put_run(&entry)?);
                done.not_analysed.push((dir, e.to_string()));
            }
            Err(e) => {
                return Err(HistoryError::Read {
                    path: dir.display().to_string(),
                    reason: e.to_string(),
                })
            }
        }
    }
    Ok(done)
}
