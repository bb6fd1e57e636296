//! The analysis's result: the numbers a report carries (serialised as `analysis.json`), the
//! uncertainty budget lines, and apart from them the per-sample traces the plots draw.

use serde::Serialize;

use super::geometry::BrEstimate;
use super::model::Quadratic;
use super::segments::Segments;
use super::verdict::{Check, Outcome};

/// How a contribution's knowledge is spread: what the coverage interval is computed from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Distribution {
    /// A standard deviation of a normal distribution (every type A term, most type B ones).
    Normal,
    /// Bounds known, nothing between them preferred: u = half-width / √3.
    Rectangular,
}

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

/// One contribution to an uncertainty budget.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BudgetLine {
    /// What it is.
    pub source: String,
    /// Type A (statistics) or B (other knowledge).
    pub kind: char,
    /// Standard uncertainty, in the result's unit.
    pub u: f64,
    /// How it is spread.
    pub distribution: Distribution,
}

impl BudgetLine {
    /// A type A (statistical) contribution.
    pub fn a(source: impl Into<String>, u: f64) -> BudgetLine {
        BudgetLine {
            source: source.into(),
            kind: 'A',
            u,
            distribution: Distribution::Normal,
        }
    }

    /// A type B contribution given as a normal standard deviation.
    pub fn b(source: impl Into<String>, u: f64) -> BudgetLine {
        BudgetLine {
            source: source.into(),
            kind: 'B',
            u,
            distribution: Distribution::Normal,
        }
    }

    /// A type B contribution known by its bounds (rectangular; `u` is half-width / √3).
    pub fn rectangular(source: impl Into<String>, u: f64) -> BudgetLine {
        BudgetLine {
            distribution: Distribution::Rectangular,
            ..BudgetLine::b(source, u)
        }
    }

    /// Root sum of squares of a budget: the combined standard uncertainty.
    pub fn combined(lines: &[BudgetLine]) -> f64 {
        lines.iter().map(|l| l.u * l.u).sum::<f64>().sqrt()
    }

    /// The expanded uncertainty of a budget: the half-width of its 95.45 % coverage interval
    /// (k = 2 for normal terms alone; see [`super::coverage`]).
    pub fn expanded(lines: &[BudgetLine]) -> f64 {
        let normal = lines
            .iter()
            .filter(|l| l.distribution == Distribution::Normal)
            .map(|l| l.u * l.u)
            .sum::<f64>()
            .sqrt();
        let rect: Vec<f64> = lines
            .iter()
            .filter(|l| l.distribution == Distribution::Rectangular)
            .map(|l| l.u)
            .collect();
        super::coverage::half_width(normal, &rect)
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

/// The analysis result.
#[derive(Debug, Clone, Serialize)]
pub struct Analysis {
    /// The layout's version ([`SCHEMA_VERSION`]).
    pub schema_version: u32,
    /// What was analysed.
    pub provenance: Provenance,
    /// Mean α(Br) between 20 °C and the top of the fitted range, %/°C (the standards' two-point form).
    #[serde(rename = "alpha_pct_per_C")]
    pub alpha_pct_per_c: f64,
    /// Its expanded uncertainty, k = 2, %/°C.
    #[serde(rename = "alpha_u95_pct_per_C")]
    pub alpha_u95_pct_per_c: f64,
    /// Standard error of α from the fit alone, %/°C.
    #[serde(rename = "alpha_fit_se_pct_per_C")]
    pub alpha_fit_se_pct_per_c: f64,
    /// Tangent coefficient at 20 °C (the linear term of the fit), %/°C.
    #[serde(rename = "alpha_at_20C_pct_per_C")]
    pub alpha_at_20c_pct_per_c: f64,
    /// Quadratic term, %/°C².
    #[serde(rename = "gamma_pct_per_C2")]
    pub gamma_pct_per_c2: f64,
    /// Fitted B at 20 °C, mT.
    #[serde(rename = "b20_mT")]
    pub b20_mt: f64,
    /// Its standard uncertainty from the fit, mT.
    #[serde(rename = "b20_u_mT")]
    pub b20_u_mt: f64,
    /// Lowest and highest magnet temperature in the fit, °C.
    #[serde(rename = "fit_range_C")]
    pub fit_range_c: [f64; 2],
    /// Residual standard deviation of the fit, mT.
    #[serde(rename = "residual_sd_mT")]
    pub residual_sd_mt: f64,
    /// Points fitted.
    pub fit_points: usize,
    /// How the fit was made, in words.
    pub fit_method: String,
    /// The same as a stable code: `ramps`, `cooling_branch`, `soak_points`,
    /// `heating_below_collapse`.
    pub fit_method_code: FitMethod,
    /// Thermal lag time constant of the magnet behind the thermocouple, s (None: not estimated).
    pub lag_time_constant_s: Option<f64>,
    /// Irreversible loss between the references before and after the excursion (at
    /// `reference_C`, referred to one temperature with the fitted curve), % (None: no return).
    pub irreversible_loss_pct: Option<f64>,
    /// Its expanded uncertainty, k = 2, %.
    pub irreversible_loss_u95_pct: Option<f64>,
    /// How the loss was found: `references` (the flux at rest before and after, referred to
    /// one temperature) or `branches` (heating against cooling at the same temperature, for a
    /// record with no return); absent with no loss.
    pub loss_method_code: Option<LossMethod>,
    /// Reference temperatures before and after, °C.
    #[serde(rename = "reference_C")]
    pub reference_c: Option<[f64; 2]>,
    /// Probe temperatures at the two references, °C.
    #[serde(rename = "reference_probe_C")]
    pub reference_probe_c: Option<[f64; 2]>,
    /// Highest magnet temperature reached, °C.
    #[serde(rename = "max_magnet_temp_C")]
    pub max_magnet_temp_c: f64,
    /// Where the field collapsed in a Curie sweep, °C (None: not reached).
    #[serde(rename = "curie_estimate_C")]
    pub curie_estimate_c: Option<f64>,
    /// Br estimate from geometry.
    pub br: Option<BrEstimate>,
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
    pub quarantine: Option<crate::units::Phrase>,
    /// Uncertainty budget of α, %/°C.
    pub alpha_budget: Vec<BudgetLine>,
    /// Uncertainty budget of the loss, %.
    pub loss_budget: Vec<BudgetLine>,
    /// Plain words about what was done, assumed or could not be computed.
    pub notes: Vec<crate::units::Phrase>,
    /// Samples analysed.
    /// Measured on a bench without a valid calibration (the user said `--uncalibrated`).
    pub uncalibrated: bool,
    /// Each heat cycle found in the record, in order (one for a plain record).
    pub cycles: Vec<CycleResult>,
    pub samples: usize,
    /// Rows of the input left out (blank cells, sensor faults, a torn last line).
    pub rows_left_out: usize,
    /// Thermocouple spikes rejected.
    pub spikes_rejected: usize,
    /// The probe's zero drift the flat stretches before and after showed (none: no stretch
    /// after the excursion).
    pub probe_drift: Option<super::drift::DriftResult>,
    /// What was repaired in a logger's file (duplicate rows, a restarting time column).
    pub repairs: crate::input::repair::Repairs,
    /// How Br was found: its budget, relative standard uncertainties, %.
    pub br_budget: Vec<BudgetLine>,
    /// Br was referred to the fixture's reference magnet (else: geometry at the calibrated gap).
    pub br_referred: bool,
    /// The fitted reversible model.
    #[serde(skip)]
    pub model: Quadratic,
    /// Per-sample traces for the plots (not part of the result).
    #[serde(skip)]
    pub traces: Traces,
}

/// Per-sample traces the plots draw: the analysis's intermediate series, kept apart from its
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

impl Analysis {
    /// The fitted reversible B at `t_c`, mT.
    pub fn fitted_mt(&self, t_c: f64) -> f64 {
        self.model.eval_mt(t_c)
    }

    /// Every sample's flux against the fit, mT, with the irreversible loss taken back out of
    /// the samples after the peak, so the cooling branch is compared with the same curve.
    pub fn residuals_mt(&self) -> Vec<f64> {
        let t = &self.traces;
        let loss = self.loss_fraction();
        let peak = t.segments.as_ref().map_or(usize::MAX, |s| s.peak);
        t.flux_corrected_mt
            .iter()
            .zip(&t.magnet_temp_c)
            .enumerate()
            .map(|(i, (b, tm))| {
                let b = if i > peak { b / (1.0 - loss) } else { *b };
                b - self.fitted_mt(*tm)
            })
            .collect()
    }

    /// Loss as a fraction (0 when not computed or negative): what the plots take back out of
    /// the cooling branch.
    pub fn loss_fraction(&self) -> f64 {
        self.irreversible_loss_pct.unwrap_or(0.0).max(0.0) / 100.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_budget_combines_in_quadrature_and_expands_by_its_distribution() {
        // 3 and 4 combine to 5 (GUM 5.1.2, uncorrelated inputs, unit sensitivities)
        let normal = [BudgetLine::a("a", 3.0), BudgetLine::b("b", 4.0)];
        assert_eq!(BudgetLine::combined(&normal), 5.0);
        // normal terms alone: k = 2
        assert_eq!(BudgetLine::expanded(&normal), 10.0);
        // one rectangular term alone: 95.45 % of its half-width √3·u (by hand: u = 1/√3
        // gives a half-width of 1, so 0.9545)
        let rect = [BudgetLine::rectangular("r", 1.0 / 3f64.sqrt())];
        assert!((BudgetLine::expanded(&rect) - 0.9545).abs() < 1e-3);
        // the combined standard uncertainty is the same whatever the distribution
        assert!((BudgetLine::combined(&rect) - 1.0 / 3f64.sqrt()).abs() < 1e-12);
    }

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
