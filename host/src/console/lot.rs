//! A lot session at the console: the shipment, the magnet type its parts are (grade and shape,
//! so the safe test peak), the single sampling plan its AQL and RQL give, and the parts judged
//! so far with the lot's decision as it stands.

use serde::Serialize;

use crate::acceptance_plan::{design, Model, Plan, PlanError};
use crate::analysis::verdict::Outcome;
use crate::inspection::Inspection;

/// What the operator states when a lot starts.
#[derive(Debug, Clone, PartialEq, serde::Deserialize)]
pub struct LotRequest {
    /// The lot (or batch).
    pub lot: String,
    /// The supplier.
    pub supplier: String,
    /// The purchase order.
    #[serde(default)]
    pub order: String,
    /// The operator.
    #[serde(default)]
    pub operator: String,
    /// What the parts are: a demo part id or a magnet file (grade and shape).
    pub magnet: String,
    /// Acceptable quality level, percent defective.
    pub aql_pct: f64,
    /// Rejectable quality level, percent defective.
    pub rql_pct: f64,
    /// The lot's size, when known (the plan is then hypergeometric).
    #[serde(default)]
    pub lot_size: Option<u64>,
}

/// One part tested in the session.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartRecord {
    /// Its id, as typed or scanned.
    pub id: String,
    /// The run directory.
    pub run: String,
    /// The verdict (none: the record did not come to one).
    pub verdict: Option<Outcome>,
    /// Why there is none, or the certificate's number.
    pub note: String,
}

/// A lot being inspected.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LotSession {
    /// The shipment.
    pub lot: String,
    /// Supplier.
    pub supplier: String,
    /// Purchase order.
    pub order: String,
    /// Operator.
    pub operator: String,
    /// The magnet type.
    pub magnet: String,
    /// Its grade.
    pub grade: String,
    /// AQL and RQL, %.
    pub aql_pct: f64,
    /// RQL, %.
    pub rql_pct: f64,
    /// Sample size.
    pub n: u64,
    /// Acceptance number.
    pub c: u64,
    /// The test the parts' grade and shape allow, in words (the safe test peak).
    pub test: Vec<String>,
    /// The parts so far, in order.
    pub parts: Vec<PartRecord>,
}

/// Where the lot stands.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Decision {
    /// Every part of the sample judged, defects within the acceptance number.
    Accept,
    /// More defects than the acceptance number: rejected, whatever the rest would show.
    Reject,
    /// Still open.
    Open,
}

impl LotSession {
    /// A new session from the operator's request, its plan designed as `sampling-plan` does
    /// (producer's risk 5 %, consumer's 10 %).
    pub fn start(req: &LotRequest, grade: &str) -> Result<LotSession, PlanError> {
        let model = req.lot_size.map_or(Model::Binomial, Model::Hypergeometric);
        let Plan { n, c, .. } =
            design(model, req.aql_pct / 100.0, req.rql_pct / 100.0, 0.05, 0.10)?;
        Ok(LotSession {
            lot: req.lot.trim().into(),
            supplier: req.supplier.trim().into(),
            order: req.order.trim().into(),
            operator: req.operator.trim().into(),
            magnet: req.magnet.trim().into(),
            grade: grade.into(),
            aql_pct: req.aql_pct,
            rql_pct: req.rql_pct,
            n,
            c,
            test: Vec::new(),
            parts: Vec::new(),
        })
    }

    /// The shipment's details, as a record keeps them.
    pub fn inspection(&self) -> Inspection {
        let opt = |s: &str| Some(s.to_string()).filter(|s| !s.is_empty());
        Inspection {
            lot: opt(&self.lot),
            purchase_order: opt(&self.order),
            supplier: opt(&self.supplier),
            operator: opt(&self.operator),
        }
    }

    /// Parts judged (PASS or FAIL; an indeterminate part is to be tested again) and defects.
    pub fn counts(&self) -> (u64, u64) {
        let judged = self
            .parts
            .iter()
            .filter(|p| matches!(p.verdict, Some(Outcome::Pass | Outcome::Fail)))
            .count() as u64;
        let defects = self
            .parts
            .iter()
            .filter(|p| p.verdict == Some(Outcome::Fail))
            .count() as u64;
        (judged, defects)
    }

    /// The decision as it stands.
    pub fn decision(&self) -> Decision {
        let (judged, defects) = self.counts();
        if defects > self.c {
            Decision::Reject
        } else if judged >= self.n {
            Decision::Accept
        } else {
            Decision::Open
        }
    }

    /// The decision in words: "accept: 0 defects in 32 of 32", "reject: 4 defects > c = 3".
    pub fn decision_words(&self) -> String {
        let (judged, defects) = self.counts();
        let d = crate::units::count(defects, "defect", "defects");
        match self.decision() {
            Decision::Accept => format!("accept: {d} in {judged} of {}", self.n),
            Decision::Reject => format!("reject: {d} > c = {}", self.c),
            Decision::Open => format!(
                "open: {d} in {judged} of {} judged (accept with at most c = {})",
                self.n, self.c
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn session(n: u64, c: u64, verdicts: &[Outcome]) -> LotSession {
        LotSession {
            lot: "L".into(),
            supplier: "S".into(),
            order: String::new(),
            operator: String::new(),
            magnet: "m".into(),
            grade: "N42".into(),
            aql_pct: 1.0,
            rql_pct: 6.0,
            n,
            c,
            test: Vec::new(),
            parts: verdicts
                .iter()
                .enumerate()
                .map(|(i, v)| PartRecord {
                    id: format!("P{i}"),
                    run: String::new(),
                    verdict: Some(*v),
                    note: String::new(),
                })
                .collect(),
        }
    }

    #[test]
    fn the_decision_follows_the_plan_and_an_indeterminate_part_is_not_judged() {
        use Outcome::*;
        let s = session(3, 0, &[Pass, Pass, Pass]);
        assert_eq!(s.decision_words(), "accept: 0 defects in 3 of 3");
        let s = session(32, 3, &[Fail, Fail, Pass, Fail, Fail]);
        assert_eq!(s.decision_words(), "reject: 4 defects > c = 3");
        let s = session(3, 0, &[Pass, Indeterminate, Pass]);
        assert_eq!(s.decision(), Decision::Open);
        assert!(s.decision_words().starts_with("open: 0 defects in 2 of 3"));
    }

    #[test]
    fn the_plan_is_the_one_sampling_plan_designs() {
        // AQL 1 %, RQL 6 %: n = 110, c = 3, the plan `remanent sampling-plan --aql 1 --rql 6`
        // prints (the sampling module's own tests hold its plans to published ones)
        let req = LotRequest {
            lot: "L".into(),
            supplier: "S".into(),
            order: String::new(),
            operator: String::new(),
            magnet: "RM-N42-D10x5".into(),
            aql_pct: 1.0,
            rql_pct: 6.0,
            lot_size: None,
        };
        let s = LotSession::start(&req, "N42").unwrap();
        assert_eq!((s.n, s.c), (110, 3));
    }
}
