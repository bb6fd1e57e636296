//! A lot's decision in the store: its sampling plan (n, c), the parts judged, the defects and
//! the decision as it stands, replaced as each part is judged (one row per lot).

use super::backend::Value;
use super::error::StoreError;
use super::store::Store;

/// A lot's decision as the store keeps it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LotDecision {
    /// The lot.
    pub lot: String,
    /// Its supplier and order.
    pub supplier: Option<String>,
    /// Purchase order.
    pub purchase_order: Option<String>,
    /// The grade.
    pub grade: String,
    /// Sample size and acceptance number.
    pub sample_size: u64,
    /// Acceptance number.
    pub acceptance_number: u64,
    /// Parts judged, defects among them.
    pub judged: u64,
    /// Defects.
    pub defects: u64,
    /// `accept`, `reject` or `open`.
    pub decision: String,
    /// The decision in words.
    pub words: String,
}

const COLUMNS: &str = "lot, supplier, purchase_order, grade, sample_size, acceptance_number, \
    judged, defects, decision, words, decided_utc";

impl Store {
    /// Keep `d` as its lot's decision (replacing the one before).
    pub fn put_lot_decision(&mut self, d: &LotDecision) -> Result<(), StoreError> {
        let int = |v: u64| Value::Int(i64::try_from(v).unwrap_or(i64::MAX));
        self.write(|db| {
            db.execute(
                "DELETE FROM lot_decisions WHERE lot = $1",
                &[d.lot.as_str().into()],
            )?;
            db.execute(
                &format!(
                    "INSERT INTO lot_decisions ({COLUMNS}) \
                     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)"
                ),
                &[
                    d.lot.as_str().into(),
                    d.supplier.clone().into(),
                    d.purchase_order.clone().into(),
                    d.grade.as_str().into(),
                    int(d.sample_size),
                    int(d.acceptance_number),
                    int(d.judged),
                    int(d.defects),
                    d.decision.as_str().into(),
                    d.words.as_str().into(),
                    crate::run_dir::utc_now().into(),
                ],
            )?;
            Ok(())
        })
    }

    /// The lot's decision, if one is kept.
    pub fn lot_decision(&mut self, lot: &str) -> Result<Option<LotDecision>, StoreError> {
        let rows = self.db().query(
            &format!("SELECT {COLUMNS} FROM lot_decisions WHERE lot = $1"),
            &[lot.into()],
        )?;
        Ok(rows.first().map(|r| {
            let columns = super::backend::Columns::new(COLUMNS);
            let cell = |name: &str| columns.cell(r, name);
            let n = |name: &str| cell(name).int().unwrap_or(0).max(0) as u64;
            let t = |name: &str| cell(name).text().unwrap_or_default();
            LotDecision {
                lot: t("lot"),
                supplier: cell("supplier").text(),
                purchase_order: cell("purchase_order").text(),
                grade: t("grade"),
                sample_size: n("sample_size"),
                acceptance_number: n("acceptance_number"),
                judged: n("judged"),
                defects: n("defects"),
                decision: t("decision"),
                words: t("words"),
            }
        }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::history::Location;

    #[test]
    fn a_lots_decision_is_replaced_as_parts_are_judged_and_read_back_by_name() {
        let dir = tempfile::tempdir().unwrap();
        let mut store = Store::open(&Location::Sqlite(dir.path().join("h.sqlite"))).unwrap();
        let mut d = LotDecision {
            lot: "DEMO-LOT-26-20".into(),
            supplier: Some("Kestrel Magnet Works (invented)".into()),
            purchase_order: None,
            grade: "N42SH".into(),
            sample_size: 3,
            acceptance_number: 0,
            judged: 1,
            defects: 0,
            decision: "open".into(),
            words: "open: 0 defects in 1 of 3 judged".into(),
        };
        store.put_lot_decision(&d).unwrap();
        d.judged = 3;
        d.decision = "accept".into();
        d.words = "accept: 0 defects in 3 of 3".into();
        store.put_lot_decision(&d).unwrap();
        assert_eq!(store.lot_decision("DEMO-LOT-26-20").unwrap(), Some(d));
        assert_eq!(store.lot_decision("no such lot").unwrap(), None);
    }
}
