//! `analysis.json`'s layout: the field names, their order and their units, fixed by
//! [`super::result::SCHEMA_VERSION`] (hardware-notes/file-formats.md) whatever shape the result
//! has in memory. The result is grouped by step; the file is one flat object, as it always was.

use serde::{Serialize, Serializer};

use super::budget::BudgetLine;
use super::geometry::BrEstimate;
use super::result::{Analysis, CycleResult, FitMethod, LossMethod, Provenance};
use super::verdict::{Check, Outcome};
use crate::units::Phrase;

/// The file's object, field by field in the file's order.
#[derive(Serialize)]
struct Layout<'a> {
    schema_version: u32,
    provenance: &'a Provenance,
    #[serde(rename = "alpha_pct_per_C")]
    alpha_pct_per_c: f64,
    #[serde(rename = "alpha_u95_pct_per_C")]
    alpha_u95_pct_per_c: f64,
    #[serde(rename = "alpha_fit_se_pct_per_C")]
    alpha_fit_se_pct_per_c: f64,
    #[serde(rename = "alpha_at_20C_pct_per_C")]
    alpha_at_20c_pct_per_c: f64,
    #[serde(rename = "gamma_pct_per_C2")]
    gamma_pct_per_c2: f64,
    #[serde(rename = "b20_mT")]
    b20_mt: f64,
    #[serde(rename = "b20_u_mT")]
    b20_u_mt: f64,
    #[serde(rename = "fit_range_C")]
    fit_range_c: [f64; 2],
    #[serde(rename = "residual_sd_mT")]
    residual_sd_mt: f64,
    fit_points: usize,
    fit_method: &'a str,
    fit_method_code: FitMethod,
    lag_time_constant_s: Option<f64>,
    irreversible_loss_pct: Option<f64>,
    irreversible_loss_u95_pct: Option<f64>,
    loss_method_code: Option<LossMethod>,
    #[serde(rename = "reference_C")]
    reference_c: Option<[f64; 2]>,
    #[serde(rename = "reference_probe_C")]
    reference_probe_c: Option<[f64; 2]>,
    #[serde(rename = "max_magnet_temp_C")]
    max_magnet_temp_c: f64,
    #[serde(rename = "curie_estimate_C")]
    curie_estimate_c: Option<f64>,
    br: &'a Option<BrEstimate>,
    material_family: &'a str,
    verdict: Outcome,
    grade: &'a Option<String>,
    checks: &'a [Check],
    heat_damaged: bool,
    safe_peak: &'a Option<crate::safe_peak::SafePeak>,
    quarantine: &'a Option<Phrase>,
    alpha_budget: &'a [BudgetLine],
    loss_budget: &'a [BudgetLine],
    notes: &'a [Phrase],
    uncalibrated: bool,
    cycles: &'a [CycleResult],
    samples: usize,
    rows_left_out: usize,
    spikes_rejected: usize,
    probe_drift: &'a Option<super::drift::DriftResult>,
    repairs: &'a crate::input::repair::Repairs,
    br_budget: &'a [BudgetLine],
    br_referred: bool,
}

impl Serialize for Analysis {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let (i, l, f, x, r, j) = (
            &self.input,
            &self.lag,
            &self.alpha,
            &self.loss,
            &self.remanence,
            &self.judgement,
        );
        Layout {
            schema_version: self.schema_version,
            provenance: &self.provenance,
            alpha_pct_per_c: f.pct_per_c,
            alpha_u95_pct_per_c: f.u95_pct_per_c,
            alpha_fit_se_pct_per_c: f.fit_se_pct_per_c,
            alpha_at_20c_pct_per_c: f.at_20c_pct_per_c,
            gamma_pct_per_c2: f.gamma_pct_per_c2,
            b20_mt: f.b20_mt,
            b20_u_mt: f.b20_u_mt,
            fit_range_c: f.range_c,
            residual_sd_mt: f.residual_sd_mt,
            fit_points: f.points,
            fit_method: &f.method,
            fit_method_code: f.method_code,
            lag_time_constant_s: l.time_constant_s,
            irreversible_loss_pct: x.pct,
            irreversible_loss_u95_pct: x.u95_pct,
            loss_method_code: x.method_code,
            reference_c: x.reference_c,
            reference_probe_c: x.reference_probe_c,
            max_magnet_temp_c: l.max_magnet_temp_c,
            curie_estimate_c: l.curie_estimate_c,
            br: &r.estimate,
            material_family: &j.material_family,
            verdict: j.verdict,
            grade: &j.grade,
            checks: &j.checks,
            heat_damaged: j.heat_damaged,
            safe_peak: &j.safe_peak,
            quarantine: &j.quarantine,
            alpha_budget: &f.budget,
            loss_budget: &x.budget,
            notes: &self.notes,
            uncalibrated: i.uncalibrated,
            cycles: &self.cycles,
            samples: i.samples,
            rows_left_out: i.rows_left_out,
            spikes_rejected: i.spikes_rejected,
            probe_drift: &i.probe_drift,
            repairs: &i.repairs,
            br_budget: &r.budget,
            br_referred: r.referred,
        }
        .serialize(s)
    }
}
