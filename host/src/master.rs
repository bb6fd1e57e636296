//! Judging a lot against a master sample of its grade: each part's room-temperature field and
//! α beside the master's, measured in the same fixture, so the gap and the probe cancel. A
//! part conforms when both differences, with their uncertainty, stay within the grade's own
//! windows (its Br window as a relative half-width, its α window's half-width).

use serde::Serialize;

use crate::analysis::fixture_ref::DEFAULT_REPEATABILITY_PCT;
use crate::analysis::verdict::{judge, overall, Check, Outcome};
use crate::analysis::Analysis;
use crate::magnets::MagnetInfo;
use crate::specs::GradeSpec;

/// One part against the master.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AgainstMaster {
    /// The part.
    pub id: String,
    /// Its field at 20 °C against the master's, %.
    pub b20_vs_master_pct: f64,
    /// That difference's U95, %.
    pub b20_u95_pct: f64,
    /// Its α minus the master's, %/°C.
    #[serde(rename = "alpha_vs_master_pct_per_C")]
    pub alpha_diff: f64,
    /// That difference's U95, %/°C.
    #[serde(rename = "alpha_u95_pct_per_C")]
    pub alpha_u95: f64,
    /// Within the grade's windows around the master, uncertainty included.
    pub outcome: Outcome,
    /// Why, in words with the numbers.
    pub reason: crate::units::Phrase,
}

/// The master sample as measured.
pub struct Master<'a> {
    /// Its facts.
    pub info: &'a MagnetInfo,
    /// Its analysis.
    pub analysis: &'a Analysis,
}

/// Compare a part with the master under the grade `spec`; `None` when their shapes differ
/// (their fields then do not compare).
pub fn compare(
    master: &Master,
    info: &MagnetInfo,
    a: &Analysis,
    spec: &GradeSpec,
) -> Option<AgainstMaster> {
    if info.shape != master.info.shape {
        return None;
    }
    let m = master.analysis;
    let ratio = (a.alpha.b20_mt / m.alpha.b20_mt - 1.0) * 100.0;
    let rel = |x: &Analysis| x.alpha.b20_u_mt / x.alpha.b20_mt * 100.0;
    // each placement adds the fixture's repeatability
    let u_ratio =
        (rel(a).powi(2) + rel(m).powi(2) + 2.0 * DEFAULT_REPEATABILITY_PCT.powi(2)).sqrt();
    let d_alpha = a.alpha.pct_per_c - m.alpha.pct_per_c;
    let u_alpha = (a.alpha.u95_pct_per_c.powi(2) + m.alpha.u95_pct_per_c.powi(2)).sqrt() / 2.0;
    let br_tol = (spec.br_max_t - spec.br_min_t) / (spec.br_max_t + spec.br_min_t) * 100.0;
    let alpha_tol = (spec.alpha_max - spec.alpha_min).abs() / 2.0;
    let checks = [
        Check {
            what: crate::analysis::verdict::CheckKind::MasterField,
            outcome: judge(ratio, 2.0 * u_ratio, -br_tol, br_tol),
            reason: Default::default(),
        },
        Check {
            what: crate::analysis::verdict::CheckKind::MasterAlpha,
            outcome: judge(d_alpha, 2.0 * u_alpha, -alpha_tol, alpha_tol),
            reason: Default::default(),
        },
    ];
    Some(AgainstMaster {
        id: info.id.clone(),
        b20_vs_master_pct: ratio,
        b20_u95_pct: 2.0 * u_ratio,
        alpha_diff: d_alpha,
        alpha_u95: 2.0 * u_alpha,
        outcome: overall(&checks),
        reason: crate::phrase![
            format!(
                "field {ratio:+.2} ± {:.2} % of the master's (window ±{br_tol:.2} %), α ",
                2.0 * u_ratio
            ),
            crate::units::Qty::pm(crate::units::Kind::Alpha, d_alpha, 2.0 * u_alpha, 4).signed(),
            " from it (window ±",
            crate::units::alpha(alpha_tol, 4),
            ")",
        ],
    })
}
