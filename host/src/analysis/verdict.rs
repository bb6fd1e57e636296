//! The verdict: the grade check against a spec table, and how checks combine. The families
//! themselves are in [`super::families`].

use crate::units::{Kind, Phrase, Qty};
use serde::Serialize;

use crate::specs::GradeSpec;

/// Pass, fail or cannot tell.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// Within the limits, uncertainty included.
    Pass,
    /// Outside the limits, uncertainty included.
    Fail,
    /// The uncertainty straddles a limit, or something could not be measured.
    Indeterminate,
}

/// A measured value against limits, allowing for its expanded uncertainty.
pub fn judge(value: f64, u95: f64, min: f64, max: f64) -> Outcome {
    if !(value.is_finite() && u95.is_finite() && u95 >= 0.0) {
        // a number that is not one decides nothing
        Outcome::Indeterminate
    } else if value - u95 >= min && value + u95 <= max {
        Outcome::Pass
    } else if value + u95 < min || value - u95 > max {
        Outcome::Fail
    } else {
        Outcome::Indeterminate
    }
}

/// For an undecided check: the U95 that would decide it (the distance from the value to the
/// nearer limit, inside or out), and the words that say how far the uncertainty must shrink.
pub fn what_would_decide(value: f64, u95: f64, min: f64, max: f64, kind: Kind) -> Phrase {
    let need = if value < min {
        min - value
    } else if value > max {
        value - max
    } else {
        (value - min).min(max - value)
    };
    if need <= 0.0 || !need.is_finite() {
        return "; the value sits on a limit, so no uncertainty can decide it".into();
    }
    // differences: shown as spans of their kind (a Br or α difference converts as the value)
    let diff = |v: f64| Qty::one(kind, v, 4);
    crate::phrase![
        "; to decide, its U95 of ±",
        diff(u95),
        " would have to shrink below ±",
        diff(need),
        format!(" ({:.0} % smaller)", (1.0 - need / u95) * 100.0),
    ]
}

/// One check of the grade test.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    /// What was checked.
    pub what: String,
    /// The result.
    pub outcome: Outcome,
    /// Why, in words with the numbers.
    pub reason: Phrase,
}

/// The grade check against `spec`.
pub fn grade_checks(
    spec: &GradeSpec,
    alpha: f64,
    alpha_u95: f64,
    br: Option<(f64, f64)>,
    family: &[&str],
) -> Vec<Check> {
    let mut out = Vec::new();
    let o = judge(alpha, alpha_u95, spec.alpha_min, spec.alpha_max);
    let mut reason = crate::phrase![
        "measured ",
        Qty::pm(Kind::Alpha, alpha, alpha_u95, 4),
        " against ",
        Qty::range(Kind::Alpha, spec.alpha_min, spec.alpha_max, 3),
        format!(" for {} ({})", spec.grade, spec.source),
    ];
    if o == Outcome::Indeterminate {
        reason.extend(what_would_decide(
            alpha,
            alpha_u95,
            spec.alpha_min,
            spec.alpha_max,
            Kind::Alpha,
        ));
    }
    out.push(Check {
        what: "α(Br)".into(),
        outcome: o,
        reason,
    });
    match br {
        Some((b, u)) => {
            let outcome = judge(b, u, spec.br_min_t, spec.br_max_t);
            let mut reason = crate::phrase![
                "estimated ",
                Qty::pm(Kind::Br, b, u, 4),
                " against ",
                Qty::range(Kind::Br, spec.br_min_t, spec.br_max_t, 2),
            ];
            if outcome == Outcome::Indeterminate {
                reason.extend(what_would_decide(
                    b,
                    u,
                    spec.br_min_t,
                    spec.br_max_t,
                    Kind::Br,
                ));
            }
            out.push(Check {
                what: "Br".into(),
                outcome,
                reason,
            })
        }
        None => out.push(Check {
            what: "Br".into(),
            outcome: Outcome::Indeterminate,
            reason: "no geometry or gap calibration: Br could not be estimated".into(),
        }),
    }
    let fam_ok = family.iter().any(|f| f.eq_ignore_ascii_case(&spec.family));
    out.push(Check {
        what: "material family".into(),
        outcome: if fam_ok && family.len() == 1 {
            Outcome::Pass
        } else if fam_ok {
            Outcome::Indeterminate
        } else {
            Outcome::Fail
        },
        reason: format!(
            "α points to {}; the grade is {}",
            if family.is_empty() {
                "no known family".to_string()
            } else {
                family.join(" or ")
            },
            spec.family
        )
        .into(),
    });
    out
}

/// Combine checks: any fail fails, else any indeterminate, else pass.
pub fn overall(checks: &[Check]) -> Outcome {
    if checks.iter().any(|c| c.outcome == Outcome::Fail) {
        Outcome::Fail
    } else if checks.iter().any(|c| c.outcome == Outcome::Indeterminate) {
        Outcome::Indeterminate
    } else {
        Outcome::Pass
    }
}

impl Outcome {
    /// The outcome as a lowercase word (table cells, CSV, CSS classes).
    pub fn word(self) -> &'static str {
        match self {
            Outcome::Pass => "pass",
            Outcome::Fail => "fail",
            Outcome::Indeterminate => "indeterminate",
        }
    }
}

impl std::fmt::Display for Outcome {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Outcome::Pass => "PASS",
            Outcome::Fail => "FAIL",
            Outcome::Indeterminate => "INDETERMINATE",
        })
    }
}
