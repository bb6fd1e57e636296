//! The calibrate workflow: run the chosen steps in order on a bench or the virtual rig,
//! starting from a calibration file (or the nominal constants of the reference design), and
//! write the result with every step's date — each step's result saved as soon as it is found,
//! so a later step's failure loses nothing.

use std::io::{Read, Write};
use std::path::{Path, PathBuf};

pub mod procedure;

use crate::calibration::{Calibration, CalibrationError};
use crate::output::{self, OutputError};
use procedure::steps::Found;
use procedure::{CalibrateError, Options, Progress, Setup, Step};
use remanent_rig_model::RigParams;

/// The calibrate workflow failed.
#[derive(Debug, thiserror::Error)]
pub enum CalibrateJobError {
    /// The starting calibration could not be read.
    #[error(transparent)]
    From(#[from] CalibrationError),
    /// A step failed (the steps before it are saved).
    #[error("{step}: {source}")]
    Step {
        /// The step, in words.
        step: String,
        /// Why.
        source: CalibrateError,
    },
    /// The result could not be written.
    #[error(transparent)]
    Output(#[from] OutputError),
}

/// Where the calibration starts and where it goes.
pub struct Files {
    /// Start from this calibration (default: the reference design's nominal constants).
    pub from: Option<PathBuf>,
    /// Write here.
    pub out: PathBuf,
    /// Replace `out` if it is there.
    pub force: bool,
}

/// The calibration to start from.
pub fn starting_point(from: Option<&Path>) -> Result<Calibration, CalibrationError> {
    match from {
        Some(p) => Calibration::load(p),
        None => {
            let mut c = Calibration::virtual_rig(&RigParams::REFERENCE);
            c.dates = Default::default();
            Ok(c)
        }
    }
}

fn save(cal: &Calibration, out: &Path, force: bool) -> Result<(), OutputError> {
    let text = toml::to_string(cal).expect("a calibration serializes");
    output::write(out, text.as_bytes(), force)
}

/// Run `steps` in order on `port`; the calibration written to `files.out` after each step.
pub fn run<P: Read + Write>(
    mut port: P,
    steps: &[Step],
    files: &Files,
    setup: &mut dyn Setup,
    opts: &Options,
    progress: &mut dyn Progress,
) -> Result<(Calibration, Vec<Found>), CalibrateJobError> {
    let mut cal = starting_point(files.from.as_deref())?;
    output::refuse_existing([files.out.clone()], files.force)?;
    let mut found = Vec::new();
    for step in steps {
        let f =
            procedure::run(&mut port, &mut cal, step, setup, opts, progress).map_err(|source| {
                CalibrateJobError::Step {
                    step: crate::event::words::step_name(step.kind()).to_string(),
                    source,
                }
            })?;
        progress.notice(&crate::event::Notice::StepFound {
            summary: f.summary.clone(),
            warning: f.warning.clone(),
        });
        // after the first step the file is ours to update
        save(&cal, &files.out, files.force || !found.is_empty())?;
        found.push(f);
    }
    Ok((cal, found))
}

/// Identify the fixture on `port` and keep it, dated, in the calibration from `files.from`,
/// written to `files.out`; the calibration and the fit.
pub fn identify_fixture<P: Read + Write>(
    port: P,
    files: &Files,
    plan: &crate::jobs::calibrate::procedure::fixture::Plan,
    progress: &mut dyn crate::jobs::calibrate::procedure::fixture::Progress,
) -> Result<
    (
        Calibration,
        crate::jobs::calibrate::procedure::fixture_fit::Fitted,
    ),
    CalibrateJobError,
> {
    use crate::jobs::calibrate::procedure::fixture;
    let mut cal = starting_point(files.from.as_deref())?;
    output::refuse_existing([files.out.clone()], files.force)?;
    let (found, fitted) = fixture::identify(port, &cal, plan, progress).map_err(|source| {
        CalibrateJobError::Step {
            step: "fixture".into(),
            source,
        }
    })?;
    fixture::keep(&mut cal, found);
    save(&cal, &files.out, true)?;
    Ok((cal, fitted))
}
