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

/// The rule [`judge`] applies, as a statement of conformity must name it (ISO/IEC 17025:2017
/// 7.8.6): printed on the certificate and in the report.
pub const DECISION_RULE: &str = "Decision rule: guarded acceptance with the expanded uncertainty U95 (95 % coverage), in the manner of ISO 14253-1 and ILAC-G8. A check passes only when the whole interval value ± U95 lies within the limits (touching a limit counts as within); it fails only when the whole interval lies outside them; otherwise, or when a value or its uncertainty is not a finite number, it is indeterminate. The verdict fails if any check fails, else is indeterminate if any check is, else passes.";

/// A measured value against limits, allowing for its expanded uncertainty: the
/// [`DECISION_RULE`] (an open side is an infinite limit).
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

pub use super::check_kind::CheckKind;

/// One check of the grade test.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    /// What was checked.
    pub what: CheckKind,
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
        what: CheckKind::Alpha,
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
                what: CheckKind::Br,
                outcome,
                reason,
            })
        }
        None => out.push(Check {
            what: CheckKind::Br,
            outcome: Outcome::Indeterminate,
            reason: "no geometry or gap calibration: Br could not be estimated".into(),
        }),
    }
    let fam_ok = family.iter().any(|f| f.eq_ignore_ascii_case(&spec.family));
    out.push(Check {
        what: CheckKind::Family,
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

impl std::str::FromStr for Outcome {
    type Err = String;

    /// The word [`Outcome::word`] gives, in any case.
    fn from_str(word: &str) -> Result<Outcome, String> {
        [Outcome::Pass, Outcome::Fail, Outcome::Indeterminate]
            .into_iter()
            .find(|o| o.word().eq_ignore_ascii_case(word.trim()))
            .ok_or_else(|| format!("`{word}` is not a verdict (pass, fail or indeterminate)"))
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

#[cfg(test)]
mod tests {
    use super::*;
    use Outcome::*;

    const INF: f64 = f64::INFINITY;

    /// The decision rule at and around every edge, against limits 1.0 … 2.0 and one-sided
    /// specs; each row worked by hand from the rule's words (ISO 14253-1's guarded acceptance:
    /// conformity proven when value ± U lies in the zone, nonconformity when it lies outside).
    const EDGES: &[(f64, f64, f64, f64, Outcome, &str)] = &[
        (1.5, 0.1, 1.0, 2.0, Pass, "well inside"),
        (
            1.1,
            0.1,
            1.0,
            2.0,
            Pass,
            "touching the lower limit from inside",
        ),
        (
            1.9,
            0.1,
            1.0,
            2.0,
            Pass,
            "touching the upper limit from inside",
        ),
        (1.5, 0.5, 1.0, 2.0, Pass, "interval exactly the zone"),
        (
            1.05,
            0.1,
            1.0,
            2.0,
            Indeterminate,
            "straddling the lower limit",
        ),
        (
            1.95,
            0.1,
            1.0,
            2.0,
            Indeterminate,
            "straddling the upper limit",
        ),
        (
            0.95,
            0.1,
            1.0,
            2.0,
            Indeterminate,
            "value below, interval reaching in",
        ),
        (
            2.05,
            0.1,
            1.0,
            2.0,
            Indeterminate,
            "value above, interval reaching in",
        ),
        (
            1.5,
            0.6,
            1.0,
            2.0,
            Indeterminate,
            "interval wider than the zone",
        ),
        (
            0.9,
            0.1,
            1.0,
            2.0,
            Indeterminate,
            "touching the lower limit from outside",
        ),
        (
            2.1,
            0.1,
            1.0,
            2.0,
            Indeterminate,
            "touching the upper limit from outside",
        ),
        (0.85, 0.1, 1.0, 2.0, Fail, "wholly below"),
        (2.15, 0.1, 1.0, 2.0, Fail, "wholly above"),
        (1.0, 0.0, 1.0, 2.0, Pass, "on the limit with no uncertainty"),
        (
            0.999,
            0.0,
            1.0,
            2.0,
            Fail,
            "just outside with no uncertainty",
        ),
        (5.0, 0.1, 1.0, INF, Pass, "one-sided minimum, far above"),
        (
            1.05,
            0.1,
            1.0,
            INF,
            Indeterminate,
            "one-sided minimum, straddling",
        ),
        (0.8, 0.1, 1.0, INF, Fail, "one-sided minimum, below"),
        (-5.0, 0.1, -INF, 1.0, Pass, "one-sided maximum, far below"),
        (1.2, 0.1, -INF, 1.0, Fail, "one-sided maximum, above"),
        (f64::NAN, 0.1, 1.0, 2.0, Indeterminate, "value NaN"),
        (1.5, f64::NAN, 1.0, 2.0, Indeterminate, "U95 NaN"),
        (INF, 0.1, 1.0, 2.0, Indeterminate, "value infinite"),
        (1.5, INF, 1.0, 2.0, Indeterminate, "U95 infinite"),
        (1.5, -0.1, 1.0, 2.0, Indeterminate, "negative U95"),
        (
            -INF,
            0.1,
            -INF,
            1.0,
            Indeterminate,
            "infinite value on an open side",
        ),
    ];

    #[test]
    fn the_decision_rule_at_every_edge() {
        let rows = EDGES;
        for &(v, u, lo, hi, want, what) in rows {
            assert_eq!(
                judge(v, u, lo, hi),
                want,
                "{what}: {v} ± {u} against {lo} … {hi}"
            );
        }
    }

    #[test]
    fn the_verdict_combines_checks_fail_first() {
        let c = |outcome| Check {
            what: CheckKind::Grade,
            outcome,
            reason: "".into(),
        };
        assert_eq!(overall(&[c(Pass), c(Pass)]), Pass);
        assert_eq!(overall(&[c(Pass), c(Indeterminate)]), Indeterminate);
        assert_eq!(overall(&[c(Indeterminate), c(Fail), c(Pass)]), Fail);
    }
}
