//! Analyse an input: a run directory (with its own calibration and magnet, or a new
//! calibration) or a CSV log (with a magnet and column mapping given), against a spec table.

use std::path::{Path, PathBuf};

use crate::analysis::{analyze_traced, Analysis, AnalysisError, Context, Traces};
use crate::calibration::{Calibration, CalibrationError};
use crate::input::dataset::{self, CsvOptions, InputError, Series};
use crate::magnets::{self, MagnetError};
use crate::specs::{SpecError, SpecTable};

pub use crate::analysis::DEFAULT_TC_GAIN_PCT;

/// A workflow failed.
#[derive(Debug, thiserror::Error)]
pub enum JobError {
    /// The input could not be read.
    #[error(transparent)]
    Dataset(#[from] InputError),
    /// A calibration could not be read.
    #[error(transparent)]
    Calibration(#[from] CalibrationError),
    /// A spec table could not be read.
    #[error(transparent)]
    Specs(#[from] SpecError),
    /// A magnet could not be found or read.
    #[error(transparent)]
    Magnet(#[from] MagnetError),
    /// A fixture reference could not be read.
    #[error(transparent)]
    Reference(#[from] crate::analysis::fixture_ref::ReferenceError),
    /// The analysis could not produce α.
    #[error("analysing {path}: {source}")]
    Analysis {
        /// The input.
        path: String,
        /// Why.
        source: AnalysisError,
    },
}

/// What to analyse and with what.
#[derive(Debug, Clone, Default)]
pub struct InputRequest {
    /// A run directory or a CSV file.
    pub input: PathBuf,
    /// Re-convert a run with this calibration (or use it for a CSV log).
    pub calibration: Option<PathBuf>,
    /// Grade spec table; default: the built-in one.
    pub specs: Option<PathBuf>,
    /// The magnet, for CSV input (demo part id or TOML file).
    pub magnet: Option<String>,
    /// CSV column mapping, ours → theirs.
    pub columns: Vec<(String, String)>,
    /// For CSV input: the probe's sensitivity coefficient, %/°C.
    pub probe_tc_pct_per_c: Option<f64>,
    /// For CSV input: no repairs (`--strict`).
    pub strict: bool,
    /// Refer Br to this fixture reference (`remanent reference`).
    pub reference: Option<PathBuf>,
    /// Lot, order, supplier, operator: for a CSV log, or where a run's `run.toml` has none.
    pub inspection: crate::inspection::Inspection,
}

/// What a verdict is judged against: the spec table and, when given, the fixture reference
/// Br is referred to.
#[derive(Debug, Clone, Default)]
pub struct Judging {
    /// Grade spec table; default: the built-in one.
    pub specs: Option<PathBuf>,
    /// Fixture reference (`remanent reference`).
    pub reference: Option<PathBuf>,
    /// For a lot: the run of a master sample of the grade to judge each part against.
    pub master: Option<PathBuf>,
}

/// An analysed input.
pub struct Analyzed {
    /// The series as loaded and converted.
    pub series: Series,
    /// Everything the analysis needed besides the series.
    pub context: Context,
    /// A title for reports: the magnet and the run.
    pub title: String,
    /// The run was recorded without a valid calibration and is converted with what it had.
    pub uncalibrated: bool,
    /// What is being analysed, for the machine-readable result.
    pub provenance: crate::analysis::result::Provenance,
    /// The run's own facts (none for a logger's CSV): every report takes them from here,
    /// never from where its outputs go.
    pub meta: Option<crate::run_dir::RunMeta>,
}

/// The spec table asked for, or the built-in one.
pub fn spec_table(path: Option<&Path>) -> Result<SpecTable, SpecError> {
    match path {
        Some(p) => SpecTable::load(p),
        None => Ok(SpecTable::builtin()),
    }
}

/// The file or folder name of `p`.
pub fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Load and convert the input, without analysing it yet.
pub fn load(req: &InputRequest) -> Result<Analyzed, JobError> {
    let specs = spec_table(req.specs.as_deref())?;
    let calibration = req
        .calibration
        .as_deref()
        .map(Calibration::load)
        .transpose()?;
    let mut uncalibrated = false;
    let mut provenance = crate::analysis::result::Provenance {
        run: file_name(&req.input),
        ..Default::default()
    };
    let mut meta = None;
    let (series, calibration, magnet, title) = if req.input.is_dir() {
        let recalibrated = calibration.is_some();
        let (s, src) = dataset::load_run(&req.input, calibration)?;
        if let Some(m) = &src.meta {
            provenance.started_utc = Some(m.started_utc.clone());
            provenance.finished_utc = m.finished_utc.clone();
            provenance.inspection = m.inspection.clone();
        }
        uncalibrated = !recalibrated
            && src.meta.as_ref().and_then(|m| m.calibration_basis)
                == Some(crate::calibration::policy::Basis::Uncalibrated);
        meta = src.meta.clone();
        let run_name = file_name(&req.input);
        let title = src
            .magnet
            .as_ref()
            .map(|m| format!("{} ({}), run {run_name}", m.id, m.grade))
            .unwrap_or(run_name);
        (s, src.calibration, src.magnet, title)
    } else {
        let opts = CsvOptions {
            rename: req.columns.iter().cloned().collect(),
            probe_tc_pct_per_c: req.probe_tc_pct_per_c,
            strict: req.strict,
        };
        let s = dataset::load_csv(&req.input, &opts)?;
        let m = req
            .magnet
            .as_deref()
            .map(magnets::resolve)
            .transpose()?
            .map(|m| m.info);
        let title = m
            .as_ref()
            .map(|m| format!("{} ({})", m.id, m.grade))
            .unwrap_or_else(|| file_name(&req.input));
        (s, calibration, m, title)
    };
    // the reference asked for, or the one the run was judged with, kept beside it
    let kept = Some(req.input.join(crate::run_dir::REFERENCE_FILE))
        .filter(|p| req.input.is_dir() && p.is_file());
    let reference = req
        .reference
        .clone()
        .or(kept)
        .as_deref()
        .map(crate::analysis::fixture_ref::FixtureReference::load)
        .transpose()?;
    let context = Context {
        calibration,
        magnet,
        specs,
        default_tc_gain_pct: DEFAULT_TC_GAIN_PCT,
        reference,
    };
    provenance.inspection = provenance.inspection.or(&req.inspection);
    provenance.magnet_id = context.magnet.as_ref().map(|m| m.id.clone());
    provenance.grade = context.magnet.as_ref().map(|m| m.grade.clone());
    Ok(Analyzed {
        series,
        context,
        title,
        uncalibrated,
        provenance,
        meta,
    })
}

impl Analyzed {
    /// Run the analysis: the result alone.
    pub fn analyze(&self, input: &Path) -> Result<Analysis, JobError> {
        self.analyze_traced(input).map(|(a, _)| a)
    }

    /// Run the analysis: the result, and beside it the traces the plots draw.
    pub fn analyze_traced(&self, input: &Path) -> Result<(Analysis, Traces), JobError> {
        let (mut a, traces) =
            analyze_traced(&self.series, &self.context).map_err(|source| JobError::Analysis {
                path: input.display().to_string(),
                source,
            })?;
        a.provenance = self.provenance.clone();
        a.provenance.analysed_utc =
            crate::timestamps::format_utc(crate::calibration::Stamp::now().0);
        if self.uncalibrated {
            a.input.uncalibrated = true;
            a.notes.insert(0, "UNCALIBRATED BENCH: recorded without a valid calibration (--uncalibrated); re-convert it with `analyze --calibration` once the bench is calibrated".into());
        }
        Ok((a, traces))
    }
}

/// Load, convert and analyse the input.
pub fn load_and_analyze(req: &InputRequest) -> Result<(Analyzed, Analysis), JobError> {
    let loaded = load(req)?;
    let analysis = loaded.analyze(&req.input)?;
    Ok((loaded, analysis))
}
