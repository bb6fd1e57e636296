//! Reading the store: runs found by magnet, lot, supplier, grade, date or verdict (each with
//! its latest analysis), a lot's summary, a supplier's trend, and CSV export. The same SQL
//! runs on both engines.

use super::backend::{Columns, Value};
use super::error::StoreError;
use super::store::Store;
use crate::analysis::verdict::Outcome;
use crate::lot::{summarise, LotRow, LotSummary};
use crate::timestamps::{format_utc, parse_utc};

/// A bound on when a run started, UTC: a whole day (`2026-01-31`) or an instant (RFC 3339).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct When {
    /// Seconds since 1970 at its start.
    pub secs: u64,
    /// A whole day rather than an instant.
    pub whole_day: bool,
}

impl When {
    /// The first instant it covers, as the store writes times.
    fn first(self) -> String {
        format_utc(self.secs)
    }

    /// The last instant it covers (a day's last second), as the store writes times.
    fn last(self) -> String {
        format_utc(self.secs + if self.whole_day { 86_399 } else { 0 })
    }
}

impl std::str::FromStr for When {
    type Err = String;

    fn from_str(text: &str) -> Result<When, String> {
        let t = text.trim();
        match parse_utc(t) {
            Some(secs) if secs >= 0.0 => Ok(When {
                secs: secs as u64,
                whole_day: !t.contains(['T', ' ']),
            }),
            _ => Err(format!(
                "`{text}` is not a date (YYYY-MM-DD) or an RFC 3339 UTC instant"
            )),
        }
    }
}

/// What to look for; every field given must match (dates compare with the record's start).
#[derive(Debug, Clone, Default)]
pub struct Filter {
    /// The magnet's id.
    pub magnet: Option<String>,
    /// The lot.
    pub lot: Option<String>,
    /// The supplier.
    pub supplier: Option<String>,
    /// The stated grade.
    pub grade: Option<String>,
    /// Started on or after this day or instant.
    pub since: Option<When>,
    /// Started on or before this day (the whole day) or instant.
    pub until: Option<When>,
    /// The latest analysis's verdict.
    pub verdict: Option<Outcome>,
    /// At most this many (the newest), none: all.
    pub limit: Option<u64>,
}

/// A run and its latest analysis.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Found {
    /// Stable key.
    pub run_uid: String,
    /// Folder or file name.
    pub run_name: String,
    /// Where it is, on which host.
    pub location: String,
    /// Host.
    pub host: String,
    /// Magnet, grade, lot, order, supplier, operator.
    pub magnet_id: Option<String>,
    /// Stated grade.
    pub grade: Option<String>,
    /// Lot.
    pub lot: Option<String>,
    /// Purchase order.
    pub purchase_order: Option<String>,
    /// Supplier.
    pub supplier: Option<String>,
    /// Operator.
    pub operator: Option<String>,
    /// Start (or, for a log, when it was stored), UTC.
    pub when_utc: String,
    /// Latest analysis: verdict and figures (absent when never analysed).
    pub verdict: Option<Outcome>,
    /// α, %/°C, and its U95.
    pub alpha_pct_per_c: Option<f64>,
    /// U95 of α.
    pub alpha_u95_pct_per_c: Option<f64>,
    /// Br, T, and its U95.
    pub br_t: Option<f64>,
    /// U95 of Br.
    pub br_u95_t: Option<f64>,
    /// Irreversible loss, %, and its U95.
    pub loss_pct: Option<f64>,
    /// U95 of the loss.
    pub loss_u95_pct: Option<f64>,
    /// B at 20 °C, mT.
    pub b20_mt: Option<f64>,
    /// When the latest analysis was made.
    pub analysed_utc: Option<String>,
}

/// The columns of a search, by which a row's cells are read.
const FOUND_COLUMNS: &str = "r.run_uid, r.run_name, r.location, r.host, r.magnet_id, \
    r.grade, r.lot, r.purchase_order, r.supplier, r.operator, \
    r.started_utc, a.verdict, a.alpha_pct_per_C, a.alpha_u95_pct_per_C, \
    a.br_T, a.br_u95_T, a.loss_pct, a.loss_u95_pct, a.b20_mT, a.analysed_utc";

const FOUND_FROM: &str =
    " FROM runs r LEFT JOIN analyses a ON a.analysis_uid = r.latest_analysis_uid";

fn found(columns: &Columns, row: &super::backend::Row) -> Found {
    let cell = |name: &str| columns.cell(row, name);
    let t = |name: &str| cell(name).text();
    let f = |name: &str| cell(name).real();
    Found {
        run_uid: t("r.run_uid").unwrap_or_default(),
        run_name: t("r.run_name").unwrap_or_default(),
        location: t("r.location").unwrap_or_default(),
        host: t("r.host").unwrap_or_default(),
        magnet_id: t("r.magnet_id"),
        grade: t("r.grade"),
        lot: t("r.lot"),
        purchase_order: t("r.purchase_order"),
        supplier: t("r.supplier"),
        operator: t("r.operator"),
        when_utc: t("r.started_utc").unwrap_or_default(),
        verdict: t("a.verdict").and_then(|w| w.parse().ok()),
        alpha_pct_per_c: f("a.alpha_pct_per_C"),
        alpha_u95_pct_per_c: f("a.alpha_u95_pct_per_C"),
        br_t: f("a.br_T"),
        br_u95_t: f("a.br_u95_T"),
        loss_pct: f("a.loss_pct"),
        loss_u95_pct: f("a.loss_u95_pct"),
        b20_mt: f("a.b20_mT"),
        analysed_utc: t("a.analysed_utc"),
    }
}

impl Filter {
    /// The WHERE clause and its values, placeholders numbered from `$1`.
    fn clause(&self) -> (String, Vec<Value>) {
        let mut conds = Vec::new();
        let mut vals: Vec<Value> = Vec::new();
        let mut add = |sql: &str, v: String| {
            vals.push(Value::Text(v));
            conds.push(sql.replace('?', &format!("${}", vals.len())));
        };
        let when = "r.started_utc";
        if let Some(m) = &self.magnet {
            add("r.magnet_id = ?", m.clone());
        }
        if let Some(l) = &self.lot {
            add("r.lot = ?", l.clone());
        }
        if let Some(s) = &self.supplier {
            add("r.supplier = ?", s.clone());
        }
        if let Some(g) = &self.grade {
            add("r.grade = ?", g.clone());
        }
        if let Some(s) = self.since {
            add(&format!("{when} >= ?"), s.first());
        }
        if let Some(u) = self.until {
            add(&format!("{when} <= ?"), u.last());
        }
        if let Some(v) = self.verdict {
            add("a.verdict = ?", v.word().into());
        }
        let sql = if conds.is_empty() {
            String::new()
        } else {
            format!(" WHERE {}", conds.join(" AND "))
        };
        (sql, vals)
    }
}

impl Store {
    /// Runs matching `filter`, oldest first (the newest `limit` when one is given).
    pub fn find(&mut self, filter: &Filter) -> Result<Vec<Found>, StoreError> {
        let (clause, vals) = filter.clause();
        let when = "r.started_utc";
        let sql = match filter.limit {
            Some(n) => format!(
                "SELECT {FOUND_COLUMNS}{FOUND_FROM}{clause} ORDER BY {when} DESC, r.run_uid LIMIT {n}"
            ),
            None => format!("SELECT {FOUND_COLUMNS}{FOUND_FROM}{clause} ORDER BY {when}, r.run_uid"),
        };
        let columns = Columns::new(FOUND_COLUMNS);
        let mut rows: Vec<Found> = self
            .db()
            .query(&sql, &vals)?
            .iter()
            .map(|r| found(&columns, r))
            .collect();
        if filter.limit.is_some() {
            rows.reverse();
        }
        Ok(rows)
    }

    /// How many runs and analyses the store holds.
    pub fn counts(&mut self) -> Result<(i64, i64), StoreError> {
        let r = self.db().query(
            "SELECT (SELECT COUNT(*) FROM runs), (SELECT COUNT(*) FROM analyses)",
            &[],
        )?;
        let row = r.first().cloned().unwrap_or_default();
        let n = |i: usize| row.get(i).and_then(Value::int).unwrap_or(0);
        Ok((n(0), n(1)))
    }

    /// A supplier's runs over time (optionally one grade): the latest analysis of each.
    pub fn trend(
        &mut self,
        supplier: &str,
        grade: Option<&str>,
    ) -> Result<Vec<TrendPoint>, StoreError> {
        const COLUMNS: &str = "r.started_utc, r.magnet_id, r.lot, r.latest_alpha_pct_per_C, \
            r.latest_br_T, r.latest_loss_pct, r.grade";
        let mut sql = format!(
            "SELECT {COLUMNS} FROM runs r WHERE r.supplier = $1 \
             AND r.latest_analysis_uid IS NOT NULL"
        );
        let mut vals = vec![Value::Text(supplier.into())];
        if let Some(g) = grade {
            sql.push_str(" AND r.grade = $2");
            vals.push(Value::Text(g.into()));
        }
        sql.push_str(" ORDER BY r.supplier, r.started_utc, r.run_uid");
        let columns = Columns::new(COLUMNS);
        Ok(self
            .db()
            .query(&sql, &vals)?
            .into_iter()
            .map(|r| {
                let cell = |name: &str| columns.cell(&r, name);
                TrendPoint {
                    when_utc: cell("r.started_utc").text().unwrap_or_default(),
                    magnet_id: cell("r.magnet_id").text(),
                    lot: cell("r.lot").text(),
                    alpha_pct_per_c: cell("r.latest_alpha_pct_per_C").real(),
                    br_t: cell("r.latest_br_T").real(),
                    loss_pct: cell("r.latest_loss_pct").real(),
                    grade: cell("r.grade").text(),
                }
            })
            .collect())
    }
}

/// One run in a supplier's trend.
#[derive(Debug, Clone, PartialEq)]
pub struct TrendPoint {
    /// When it was recorded, UTC.
    pub when_utc: String,
    /// Magnet and lot.
    pub magnet_id: Option<String>,
    /// Lot.
    pub lot: Option<String>,
    /// α, %/°C.
    pub alpha_pct_per_c: Option<f64>,
    /// Br, T.
    pub br_t: Option<f64>,
    /// Irreversible loss, %.
    pub loss_pct: Option<f64>,
    /// Stated grade.
    pub grade: Option<String>,
}

/// A lot as the store holds it: its runs, when they were recorded, the grades and suppliers
/// named, and the analysed runs summarised as `remanent lot` summarises a lot (the one lot
/// summary: spreads, robust outliers, verdict counts).
#[derive(Debug, Clone)]
pub struct LotHistory {
    /// The lot.
    pub lot: String,
    /// Runs in it.
    pub runs: usize,
    /// Grades named in it.
    pub grades: Vec<String>,
    /// Suppliers named in it.
    pub suppliers: Vec<String>,
    /// First and last start, UTC.
    pub span_utc: Option<(String, String)>,
    /// The runs with an analysis (none: not one was analysed).
    pub summary: Option<LotSummary>,
}

impl LotHistory {
    /// Runs with an analysis.
    pub fn analysed(&self) -> usize {
        self.summary.as_ref().map_or(0, |s| s.rows.len())
    }
}

/// A found run's latest analysis as a row of a lot (none: never analysed).
fn lot_row(r: &Found) -> Option<LotRow> {
    Some(LotRow {
        id: r.magnet_id.clone().unwrap_or_else(|| r.run_name.clone()),
        grade: r.grade.clone().unwrap_or_default(),
        alpha: r.alpha_pct_per_c?,
        alpha_u95: r.alpha_u95_pct_per_c?,
        loss_pct: r.loss_pct,
        loss_u95_pct: r.loss_u95_pct,
        b20_mt: r.b20_mt?,
        br_t: r.br_t,
        verdict: r.verdict?,
        heat_damaged: false,
        outlier: Vec::new(),
    })
}

/// The lot `lot` from its runs (as [`Store::find`] returns them).
pub fn lot_history(lot: &str, runs: &[Found]) -> LotHistory {
    let names = |f: fn(&Found) -> Option<&String>| {
        let mut v: Vec<String> = runs.iter().filter_map(f).cloned().collect();
        v.sort();
        v.dedup();
        v
    };
    let rows: Vec<LotRow> = runs.iter().filter_map(lot_row).collect();
    LotHistory {
        lot: lot.into(),
        runs: runs.len(),
        grades: names(|r| r.grade.as_ref()),
        suppliers: names(|r| r.supplier.as_ref()),
        span_utc: match (runs.first(), runs.last()) {
            (Some(a), Some(b)) => Some((a.when_utc.clone(), b.when_utc.clone())),
            _ => None,
        },
        summary: (!rows.is_empty()).then(|| summarise(rows)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_day_bounds_its_whole_day_and_an_instant_itself() {
        // RFC 3339 §5.6 full-date and date-time; the store writes times as format_utc does
        let day: When = "2026-01-31".parse().unwrap();
        assert!(day.whole_day);
        assert_eq!(day.first(), "2026-01-31T00:00:00Z");
        assert_eq!(day.last(), "2026-01-31T23:59:59Z");
        let at: When = "2026-01-31T10:20:30Z".parse().unwrap();
        assert!(!at.whole_day);
        assert_eq!(
            (at.first(), at.last()),
            (at.last(), "2026-01-31T10:20:30Z".into())
        );
        assert!("31/01/2026".parse::<When>().is_err());
        assert!("2026-02-30".parse::<When>().is_err());
    }

    #[test]
    fn a_verdict_filter_is_the_word_the_store_keeps() {
        for o in [Outcome::Pass, Outcome::Fail, Outcome::Indeterminate] {
            let f = Filter {
                verdict: Some(o),
                ..Default::default()
            };
            let (sql, vals) = f.clause();
            assert_eq!(sql, " WHERE a.verdict = $1");
            assert!(matches!(&vals[..], [Value::Text(w)] if w == o.word()));
            assert_eq!(o.word().to_uppercase().parse::<Outcome>(), Ok(o));
        }
    }
}
