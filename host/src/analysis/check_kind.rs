//! What a check of the verdict judges: a closed set of kinds, each written into every output
//! and `analysis.json` by its name.

use serde::Serialize;

/// What a check judges; `analysis.json` writes its name.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum CheckKind {
    /// α(Br) against the grade's window.
    #[serde(rename = "α(Br)")]
    Alpha,
    /// Br against the grade's window.
    #[serde(rename = "Br")]
    Br,
    /// The material family α and Br point to.
    #[serde(rename = "material family")]
    Family,
    /// The grade is known at all.
    #[serde(rename = "grade")]
    Grade,
    /// A loss within the rating: heat damage or a coercivity below grade.
    #[serde(rename = "irreversible loss")]
    Loss,
    /// A loss at or below the safe test peak: a coercivity below grade.
    #[serde(rename = "coercivity")]
    Coercivity,
    /// The part's field beside the master sample's.
    #[serde(rename = "field against the master")]
    MasterField,
    /// The part's α beside the master sample's.
    #[serde(rename = "α against the master")]
    MasterAlpha,
}

impl CheckKind {
    /// Its name, as every output writes it.
    pub fn name(self) -> &'static str {
        match self {
            CheckKind::Alpha => "α(Br)",
            CheckKind::Br => "Br",
            CheckKind::Family => "material family",
            CheckKind::Grade => "grade",
            CheckKind::Loss => "irreversible loss",
            CheckKind::Coercivity => "coercivity",
            CheckKind::MasterField => "field against the master",
            CheckKind::MasterAlpha => "α against the master",
        }
    }
}

impl std::fmt::Display for CheckKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.pad(self.name())
    }
}

/// A kind compares equal to its name (`c.what == "coercivity"`).
impl PartialEq<&str> for CheckKind {
    fn eq(&self, name: &&str) -> bool {
        self.name() == *name
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_check_kind_writes_the_name_it_compares_and_prints_as() {
        use CheckKind::*;
        for k in [
            Alpha,
            Br,
            Family,
            Grade,
            Loss,
            Coercivity,
            MasterField,
            MasterAlpha,
        ] {
            assert_eq!(serde_json::to_value(k).unwrap().as_str(), Some(k.name()));
            assert!(k == k.name());
            assert_eq!(format!("{k:<30}|"), format!("{:<30}|", k.name()));
        }
    }
}
