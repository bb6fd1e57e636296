//! The verdict: material family from α (and Br), the grade check against a spec table, and
//! the heat-damage flag.

use serde::Serialize;

use crate::specs::GradeSpec;

/// Typical mean α(Br) per family near 20…100 °C, %/°C (domain notes' table).
pub const FAMILIES: [(&str, f64, f64); 5] = [
    ("sintered hard ferrite", -0.22, -0.16),
    ("sintered NdFeB", -0.135, -0.085),
    ("SmCo5", -0.05, -0.035),
    ("Sm2Co17", -0.035, -0.025),
    ("cast AlNiCo", -0.025, -0.01),
];

/// Pass, fail or cannot tell.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
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
    if value - u95 >= min && value + u95 <= max {
        Outcome::Pass
    } else if value + u95 < min || value - u95 > max {
        Outcome::Fail
    } else {
        Outcome::Indeterminate
    }
}

/// Typical Curie temperatures per family, °C (domain notes' table; AlNiCo from memory).
pub const CURIE_RANGES: [(&str, f64, f64); 5] = [
    ("sintered hard ferrite", 420.0, 480.0),
    ("sintered NdFeB", 300.0, 410.0),
    ("SmCo5", 690.0, 760.0),
    ("Sm2Co17", 790.0, 830.0),
    ("cast AlNiCo", 820.0, 880.0),
];

/// Families whose typical α range meets [α − U, α + U]; narrowed by Br and by a measured
/// Curie collapse when they help.
pub fn families(
    alpha: f64,
    u95: f64,
    br_t: Option<f64>,
    curie_c: Option<f64>,
) -> Vec<&'static str> {
    let mut hits: Vec<&str> = FAMILIES
        .iter()
        .filter(|(_, lo, hi)| alpha + u95 >= *lo && alpha - u95 <= *hi)
        .map(|(n, _, _)| *n)
        .collect();
    if let Some(tc) = curie_c {
        // the field collapses a little below the Curie point: allow 30 K
        let by_curie: Vec<&str> = CURIE_RANGES
            .iter()
            .filter(|(_, lo, hi)| tc >= lo - 30.0 && tc <= *hi)
            .map(|(n, _, _)| *n)
            .collect();
        let both: Vec<&str> = hits
            .iter()
            .copied()
            .filter(|f| by_curie.contains(f))
            .collect();
        hits = if both.is_empty() { by_curie } else { both };
    }
    if hits.len() > 1 {
        if let Some(br) = br_t {
            // Br ranges (domain notes): SmCo5 0.74–1.00, Sm2Co17 0.93–1.15, AlNiCo 5 1.25–1.30
            let br_ok = |f: &str| match f {
                "SmCo5" => (0.7..1.02).contains(&br),
                "Sm2Co17" => (0.9..1.18).contains(&br),
                "cast AlNiCo" => (1.1..1.4).contains(&br),
                _ => true,
            };
            let narrowed: Vec<&str> = hits.iter().copied().filter(|f| br_ok(f)).collect();
            if !narrowed.is_empty() {
                hits = narrowed;
            }
        }
    }
    hits
}

/// One check of the grade test.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Check {
    /// What was checked.
    pub what: String,
    /// The result.
    pub outcome: Outcome,
    /// Why, in words with the numbers.
    pub reason: String,
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
    out.push(Check {
        what: "α(Br)".into(),
        outcome: o,
        reason: format!(
            "measured {alpha:.4} ± {alpha_u95:.4} %/°C against {:.3} … {:.3} %/°C for {} ({})",
            spec.alpha_min, spec.alpha_max, spec.grade, spec.source
        ),
    });
    match br {
        Some((b, u)) => out.push(Check {
            what: "Br".into(),
            outcome: judge(b, u, spec.br_min_t, spec.br_max_t),
            reason: format!(
                "estimated {b:.3} ± {u:.3} T from the field and geometry against {:.2} … {:.2} T",
                spec.br_min_t, spec.br_max_t
            ),
        }),
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
        ),
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
