//! Found runs as CSV: one row per run with its latest analysis, in the documented SI-based
//! units whatever the display settings (`alpha_pct_per_C`, `br_T`, `loss_pct`, `b20_mT`).

use super::query::Found;

/// The header of an export.
pub const HEADER: [&str; 21] = [
    "run_uid",
    "run_name",
    "magnet_id",
    "grade",
    "lot",
    "purchase_order",
    "supplier",
    "operator",
    "started_utc",
    "verdict",
    "alpha_pct_per_C",
    "alpha_u95_pct_per_C",
    "br_T",
    "br_u95_T",
    "loss_pct",
    "loss_u95_pct",
    "b20_mT",
    "analysed_utc",
    "host",
    "location",
    "analysed",
];

/// The rows as CSV text (RFC 4180 quoting by the csv crate).
pub fn to_csv(rows: &[Found]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    let num = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
    let txt = |v: &Option<String>| v.clone().unwrap_or_default();
    let _ = w.write_record(HEADER);
    for r in rows {
        let _ = w.write_record([
            r.run_uid.clone(),
            r.run_name.clone(),
            txt(&r.magnet_id),
            txt(&r.grade),
            txt(&r.lot),
            txt(&r.purchase_order),
            txt(&r.supplier),
            txt(&r.operator),
            r.when_utc.clone(),
            r.verdict.map(|v| v.word()).unwrap_or_default().into(),
            num(r.alpha_pct_per_c),
            num(r.alpha_u95_pct_per_c),
            num(r.br_t),
            num(r.br_u95_t),
            num(r.loss_pct),
            num(r.loss_u95_pct),
            num(r.b20_mt),
            txt(&r.analysed_utc),
            r.host.clone(),
            r.location.clone(),
            if r.verdict.is_some() { "yes" } else { "no" }.into(),
        ]);
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}
