//! What an inspection is for and who made it: lot, purchase order, supplier and operator.
//! Given when recording (kept in `run.toml`), carried into the analysis, the reports and the
//! history store; each is optional free text.

use serde::{Deserialize, Serialize};

/// Who made a test, and for which shipment.
#[derive(Debug, Clone, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Inspection {
    /// The supplier's (or the user's) lot or batch.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lot: Option<String>,
    /// The purchase order the shipment came on.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub purchase_order: Option<String>,
    /// Who supplied the magnets.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub supplier: Option<String>,
    /// Who ran the test.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub operator: Option<String>,
}

impl Inspection {
    /// Nothing stated.
    pub fn is_empty(&self) -> bool {
        *self == Inspection::default()
    }

    /// Each field of `self`, or `other`'s where `self` has none (a run's own values win).
    pub fn or(&self, other: &Inspection) -> Inspection {
        let pick = |a: &Option<String>, b: &Option<String>| a.clone().or_else(|| b.clone());
        Inspection {
            lot: pick(&self.lot, &other.lot),
            purchase_order: pick(&self.purchase_order, &other.purchase_order),
            supplier: pick(&self.supplier, &other.supplier),
            operator: pick(&self.operator, &other.operator),
        }
    }

    /// Blank values dropped (an empty `--lot ""` states nothing), the rest trimmed.
    pub fn tidied(self) -> Inspection {
        let t = |v: Option<String>| v.map(|s| s.trim().to_string()).filter(|s| !s.is_empty());
        Inspection {
            lot: t(self.lot),
            purchase_order: t(self.purchase_order),
            supplier: t(self.supplier),
            operator: t(self.operator),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Inspection;

    #[test]
    fn a_runs_own_values_win_and_blanks_state_nothing() {
        let run = Inspection {
            lot: Some("L-7".into()),
            ..Default::default()
        };
        let given = Inspection {
            lot: Some("other".into()),
            supplier: Some("  Ferrum Works ".into()),
            operator: Some(" ".into()),
            ..Default::default()
        }
        .tidied();
        let both = run.or(&given);
        assert_eq!(both.lot.as_deref(), Some("L-7"));
        assert_eq!(both.supplier.as_deref(), Some("Ferrum Works"));
        assert_eq!(both.operator, None);
    }
}
