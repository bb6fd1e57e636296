//! Calibrating a rig, one guided step at a time: the Hall probe's zero, its offset drift, its
//! sensitivity in a coil, its own temperature coefficient, the thermocouple at the ice point
//! and in boiling water, and the gap from a reference magnet. Each step gets its set-up in
//! place (a person told what to do, or the virtual rig's scene moved), reads until the
//! readings hold still (or over a warming), and writes the constant with its uncertainty and
//! the date into the calibration.

pub mod fixture;
pub mod fixture_fit;
pub mod reading;
pub mod setup;
pub mod steps;

use crate::event::Notice;
use std::io::{Read, Write};
use std::time::Duration;

use crate::calibration::{Calibration, Stamp};
use crate::link::acquisition::Acquisition;
use crate::link::LinkError;
use reading::{Raw, ReadingError, Stillness};
pub use setup::{Setup, VirtualSetup};
use steps::Found;
pub use steps::Step;

/// How a step reads.
#[derive(Debug, Clone, Copy)]
pub struct Options {
    /// When readings count as still.
    pub still: Stillness,
    /// How long a warming is read, s of device time.
    pub warming_s: f64,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            still: Stillness::DEFAULT,
            warming_s: 900.0,
        }
    }
}

/// A calibration step failed.
#[derive(Debug, thiserror::Error)]
pub enum CalibrateError {
    /// Reading failed.
    #[error(transparent)]
    Reading(#[from] ReadingError),
    /// The link failed.
    #[error(transparent)]
    Link(#[from] LinkError),
    /// The set-up could not be arranged.
    #[error("the set-up was not confirmed: {0}")]
    Setup(String),
    /// The readings cannot give the constant.
    #[error("{0}")]
    Unusable(String),
}

/// Progress of a step: live readings and notices.
pub trait Progress {
    /// A reading, as it arrives.
    fn reading(&mut self, raw: &Raw);
    /// Something worth telling the user (words from [`crate::event::words::notice`]).
    fn notice(&mut self, notice: &Notice);
}

/// Run `step` on the device at `port`, updating `cal` (which also converts the probe's
/// thermistor while reading); the constant found.
pub fn run<P: Read + Write>(
    port: P,
    cal: &mut Calibration,
    step: &Step,
    setup: &mut dyn Setup,
    opts: &Options,
    progress: &mut dyn Progress,
) -> Result<Found, CalibrateError> {
    let silence = Duration::from_secs(30);
    let (mut acq, _, _) = Acquisition::connect(port, *cal, silence)?;
    progress.notice(&Notice::StepInstructions(step.kind()));
    setup
        .arrange(step, &mut |n| progress.notice(n))
        .map_err(|e| CalibrateError::Setup(e.to_string()))?;
    // the device's clock now, and what it read before the set-up was in place, are learnt
    // from the next samples
    let mut seen = Vec::new();
    while seen.is_empty() {
        reading::next(&mut acq, cal, f64::NEG_INFINITY, &mut seen, &mut |_| {})?;
    }
    let from_s = seen.last().map_or(0.0, |r| r.time_s) + reading::SETTLE_S;
    let mut show = |r: &Raw| progress.reading(r);
    let w = if step.warming() {
        reading::over(&mut acq, cal, from_s, opts.warming_s, &mut show)?
    } else {
        let what = match step {
            Step::IcePoint | Step::BoilingPoint(_) => reading::Quantity::THERMOCOUPLE,
            _ => reading::Quantity::HALL,
        };
        reading::until_still(&mut acq, cal, from_s, opts.still, what, &mut show)?
    };
    setup.release();
    let now = Some(Stamp::now());
    let unusable = || {
        CalibrateError::Unusable(
            "the readings did not vary enough to fit a slope: warm the probe further".into(),
        )
    };
    let found = match step {
        Step::Zero => {
            cal.dates.hall_zero = now;
            steps::zero(cal, &w)
        }
        Step::OffsetDrift => {
            cal.dates.offset_drift = now;
            steps::offset_drift(cal, &w).ok_or_else(unusable)?
        }
        Step::Sensitivity(c) => {
            cal.dates.sensitivity = now;
            steps::sensitivity(cal, &w, c)
        }
        Step::ProbeTc(c) => {
            cal.dates.probe_tc = now;
            steps::probe_tc(cal, &w, c).ok_or_else(unusable)?
        }
        Step::IcePoint => {
            cal.dates.ice_point = now;
            steps::ice_point(cal, &w)
        }
        Step::BoilingPoint(p) => {
            cal.dates.boiling_point = now;
            steps::boiling_point(cal, &w, *p)
        }
        Step::Gap(r) => {
            cal.dates.gap = now;
            steps::gap(cal, &w, r).ok_or_else(|| {
                CalibrateError::Unusable("the reference magnet's field is outside what its shape gives at any gap: is it the stated magnet, and is the probe's sensitivity calibrated?".into())
            })?
        }
    };
    Ok(found)
}
