//! What a loss means for the part: within its safe test peak a conforming part loses nothing,
//! so a loss there fails it (coercivity below grade, or heat damage where the table gives no
//! HcJ); a test beyond the safe peak marks the part for quarantine instead, its loss being the
//! grade's at that temperature. Used for a single cycle and for a record's total over cycles.

use super::verdict::{Check, Outcome};
use crate::safe_peak::{Bound, SafePeak};
use crate::units::{self, Phrase};

/// A loss above this (and above its own U95) flags heat damage, %.
pub const HEAT_DAMAGE_PCT: f64 = 0.3;

/// The loss judged.
#[derive(Debug, Clone, Default)]
pub struct LossVerdict {
    /// The part lost flux within its safe peak.
    pub heat_damaged: bool,
    /// The test went beyond the safe peak: the statement.
    pub quarantine: Option<Phrase>,
    /// The failed check, when the part lost flux within its safe peak.
    pub check: Option<Check>,
}

/// Judge `loss` (%, U95), found after a cycle that peaked at `loss_peak_c`, for a part whose
/// hottest moment in the test was `exposure_peak_c`.
pub fn judge_loss(
    loss: Option<(f64, f64)>,
    loss_peak_c: f64,
    exposure_peak_c: f64,
    safe: Option<&SafePeak>,
) -> LossVerdict {
    let lost = matches!(loss, Some((l, u)) if l > u.max(HEAT_DAMAGE_PCT));
    let quarantine = safe.filter(|s| s.exceeded_by(exposure_peak_c)).map(|s| {
        let mut p = crate::phrase![
            "QUARANTINE: the test took this part to ",
            units::temp_q(exposure_peak_c, 0),
            ", beyond its safe test peak of ",
            units::temp_q(s.peak_c, 0),
            ": it may have lost flux for good; do not return it to stock",
        ];
        if let (true, Some((l, u))) = (lost, loss) {
            p.push(format!(" (it lost {l:.2} ± {u:.2} %: the grade's loss at that temperature, not a defect found in the part)"));
        }
        p
    });
    let within = safe.is_none_or(|s| !s.exceeded_by(loss_peak_c));
    let heat_damaged = lost && within;
    let check = match (heat_damaged, loss) {
        (true, Some((l, u))) => Some(match safe {
            Some(s) => coercivity_check(l, u, loss_peak_c, s),
            None => Check {
                what: super::verdict::CheckKind::Loss,
                outcome: Outcome::Fail,
                reason: format!("lost {l:.2} ± {u:.2} % of its flux in this test").into(),
            },
        }),
        _ => None,
    };
    LossVerdict {
        heat_damaged,
        quarantine,
        check,
    }
}

/// A loss at or below the safe peak: a conforming part of the grade loses none there, so the
/// part's coercivity is below its grade's (or, with no HcJ in the table, it is heat-damaged).
fn coercivity_check(l: f64, u: f64, peak_c: f64, s: &SafePeak) -> Check {
    let judged_by_knee = s.bound != Bound::NoCoercivity;
    let mut reason = crate::phrase![
        format!("lost {l:.2} ± {u:.2} % at "),
        units::temp_q(peak_c, 0),
        format!(", where a conforming {} of this shape loses none", s.grade),
    ];
    reason.push(if judged_by_knee {
        " (its safe test peak): coercivity below grade"
    } else {
        " (within its rating): heat damage or a coercivity below grade"
    });
    Check {
        what: match judged_by_knee {
            true => super::verdict::CheckKind::Coercivity,
            false => super::verdict::CheckKind::Loss,
        },
        outcome: Outcome::Fail,
        reason,
    }
}
