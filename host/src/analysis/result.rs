//! The analysis's result, grouped by the step that produced each part (the input, the lag, α,
//! the loss, Br, the judgement, the cycles, the notes), and apart from it the per-sample traces
//! the plots draw. `analysis.json` is written from it in its fixed layout ([`super::layout`]).

use serde::Serialize;

pub use super::budget::{BudgetLine, Distribution};
use super::geometry::BrEstimate;
use super::model::Quadratic;
use super::segments::Segments;
use super::verdict::{Check, Outcome};
use crate::units::Phrase;

/// How α's fit was made, as `analysis.json` codes it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FitMethod {
    /// Both lag-corrected ramps.
    Ramps,
    /// The lag-corrected cooling branch (the part lost flux on the way up).
    CoolingBranch,
    /// The ends of the holds.
    SoakPoints,
    /// The heating branch below where the field collapsed (a Curie sweep).
    HeatingBelowCollapse,
    /// One ramp alone, the lag taken from a band.
    SingleRamp,
}

/// How the irreversible loss was found, as `analysis.json` codes it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LossMethod {
    /// The flux at rest before and after, referred to one temperature.
    References,
    /// Heating against cooling at the same temperature (a record with no return).
    Branches,
    /// The total over several heat cycles.
    Cycles,
}

impl FitMethod {
    /// The code, as `analysis.json` writes it.
    pub fn code(self) -> &'static str {
        match self {
            FitMethod::Ramps => "ramps",
            FitMethod::CoolingBranch => "cooling_branch",
            FitMethod::SoakPoints => "soak_points",
            FitMethod::HeatingBelowCollapse => "heating_below_collapse",
            FitMethod::SingleRamp => "single_ramp",
        }
    }
}

/// A method compares equal to its code (`a.fit_method_code == "ramps"`).
impl PartialEq<&str> for FitMethod {
    fn eq(&self, code: &&str) -> bool {
        self.code() == *code
    }
}

/// One heat cycle of a record with several.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CycleResult {
    /// Where it starts and ends, device time, s.
    #[serde(rename = "span_s")]
    pub span_s: [f64; 2],
    /// Its highest magnet temperature, °C.
    #[serde(rename = "peak_C")]
    pub peak_c: f64,
    /// The flux it lost, relative to the flux it started with, %.
    pub irreversible_loss_pct: Option<f64>,
    /// Its expanded uncertainty (k = 2), %.
    pub irreversible_loss_u95_pct: Option<f64>,
}

/// The version of `analysis.json`'s layout (hardware-notes/file-formats.md); raised whenever a
/// field changes meaning or goes away.
pub const SCHEMA_VERSION: u32 = 1;

/// What was analysed: the magnet, the run and when.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Provenance {
    /// The magnet's id, when known.
    pub magnet_id: Option<String>,
    /// Its stated grade, when known.
    pub grade: Option<String>,
    /// The run directory's or the log file's name.
    pub run: String,
    /// When the record started and finished (UTC), for a run directory.
    pub started_utc: Option<String>,
    /// When it finished.
    pub finished_utc: Option<String>,
    /// When this analysis was made (UTC).
    pub analysed_utc: String,
    /// Lot, purchase order, supplier and operator (each absent when not stated).
    pub inspection: crate::inspection::Inspection,
}

/// What the input held and what was done to it before the analysis.
#[derive(Debug, Clone, Default)]
pub struct InputFacts {
    /// Samples analysed.
    pub samples: usize,
    /// Rows of the input left out (blank cells, sensor faults, a torn last line).
    pub rows_left_out: usize,
    /// Thermocouple spikes rejected.
    pub spikes_rejected: usize,
    /// What was repaired in a logger's file (duplicate rows, a restarting time column).
    pub repairs: crate::input::repair::Repairs,
    /// The probe's zero drift the flat stretches before and after showed (none: no stretch
    /// after the excursion).
    pub probe_drift: Option<super::drift::DriftResult>,
    /// Measured on a bench without a valid calibration (the user said `--uncalibrated`).
    pub uncalibrated: bool,
}

/// The magnet's temperature behind the thermocouple.
#[derive(Debug, Clone, Default)]
pub struct LagFacts {
    /// Thermal lag time constant of the magnet behind the thermocouple, s (None: not estimated).
    pub time_constant_s: Option<f64>,
    /// Highest magnet temperature reached, °C.
    pub max_magnet_temp_c: f64,
    /// Where the field collapsed in a Curie sweep, °C (None: not reached).
    pub curie_estimate_c: Option<f64>,
}

/// The reversible temperature coefficient: the fit and its budget.
#[derive(Debug, Clone)]
pub struct AlphaFit {
    /// Mean α(Br) between 20 °C and the top of the fitted range, %/°C (the standards'
    /// two-point form).
    pub pct_per_c: f64,
    /// Its expanded uncertainty, k = 2, %/°C.
    pub u95_pct_per_c: f64,
    /// Standard error of α from the fit alone, %/°C.
    pub fit_se_pct_per_c: f64,
    /// Tangent coefficient at 20 °C (the linear term of the fit), %/°C.
    pub at_20c_pct_per_c: f64,
    /// Quadratic term, %/°C².
    pub gamma_pct_per_c2: f64,
    /// Fitted B at 20 °C, mT.
    pub b20_mt: f64,
    /// Its standard uncertainty from the fit, mT.
    pub b20_u_mt: f64,
    /// Lowest and highest magnet temperature in the fit, °C.
    pub range_c: [f64; 2],
    /// Residual standard deviation of the fit, mT.
    pub residual_sd_mt: f64,
    /// Points fitted.
    pub points: usize,
    /// How the fit was made, in words.
    pub method: String,
    /// The same as a stable code.
    pub method_code: FitMethod,
    /// Uncertainty budget of α, %/°C.
    pub budget: Vec<BudgetLine>,
    /// The fitted reversible model.
    pub model: Quadratic,
}

/// The irreversible loss (all absent when there is no return to compare with).
#[derive(Debug, Clone, Default)]
pub struct LossFacts {
    /// Irreversible loss between the references before and after the excursion (at
    /// `reference_c`, referred to one temperature with the fitted curve), %.
    pub pct: Option<f64>,
    /// Its expanded uncertainty, k = 2, %.
    pub u95_pct: Option<f64>,
    /// How the loss was found.
    pub method_code: Option<LossMethod>,
    /// Reference temperatures before and after, °C.
    pub reference_c: Option<[f64; 2]>,
    /// Probe temperatures at the two references, °C.
    pub reference_probe_c: Option<[f64; 2]>,
    /// Uncertainty budget of the loss, %.
    pub budget: Vec<BudgetLine>,
}

/// Br, from geometry at the calibrated gap or referred to the fixture's reference magnet.
#[derive(Debug, Clone, Default)]
pub struct Remanence {
    /// The estimate (none: no shape, or not found).
    pub estimate: Option<BrEstimate>,
    /// Its budget, relative standard uncertainties, %.
    pub budget: Vec<BudgetLine>,
    /// Referred to the fixture's reference magnet (else: geometry at the calibrated gap).
    pub referred: bool,
}

/// The judgement against the grade's spec.
#[derive(Debug, Clone)]
pub struct Judgement {
    /// Material family (or families) α and Br point to.
    pub material_family: String,
    /// Overall verdict against the grade's spec.
    pub verdict: Outcome,
    /// The grade checked.
    pub grade: Option<String>,
    /// Individual checks.
    pub checks: Vec<Check>,
    /// The magnet lost flux in this test, at or below its safe test peak.
    pub heat_damaged: bool,
    /// The part's safe test peak and how it was found (none: no magnet stated).
    pub safe_peak: Option<crate::safe_peak::SafePeak>,
    /// The test took the part beyond its safe peak: quarantine it (words for the verdict block).
    pub quarantine: Option<Phrase>,
}

/// The analysis result.
#[derive(Debug, Clone)]
pub struct Analysis {
    /// The layout's version ([`SCHEMA_VERSION`]).
    pub schema_version: u32,
    /// What was analysed.
    pub provenance: Provenance,
    /// The input.
    pub input: InputFacts,
    /// The lag and the temperatures reached.
    pub lag: LagFacts,
    /// α and its fit.
    pub alpha: AlphaFit,
    /// The irreversible loss.
    pub loss: LossFacts,
    /// Br.
    pub remanence: Remanence,
    /// The verdict and its checks.
    pub judgement: Judgement,
    /// Each heat cycle found in the record, in order (one for a plain record).
    pub cycles: Vec<CycleResult>,
    /// Plain words about what was done, assumed or could not be computed.
    pub notes: Vec<Phrase>,
}

/// Per-sample traces the plots draw: the analysis's intermediate series, returned beside its
/// result.
#[derive(Debug, Clone, Default)]
pub struct Traces {
    /// Indices of the reference windows, the branches and the peak.
    pub segments: Option<Segments>,
    /// Lag-corrected magnet temperature per sample, °C.
    pub magnet_temp_c: Vec<f64>,
    /// Flux corrected for the gap's expansion, mT.
    pub flux_corrected_mt: Vec<f64>,
}

impl AlphaFit {
    /// The α step's result `a`, fitted to the points `data` chose; `b20_u_mt`: B20's standard
    /// uncertainty from the fit.
    pub fn of(
        a: super::alpha::AlphaResult,
        data: &super::fit_data::FitData,
        b20_u_mt: f64,
    ) -> Self {
        AlphaFit {
            pct_per_c: a.alpha,
            u95_pct_per_c: a.u95(),
            fit_se_pct_per_c: a.u_fit,
            at_20c_pct_per_c: a.model.alpha_at_reference_pct_per_c(),
            gamma_pct_per_c2: a.model.gamma_pct_per_c2(),
            b20_mt: a.model.b0_mt,
            b20_u_mt,
            range_c: a.range_c,
            residual_sd_mt: a.fit.residual_sd,
            points: a.fit.n,
            method: data.method.into(),
            method_code: data.code,
            budget: a.budget,
            model: a.model,
        }
    }
}

impl LossFacts {
    /// The loss step's result (none: no return to compare with); `by_references`: found from
    /// the references at rest, else from the branches.
    pub fn of(loss: Option<super::loss::LossResult>, by_references: bool) -> Self {
        let Some(l) = loss else {
            return LossFacts::default();
        };
        LossFacts {
            pct: Some(l.loss_pct),
            u95_pct: Some(l.u95_pct),
            method_code: Some(match by_references {
                true => LossMethod::References,
                false => LossMethod::Branches,
            }),
            reference_c: Some(l.ref_c),
            reference_probe_c: l.ref_probe_c,
            budget: l.budget,
        }
    }
}

impl Analysis {
    /// The fitted reversible B at `t_c`, mT.
    pub fn fitted_mt(&self, t_c: f64) -> f64 {
        self.alpha.model.eval_mt(t_c)
    }

    /// Loss as a fraction (0 when not computed or negative): what the plots take back out of
    /// the cooling branch.
    pub fn loss_fraction(&self) -> f64 {
        self.loss.pct.unwrap_or(0.0).max(0.0) / 100.0
    }
}

impl Traces {
    /// Every sample's flux against `a`'s fit, mT, with the irreversible loss taken back out of
    /// the samples after the peak, so the cooling branch is compared with the same curve.
    pub fn residuals_mt(&self, a: &Analysis) -> Vec<f64> {
        let loss = a.loss_fraction();
        let peak = self.segments.as_ref().map_or(usize::MAX, |s| s.peak);
        self.flux_corrected_mt
            .iter()
            .zip(&self.magnet_temp_c)
            .enumerate()
            .map(|(i, (b, tm))| {
                let b = if i > peak { b / (1.0 - loss) } else { *b };
                b - a.fitted_mt(*tm)
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_fit_method_writes_the_code_it_compares_as() {
        use FitMethod::*;
        for m in [
            Ramps,
            CoolingBranch,
            SoakPoints,
            HeatingBelowCollapse,
            SingleRamp,
        ] {
            let json = serde_json::to_value(m).unwrap();
            assert_eq!(json.as_str(), Some(m.code()));
            assert!(m == m.code());
        }
    }
}
