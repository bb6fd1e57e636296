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
            let cell = |name: &str| {
                COLUMNS
                    .split(',')
                    .position(|c| c.trim() == name)
                    .map(|i| r[i].clone())
                    .unwrap_or(Value::Null)
            };
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
