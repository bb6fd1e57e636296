//! The reference workflow: read a reference magnet of known Br in the fixture at room
//! temperature (one placement or several, each when its reading holds still), refer the
//! readings to 20 °C, and keep the fixture's reference with its uncertainty.

use std::io::{Read, Write};
use std::sync::mpsc::Receiver;

use crate::analysis::fixture_ref::{FixtureReference, DEFAULT_REPEATABILITY_PCT};
use crate::calibration::policy::Policy;
use crate::calibration::{Calibration, Stamp};
use crate::jobs::survey::{self, SurveyOptions, SurveyProgress};
use crate::link::LinkError;
use crate::magnets::MagnetFile;
use crate::specs::SpecTable;

/// The reference could not be measured.
#[derive(Debug, thiserror::Error)]
pub enum ReferenceJobError {
    /// The magnet has no certified Br.
    #[error("{0} has no [reference] section with its certified Br (br_T, br_u_T, source)")]
    NotAReference(String),
    /// The link failed, or the bench may not measure.
    #[error(transparent)]
    Link(#[from] LinkError),
    /// Nothing was read.
    #[error("no stable reading of the reference magnet was taken: is it in the fixture?")]
    NoReading,
}

/// How sure the referral to 20 °C is: the grade's α range as a rectangular spread, %/°C.
fn alpha_for(m: &MagnetFile, specs: &SpecTable) -> (f64, f64) {
    match specs.find(&m.info.grade) {
        Some(s) => (
            0.5 * (s.alpha_min + s.alpha_max),
            (s.alpha_max - s.alpha_min).abs() / 2.0 / 3f64.sqrt(),
        ),
        None => (m.model.map_or(-0.11, |x| x.alpha_pct_per_c), 0.02),
    }
}

/// Read the reference `magnet` on `port` in `placements` placements.
pub fn measure<P: Read + Write>(
    port: P,
    magnet: &MagnetFile,
    calibration: Calibration,
    policy: Policy,
    placements: usize,
    confirm: Option<Receiver<()>>,
    progress: &mut dyn SurveyProgress,
) -> Result<FixtureReference, ReferenceJobError> {
    let known = magnet
        .info
        .reference
        .clone()
        .ok_or_else(|| ReferenceJobError::NotAReference(magnet.info.id.clone()))?;
    let mut opts = SurveyOptions::new(calibration, placements.max(1));
    opts.policy = policy;
    let readings = survey::run(port, &opts, confirm, progress)?;
    if readings.is_empty() {
        return Err(ReferenceJobError::NoReading);
    }
    let (alpha, alpha_u) = alpha_for(magnet, &SpecTable::builtin());
    let b20: Vec<f64> = readings
        .iter()
        .map(|r| remanent_physics::reversible::refer_to_20c(r.flux_mt, r.temp_c, alpha))
        .collect();
    let n = b20.len() as f64;
    let mean = b20.iter().sum::<f64>() / n;
    // within a reading: its scatter over the window, ten samples to an independent one
    let within = readings
        .iter()
        .map(|r| (r.rel_sd * r.flux_mt).powi(2) / 3.0)
        .sum::<f64>()
        .sqrt()
        / n;
    let dt = readings
        .iter()
        .map(|r| (r.temp_c - 20.0).abs())
        .fold(0.0, f64::max);
    let referral = mean * alpha_u / 100.0 * dt;
    let repeatability_pct = if readings.len() >= 2 {
        let sd = (b20.iter().map(|b| (b - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        sd / mean * 100.0
    } else {
        DEFAULT_REPEATABILITY_PCT
    };
    Ok(FixtureReference {
        magnet: magnet.info.id.clone(),
        shape: magnet.info.shape,
        br_t: known.br_t,
        br_u_t: known.br_u_t,
        source: known.source,
        b20_mt: mean,
        b20_u_mt: (within * within + referral * referral).sqrt(),
        repeatability_pct,
        placements: readings.len(),
        gap_mm: calibration.gap.standoff.gap_mm,
        gap_u_mm: calibration.gap.gap_u_mm,
        made: Stamp::now(),
    })
}
