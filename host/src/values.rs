//! Numbers in the user's TOML files that cannot be true — NaN or infinity anywhere, a zero or
//! negative sensitivity, a negative gap, a zero Beta — refused with the line and the key, before
//! anything is converted or judged with them.

use crate::formats::{bounded, key_lines, Kind};

/// What a number must be.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Rule {
    /// Any finite value.
    Finite,
    /// Above zero.
    Positive,
    /// Zero or above.
    NonNegative,
}

impl Rule {
    fn holds(self, v: f64) -> bool {
        v.is_finite()
            && match self {
                Rule::Finite => true,
                Rule::Positive => v > 0.0,
                Rule::NonNegative => v >= 0.0,
            }
    }

    fn wants(self) -> &'static str {
        match self {
            Rule::Finite => "a finite number",
            Rule::Positive => "a finite number above zero",
            Rule::NonNegative => "a finite number, zero or above",
        }
    }
}

use Rule::{NonNegative as NonNeg, Positive as Pos};

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

/// Every number of a parsed table with its dotted path (`segment[].hold_s` in arrays).
fn numbers(t: &toml::Table, prefix: &str, out: &mut Vec<(String, f64)>) {
    for (k, v) in t {
        let path = if prefix.is_empty() {
            k.clone()
        } else {
            format!("{prefix}.{k}")
        };
        match v {
            toml::Value::Float(x) => out.push((path, *x)),
            toml::Value::Integer(i) => out.push((path, *i as f64)),
            toml::Value::Table(sub) => numbers(sub, &path, out),
            toml::Value::Array(items) => {
                for item in items {
                    match item {
                        toml::Value::Table(sub) => numbers(sub, &format!("{path}[]"), out),
                        toml::Value::Float(x) => out.push((path.clone(), *x)),
                        _ => {}
                    }
                }
            }
            _ => {}
        }
    }
}

/// Check the numbers of `text`, a file of `kind` whose keys sit under `prefix` (empty for the
/// file itself; `calibration` for the calibration inside a run's metadata). Every problem is
/// named with its line.
pub fn check(kind: Kind, text: &str, prefix: &str) -> Result<(), String> {
    let table: toml::Table = text
        .parse()
        .map_err(|e: toml::de::Error| bounded(&e.to_string()))?;
    let scope = match prefix {
        "" => Some(&table),
        p => table.get(p).and_then(|v| v.as_table()),
    };
    let Some(scope) = scope else {
        return Ok(());
    };
    let mut found = Vec::new();
    numbers(scope, "", &mut found);
    let lines = key_lines(text);
    let mut problems = Vec::new();
    for (path, v) in found {
        let rule = rules(kind)
            .iter()
            .find(|(k, _)| *k == path)
            .map_or(Rule::Finite, |r| r.1);
        if !rule.holds(v) {
            let full = if prefix.is_empty() {
                path.clone()
            } else {
                format!("{prefix}.{path}")
            };
            let at = lines
                .get(&full)
                .map(|n| format!(" (line {n})"))
                .unwrap_or_default();
            problems.push(format!("`{full}` = {v}{at} must be {}", rule.wants()));
        }
    }
    if problems.is_empty() {
        Ok(())
    } else {
        Err(bounded(&problems.join("; ")))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nan_zero_and_negative_values_are_named_with_their_lines() {
        let text = "[hall]\nsensitivity_mv_per_mt = 0.0\noffset_mv = nan\n[gap]\ngap_mm = -1.0\n[ntc]\nbeta_k = 0\n";
        let e = check(Kind::Calibration, text, "").unwrap_err();
        assert!(
            e.contains(
                "`hall.sensitivity_mv_per_mt` = 0 (line 2) must be a finite number above zero"
            ),
            "{e}"
        );
        assert!(e.contains("`hall.offset_mv` = NaN (line 3)"), "{e}");
        assert!(e.contains("`gap.gap_mm` = -1 (line 5)"), "{e}");
        assert!(e.contains("`ntc.beta_k` = 0 (line 7)"), "{e}");
    }

    #[test]
    fn a_prefix_checks_the_table_inside_a_run_record() {
        let text = "software = \"x\"\n[magnet]\nmax_working_C = inf\n";
        let e = check(Kind::Magnet, text, "magnet").unwrap_err();
        assert!(e.contains("`magnet.max_working_C` = inf (line 3)"), "{e}");
        assert!(check(Kind::Magnet, "[magnet]\nmax_working_C = 80.0\n", "magnet").is_ok());
    }

    #[test]
    fn array_entries_are_checked() {
        let text = "name = \"p\"\n[[segment]]\ntarget_C = 50.0\nhold_s = -5\n";
        let e = check(Kind::Profile, text, "").unwrap_err();
        assert!(e.contains("`segment[].hold_s` = -5"), "{e}");
    }
}
