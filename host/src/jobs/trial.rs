//! A profile tried on the in-process virtual rig with a demo part whose truth is known: how
//! long the fixture is occupied and how far α and the loss land from the truth. What the
//! throughput benchmark tabulates and the accuracy tests hold to the goal.

use std::path::Path;
use std::time::Duration;

use super::analyze_input::{load, InputRequest, JobError};
use crate::analysis::{Analysis, Traces};
use crate::calibration::Calibration;
use crate::jobs::record::auto_end::Tolerance;
use crate::jobs::record::{record, Quiet, RecordEnd, RecordError, RecordOptions};
use crate::magnets::{self, MagnetError};
use crate::profiles::ProfileSpec;
use crate::virtual_rig::{SimulatedPort, VirtualRigOptions};

/// What a trial asks for.
#[derive(Debug, Clone)]
pub struct TrialSpec {
    /// A demo part with a model (`remanent magnets`).
    pub magnet: String,
    /// The magnet's thermal lag behind the thermocouple, s.
    pub magnet_tau_s: f64,
    /// The profile.
    pub profile: ProfileSpec,
    /// End when the analysis can (None: run the profile out).
    pub auto_end: Option<Tolerance>,
    /// Rest before heating, s.
    pub preroll_s: f64,
    /// Noise seed.
    pub seed: u64,
}

/// How a trial went.
#[derive(Debug, Clone)]
pub struct Trial {
    /// The analysis of the run directory.
    pub analysis: Analysis,
    /// The per-sample traces beside it (what the plots draw).
    pub traces: Traces,
    /// How the record ended.
    pub end: RecordEnd,
    /// Device time from the first sample to the last: the fixture's occupation, s.
    pub fixture_s: f64,
    /// α's error against the model's mean coefficient over the fitted range, %/°C.
    pub alpha_error_pct_per_c: f64,
    /// The loss's error against the loss the model applied, % (None: no loss computed).
    pub loss_error_pct: Option<f64>,
    /// The loss the model applied, %.
    pub loss_truth_pct: f64,
    /// Samples missing in gaps.
    pub gap_samples: u64,
}

impl Trial {
    /// α and the loss within `t` of the truth and inside their own U95.
    pub fn meets(&self, t: &Tolerance) -> bool {
        let a = &self.analysis;
        let alpha = self.alpha_error_pct_per_c.abs();
        let loss_ok = match (self.loss_error_pct, a.loss.u95_pct) {
            (Some(e), Some(u)) => e.abs() <= t.loss_u95_pct && e.abs() <= u,
            _ => false,
        };
        alpha <= t.alpha_u95_pct_per_c && alpha <= a.alpha.u95_pct_per_c && loss_ok
    }
}

/// A trial could not run.
#[derive(Debug, thiserror::Error)]
pub enum TrialError {
    /// Not a demo part with a model.
    #[error(transparent)]
    Magnet(#[from] MagnetError),
    /// No model to simulate.
    #[error("{0} has no model for the virtual rig")]
    NoModel(String),
    /// Recording failed.
    #[error(transparent)]
    Record(#[from] RecordError),
    /// Analysing failed.
    #[error(transparent)]
    Job(#[from] JobError),
}

/// Record `spec` into `out` (a new directory) on the in-process rig and analyse it.
pub fn run(spec: &TrialSpec, out: &Path) -> Result<Trial, TrialError> {
    let part = magnets::resolve(&spec.magnet)?;
    let model = part
        .model
        .ok_or_else(|| TrialError::NoModel(spec.magnet.clone()))?;
    let mut rig = VirtualRigOptions::new(model);
    rig.params.thermal.magnet_tau_s = spec.magnet_tau_s;
    rig.seed = spec.seed;
    let params = rig.params;
    let mut port = SimulatedPort::new(rig);
    let rec = RecordOptions {
        port_label: "simulated".into(),
        silence_timeout: Duration::from_secs(5),
        preroll_s: spec.preroll_s,
        auto_end: spec.auto_end,
        ..RecordOptions::new(
            part.info,
            spec.profile.clone(),
            Calibration::virtual_rig(&params),
            out.to_path_buf(),
        )
    };
    let summary = record(&mut port, rec, &mut Quiet)?;
    let truth = port.bench().truth();
    let loaded = load(&InputRequest {
        input: out.to_path_buf(),
        ..Default::default()
    })?;
    let (analysis, traces) = loaded.analyze_traced(out)?;
    let t = &loaded.series.time_s;
    let fixture_s = t.last().copied().unwrap_or(0.0) - t.first().copied().unwrap_or(0.0);
    let top = analysis.alpha.range_c[1];
    let alpha_truth = model.mean_alpha_pct_per_c(top);
    let loss_truth_pct = truth.irreversible * 100.0;
    Ok(Trial {
        alpha_error_pct_per_c: analysis.alpha.pct_per_c - alpha_truth,
        loss_error_pct: analysis.loss.pct.map(|l| l - loss_truth_pct),
        loss_truth_pct,
        analysis,
        traces,
        end: summary.end,
        fixture_s,
        gap_samples: summary.counts.gap_samples,
    })
}

/// The accuracy sweep's parts: (demo part, the magnet's lag τ, s) — a sintered NdFeB disc, a
/// Sm2Co17 disc, a ferrite block with a long lag and an AlNiCo rod.
pub const SWEEP: [(&str, f64); 4] = [
    ("RM-N42SH-D10x5", 45.0),
    ("RM-S2C17-D10x5", 20.0),
    ("RM-F8-B20x15x5", 90.0),
    ("RM-A5-D10x10", 60.0),
];
