//! Grade specifications: a TOML table of limits per grade, and the built-in one with typical
//! values. A user's own table (their supplier's datasheet) is the authority for a verdict.

use std::path::Path;

use serde::{Deserialize, Serialize};

/// Limits for one grade.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GradeSpec {
    /// Grade name, as magnets state it.
    pub grade: String,
    /// Material family.
    pub family: String,
    /// Lowest acceptable Br, T.
    #[serde(rename = "br_min_T")]
    pub br_min_t: f64,
    /// Highest expected Br, T.
    #[serde(rename = "br_max_T")]
    pub br_max_t: f64,
    /// Most negative acceptable α(Br), %/°C.
    #[serde(rename = "alpha_min_pct_per_C")]
    pub alpha_min: f64,
    /// Least negative acceptable α(Br), %/°C.
    #[serde(rename = "alpha_max_pct_per_C")]
    pub alpha_max: f64,
    /// Rated maximum working temperature, °C.
    #[serde(rename = "max_working_C")]
    pub max_working_c: f64,
    /// Where the numbers come from.
    pub source: String,
    /// Lowest HcJ at 20 °C, kA/m (none: no knee model for this material, e.g. AlNiCo).
    #[serde(
        rename = "hcj_min_kA_per_m",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    pub hcj_min_ka_per_m: Option<f64>,
    /// Typical temperature coefficient of HcJ, %/°C (positive for ferrite).
    #[serde(
        rename = "beta_hcj_pct_per_C",
        default,
        skip_serializing_if = "Option::is_none"
    )]
    pub beta_hcj_pct_per_c: Option<f64>,
    /// Recoil permeability (1.05 for sintered NdFeB and SmCo when not given).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub recoil_permeability: Option<f64>,
}

/// A spec table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpecTable {
    /// Rows.
    #[serde(rename = "grade")]
    pub grades: Vec<GradeSpec>,
}

/// The built-in table (typical values; not guarantees).
pub const BUILTIN_TOML: &str = include_str!("specs_builtin.toml");

/// Spec table problems.
#[derive(Debug, thiserror::Error)]
pub enum SpecError {
    /// Unreadable or malformed.
    #[error("spec table {path}: {reason}")]
    Invalid {
        /// File.
        path: String,
        /// Why.
        reason: String,
    },
}

impl SpecTable {
    /// The built-in table.
    pub fn builtin() -> SpecTable {
        toml::from_str(BUILTIN_TOML).expect("the built-in spec table parses")
    }

    /// A table from a file.
    pub fn load(path: &Path) -> Result<SpecTable, SpecError> {
        let err = |reason: String| SpecError::Invalid {
            path: path.display().to_string(),
            reason,
        };
        let text = std::fs::read_to_string(path).map_err(|e| err(e.to_string()))?;
        crate::formats::check(crate::formats::Kind::Specs, &text).map_err(err)?;
        let table: SpecTable =
            toml::from_str(&text).map_err(|e| err(crate::formats::bounded(&e.to_string())))?;
        table.check_families().map_err(err)?;
        Ok(table)
    }

    /// Every grade names a family the analysis knows (`analysis::families`).
    fn check_families(&self) -> Result<(), String> {
        match self
            .grades
            .iter()
            .find(|g| crate::families::find(&g.family).is_none())
        {
            Some(g) => Err(format!(
                "grade {} names the family `{}`, which is not one of: {}",
                g.grade,
                g.family,
                crate::families::FAMILIES
                    .iter()
                    .map(|f| f.name)
                    .collect::<Vec<_>>()
                    .join(", ")
            )),
            None => Ok(()),
        }
    }

    /// The row for `grade` (case-insensitive).
    pub fn find(&self, grade: &str) -> Option<&GradeSpec> {
        self.grades
            .iter()
            .find(|g| g.grade.eq_ignore_ascii_case(grade))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_built_in_grade_names_a_known_family() {
        assert_eq!(SpecTable::builtin().check_families(), Ok(()));
    }

    #[test]
    fn built_in_sources_speak_to_the_user_not_of_project_notes() {
        for g in SpecTable::builtin().grades {
            for word in ["domain notes", "memory"] {
                assert!(!g.source.contains(word), "{}: {}", g.grade, g.source);
            }
        }
    }
}
