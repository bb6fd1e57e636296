//! The user's TOML files — magnet, profile, spec table, rig calibration — checked before they
//! are read: every unknown key is named with its line, every missing required key is named at
//! once, and messages stay short however long the offending line (the formats and a tested
//! example of each are in `hardware-notes/file-formats.md`).

pub use crate::values::{bounded, MAX_MESSAGE_CHARS};
use crate::values::{key_lines, Rule};
use Rule::{NonNegative as NonNeg, Positive as Pos};

/// Which file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// A magnet file.
    Magnet,
    /// A heating profile.
    Profile,
    /// A grade spec table.
    Specs,
    /// A rig calibration.
    Calibration,
}

struct Keys {
    /// Keys that may appear besides the required ones (`.*`: anything under it).
    allowed: &'static [&'static str],
    /// Keys that must appear.
    required: &'static [&'static str],
}

fn keys(kind: Kind) -> Keys {
    match kind {
        Kind::Magnet => Keys {
            allowed: &[
                "id",
                "grade",
                "description",
                "max_working_C",
                "shape",
                "shape.cylinder",
                "shape.cylinder.diameter_mm",
                "shape.cylinder.length_mm",
                "shape.block",
                "shape.block.a_mm",
                "shape.block.b_mm",
                "shape.block.length_mm",
                "model",
                "model.*",
                "reference",
                "reference.br_T",
                "reference.br_u_T",
                "reference.source",
            ],
            required: &["id", "grade", "max_working_C", "shape"],
        },
        Kind::Profile => Keys {
            allowed: PROFILE_KEYS,
            required: PROFILE_KEYS,
        },
        Kind::Specs => Keys {
            allowed: SPEC_OPTIONAL_KEYS,
            required: SPEC_KEYS,
        },
        Kind::Calibration => Keys {
            allowed: CALIBRATION_OPTIONAL_KEYS,
            required: CALIBRATION_KEYS,
        },
    }
}

const PROFILE_KEYS: &[&str] = &[
    "name",
    "description",
    "limit_C",
    "segment",
    "segment[].target_C",
    "segment[].ramp_C_per_min",
    "segment[].hold_s",
];

/// A spec table's keys: the required ones first, then the coercivity the safe test peak is
/// worked out from (optional).
const SPEC_OPTIONAL_KEYS: &[&str] = &[
    "grade",
    "grade[].grade",
    "grade[].family",
    "grade[].br_min_T",
    "grade[].br_max_T",
    "grade[].alpha_min_pct_per_C",
    "grade[].alpha_max_pct_per_C",
    "grade[].max_working_C",
    "grade[].source",
    "grade[].hcj_min_kA_per_m",
    "grade[].beta_hcj_pct_per_C",
    "grade[].recoil_permeability",
];
/// The spec keys every grade must give.
const SPEC_KEYS: &[&str] = SPEC_OPTIONAL_KEYS.split_at(9).0;

const CALIBRATION_KEYS: &[&str] = &[
    "hall",
    "hall.sensitivity_mv_per_mt",
    "hall.sensitivity_tc_pct_per_c",
    "hall.sensitivity_tc_u_pct_per_c",
    "hall.offset_mv",
    "hall.offset_tc_mv_per_c",
    "hall.offset_tc_u_mv_per_c",
    "hall.full_scale_mv",
    "gap",
    "gap.gap_mm",
    "gap.gap_u_mm",
    "gap.standoff_mm",
    "gap.standoff_cte_per_k",
    "gap.standoff_cte_u_per_k",
    "ntc",
    "ntc.r25_ohm",
    "ntc.beta_k",
    "ntc.series_ohm",
    "ntc.supply_mv",
    "ntc.full_scale_mv",
    "thermocouple",
    "thermocouple.offset_c",
    "thermocouple.gain_tolerance_pct",
];

/// The calibration's keys that older files do not have (allowed, not required): uncertainties
/// of the zero, the sensitivity and the thermocouple offset, the dates of the steps, and the
/// fixture's identification.
const CALIBRATION_OPTIONAL_KEYS: &[&str] = &[
    "hall.offset_u_mv",
    "hall.sensitivity_u_pct",
    "thermocouple.offset_u_c",
    "dates",
    "dates.*",
    "fixture",
    "fixture.rate_K_per_s",
    "fixture.rate_u_K_per_s",
    "fixture.cooling_tau_s",
    "fixture.cooling_tau_u_s",
    "fixture.thermocouple_lag_s",
    "fixture.thermocouple_lag_u_s",
    "fixture.rate_fall_per_K",
    "fixture.rate_fall_u_per_K",
];

/// Every key of a parsed table, as dotted paths (`segment[].hold_s` for arrays of tables).
fn walk(t: &toml::Table, prefix: &str, out: &mut Vec<String>) {
    for (k, v) in t {
        let path = if prefix.is_empty() {
            k.clone()
        } else {
            format!("{prefix}.{k}")
        };
        out.push(path.clone());
        match v {
            toml::Value::Table(sub) => walk(sub, &path, out),
            toml::Value::Array(items) if items.iter().all(|i| i.is_table()) => {
                for item in items {
                    if let toml::Value::Table(sub) = item {
                        walk(sub, &format!("{path}[]"), out);
                    }
                }
            }
            _ => {}
        }
    }
}

/// Whether `path` may appear: a required key, or one only allowed.
fn allowed(keys: &Keys, path: &str) -> bool {
    keys.allowed
        .iter()
        .chain(keys.required)
        .any(|a| match a.strip_suffix(".*") {
            Some(prefix) => path.starts_with(&format!("{prefix}.")),
            None => *a == path,
        })
}

/// Keys with more than "finite" to satisfy; every other number must be finite.
fn rules(kind: Kind) -> &'static [(&'static str, Rule)] {
    match kind {
        Kind::Calibration => &[
            ("hall.sensitivity_mv_per_mt", Pos),
            ("hall.sensitivity_tc_u_pct_per_c", NonNeg),
            ("hall.offset_tc_u_mv_per_c", NonNeg),
            ("hall.full_scale_mv", Pos),
            ("gap.gap_mm", Pos),
            ("gap.gap_u_mm", NonNeg),
            ("gap.standoff_mm", NonNeg),
            ("gap.standoff_cte_u_per_k", NonNeg),
            ("ntc.r25_ohm", Pos),
            ("ntc.beta_k", Pos),
            ("ntc.series_ohm", Pos),
            ("ntc.supply_mv", Pos),
            ("ntc.full_scale_mv", Pos),
            ("thermocouple.gain_tolerance_pct", NonNeg),
            ("thermocouple.offset_u_c", NonNeg),
            ("hall.offset_u_mv", NonNeg),
            ("hall.sensitivity_u_pct", NonNeg),
            ("fixture.rate_K_per_s", Pos),
            ("fixture.rate_u_K_per_s", NonNeg),
            ("fixture.cooling_tau_s", Pos),
            ("fixture.cooling_tau_u_s", NonNeg),
            ("fixture.thermocouple_lag_s", NonNeg),
            ("fixture.thermocouple_lag_u_s", NonNeg),
            ("fixture.rate_fall_u_per_K", NonNeg),
        ],
        Kind::Magnet => &[
            ("shape.cylinder.diameter_mm", Pos),
            ("shape.cylinder.length_mm", Pos),
            ("shape.block.a_mm", Pos),
            ("shape.block.b_mm", Pos),
            ("shape.block.length_mm", Pos),
            ("reference.br_T", Pos),
            ("reference.br_u_T", Pos),
        ],
        Kind::Profile => &[
            ("segment[].ramp_C_per_min", NonNeg),
            ("segment[].hold_s", NonNeg),
        ],
        Kind::Specs => &[("grade[].br_min_T", NonNeg), ("grade[].br_max_T", Pos)],
    }
}

/// The numbers of `text` (a file of `kind`, its keys under `prefix`) checked: NaN, infinity,
/// and values a key cannot take, each with its line.
pub fn check_numbers(kind: Kind, text: &str, prefix: &str) -> Result<(), String> {
    crate::values::check(rules(kind), text, prefix)
}

/// Check `text` as a file of `kind`: parses, no unknown keys, no missing required ones.
pub fn check(kind: Kind, text: &str) -> Result<(), String> {
    let table: toml::Table = text
        .parse()
        .map_err(|e: toml::de::Error| bounded(&e.to_string()))?;
    let keys = keys(kind);
    let mut present = Vec::new();
    walk(&table, "", &mut present);
    let lines = key_lines(text);
    let mut problems = Vec::new();
    for p in present.iter().filter(|p| !allowed(&keys, p)) {
        match lines.get(p.as_str()) {
            Some(n) => problems.push(format!("unknown key `{p}` (line {n})")),
            None => problems.push(format!("unknown key `{p}`")),
        }
    }
    let missing: Vec<&str> = keys
        .required
        .iter()
        .filter(|r| {
            match r.split_once("[].") {
                // every element of the array must have it
                Some((array, key)) => match table.get(array) {
                    Some(toml::Value::Array(items)) => items
                        .iter()
                        .any(|i| i.as_table().is_some_and(|t| !t.contains_key(key))),
                    _ => false,
                },
                None => !present.iter().any(|p| p == *r),
            }
        })
        .copied()
        .collect();
    if !missing.is_empty() {
        problems.push(format!("missing: {}", missing.join(", ")));
    }
    if problems.is_empty() {
        check_numbers(kind, text, "")
    } else {
        Err(bounded(&problems.join("; ")))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unknown_keys_are_named_with_their_lines_and_missing_ones_all_at_once() {
        let text = "name = \"x\"\nlimit_C = 90.0\ncolour = \"red\"\n\n[[segment]]\ntarget_C = 50.0\nhold_s = 10\nspeed = 3\n";
        let e = check(Kind::Profile, text).unwrap_err();
        assert!(e.contains("unknown key `colour` (line 3)"), "{e}");
        assert!(e.contains("unknown key `segment[].speed` (line 8)"), "{e}");
        assert!(
            e.contains("missing: description, segment[].ramp_C_per_min"),
            "{e}"
        );
    }

    #[test]
    fn a_huge_line_gives_a_short_message() {
        let text = format!("name = \"{}", "x".repeat(1_000_000));
        let e = check(Kind::Profile, &text).unwrap_err();
        assert!(
            e.chars().count() < MAX_MESSAGE_CHARS + 40,
            "{} chars",
            e.len()
        );
    }
}
