//! Numbers in the user's TOML files that cannot be true — NaN or infinity anywhere, a zero or
//! negative sensitivity, a negative gap, a zero Beta — refused with the line and the key, before
//! anything is converted or judged with them; and the text helpers every TOML problem uses
//! (the line of each key, messages kept short). Which key takes which rule is `formats`'.

use std::collections::BTreeMap;

/// Longest message a format error gives, characters.
pub const MAX_MESSAGE_CHARS: usize = 400;

/// Cut a message to [`MAX_MESSAGE_CHARS`].
pub fn bounded(msg: &str) -> String {
    if msg.chars().count() <= MAX_MESSAGE_CHARS {
        return msg.to_string();
    }
    let cut: String = msg.chars().take(MAX_MESSAGE_CHARS).collect();
    format!("{cut}… (message cut)")
}

/// The line of each key (1-based), from the headers and `key =` lines.
pub fn key_lines(text: &str) -> BTreeMap<String, usize> {
    let mut out = BTreeMap::new();
    let mut section = String::new();
    for (n, line) in text.lines().enumerate() {
        let l = line.trim();
        if let Some(h) = l.strip_prefix("[[").and_then(|h| h.split("]]").next()) {
            section = format!("{}[]", h.trim());
            out.entry(h.trim().to_string()).or_insert(n + 1);
        } else if let Some(h) = l.strip_prefix('[').and_then(|h| h.split(']').next()) {
            section = h.trim().to_string();
            out.entry(section.clone()).or_insert(n + 1);
        } else if let Some((k, _)) = l.split_once('=') {
            let k = k.trim().trim_matches('"');
            let path = if section.is_empty() {
                k.to_string()
            } else {
                format!("{section}.{k}")
            };
            out.entry(path).or_insert(n + 1);
        }
    }
    out
}

/// What a number must be.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rule {
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

/// Check the numbers of `text` against `rules` (keys with more than "finite" to satisfy; every
/// other number must be finite); the keys sit under `prefix` (empty for the file itself;
/// `calibration` for the calibration inside a run's metadata). Every problem is named with its
/// line.
pub fn check(rules: &[(&str, Rule)], text: &str, prefix: &str) -> Result<(), String> {
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
        let rule = rules
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
    #[test]
    fn nan_zero_and_negative_values_are_named_with_their_lines() {
        let text = "[hall]\nsensitivity_mv_per_mt = 0.0\noffset_mv = nan\n[gap]\ngap_mm = -1.0\n[ntc]\nbeta_k = 0\n";
        let e =
            crate::formats::check_numbers(crate::formats::Kind::Calibration, text, "").unwrap_err();
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
        let e = crate::formats::check_numbers(crate::formats::Kind::Magnet, text, "magnet")
            .unwrap_err();
        assert!(e.contains("`magnet.max_working_C` = inf (line 3)"), "{e}");
        assert!(crate::formats::check_numbers(
            crate::formats::Kind::Magnet,
            "[magnet]\nmax_working_C = 80.0\n",
            "magnet"
        )
        .is_ok());
    }

    #[test]
    fn array_entries_are_checked() {
        let text = "name = \"p\"\n[[segment]]\ntarget_C = 50.0\nhold_s = -5\n";
        let e = crate::formats::check_numbers(crate::formats::Kind::Profile, text, "").unwrap_err();
        assert!(e.contains("`segment[].hold_s` = -5"), "{e}");
    }
}
