//! An open store: opening (migrating, refusing a newer one), write transactions, and storing
//! runs and analyses so that storing the same one again changes nothing.

use super::backend::{Backend, Value};
use super::entry::{self, RunEntry};
use super::error::StoreError;
use super::location::Location;
use super::{pg, schema, sqlite};
use crate::analysis::Analysis;

/// An open store at this program's schema version.
pub struct Store {
    db: Box<dyn Backend>,
}

impl Store {
    /// Open (creating and migrating it as needed). `Location::Off` has no store.
    pub fn open(at: &Location) -> Result<Store, StoreError> {
        Store::open_at(at, schema::SCHEMA_VERSION)
    }

    /// Open, migrating only as far as `version` (tests of the migration path use it).
    pub fn open_at(at: &Location, version: i64) -> Result<Store, StoreError> {
        let mut db: Box<dyn Backend> = match at {
            Location::Sqlite(p) => Box::new(sqlite::Sqlite::open(p)?),
            Location::Postgres(u) => Box::new(pg::Postgres::connect(u)?),
            Location::Off => {
                return Err(StoreError::Open {
                    store: "off".into(),
                    reason: "the history store is turned off (--store off or REMANENT_HISTORY=off)"
                        .into(),
                })
            }
        };
        schema::migrate(db.as_mut(), version)?;
        Ok(Store { db })
    }

    /// Where it is.
    pub fn describe(&self) -> String {
        self.db.describe()
    }

    /// The schema version and the software that last migrated the store.
    pub fn version(&mut self) -> Result<(i64, String), StoreError> {
        schema::version(self.db.as_mut())
    }

    /// Run `f` in one write transaction: all of it is kept, or none.
    pub(crate) fn write<T>(
        &mut self,
        f: impl FnOnce(&mut dyn Backend) -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        self.db.begin_write()?;
        match f(self.db.as_mut()) {
            Ok(v) => {
                self.db.commit()?;
                Ok(v)
            }
            Err(e) => {
                let _ = self.db.rollback();
                Err(e)
            }
        }
    }

    /// Store a run; true if it was new. A run already there keeps its values; a lot, order,
    /// supplier, operator, end or count it lacked is filled in.
    pub fn put_run(&mut self, run: &RunEntry) -> Result<bool, StoreError> {
        self.write(|db| put_run(db, run))
    }

    /// Store an analysis of `run` (storing the run first if need be); true if it was new. The
    /// same analysis stored again changes nothing; a new one becomes the run's latest.
    pub fn put_analysis(&mut self, run: &RunEntry, a: &Analysis) -> Result<bool, StoreError> {
        let row = entry::analysis_row(&run.run_uid, a);
        self.write(|db| {
            put_run(db, run)?;
            put_row(db, &run.run_uid, &row)
        })
    }

    /// Store an analysis as it was filed (its row from [`entry::filed_row`]), with its run;
    /// (run new, analysis new).
    pub fn put_filed(
        &mut self,
        run: &RunEntry,
        row: &entry::AnalysisRow,
    ) -> Result<(bool, bool), StoreError> {
        self.write(|db| Ok((put_run(db, run)?, put_row(db, &run.run_uid, row)?)))
    }

    /// Store many runs with their analyses in one transaction; how many were new (runs,
    /// analyses).
    pub fn put_many(&mut self, items: &[(RunEntry, &Analysis)]) -> Result<(u64, u64), StoreError> {
        self.write(|db| {
            let (mut runs, mut analyses) = (0, 0);
            for (run, a) in items {
                runs += u64::from(put_run(db, run)?);
                let row = entry::analysis_row(&run.run_uid, a);
                analyses += u64::from(put_row(db, &run.run_uid, &row)?);
            }
            Ok((runs, analyses))
        })
    }

    pub(crate) fn db(&mut self) -> &mut dyn Backend {
        self.db.as_mut()
    }
}

fn put_run(db: &mut dyn Backend, run: &RunEntry) -> Result<bool, StoreError> {
    let there = db.query(
        "SELECT 1 FROM runs WHERE run_uid = $1",
        &[run.run_uid.as_str().into()],
    )?;
    if there.is_empty() {
        db.execute(run_insert(), &run.values(&crate::run_dir::utc_now()))?;
        return Ok(true);
    }
    let i = &run.inspection;
    db.execute(
        "UPDATE runs SET lot = COALESCE(lot, $2), purchase_order = COALESCE(purchase_order, $3),
            supplier = COALESCE(supplier, $4), operator = COALESCE(operator, $5),
            finished_utc = COALESCE(finished_utc, $6), end_reason = COALESCE(end_reason, $7),
            samples = COALESCE(samples, $8), gap_samples = COALESCE(gap_samples, $9)
         WHERE run_uid = $1",
        &[
            run.run_uid.as_str().into(),
            i.lot.clone().into(),
            i.purchase_order.clone().into(),
            i.supplier.clone().into(),
            i.operator.clone().into(),
            run.finished_utc.clone().into(),
            run.end_reason.clone().into(),
            run.samples.map_or(Value::Null, Value::Int),
            run.gap_samples.map_or(Value::Null, Value::Int),
        ],
    )?;
    Ok(false)
}

fn put_row(
    db: &mut dyn Backend,
    run_uid: &str,
    row: &entry::AnalysisRow,
) -> Result<bool, StoreError> {
    let new = db.execute(analysis_insert(), &row.values)? > 0;
    if new {
        // the figures the searches and trends read, kept beside the run in the same transaction
        let [verdict, alpha, br, loss] = row.latest.clone();
        db.execute(
            "UPDATE runs SET latest_analysis_uid = $2, latest_verdict = $3,
                latest_alpha_pct_per_C = $4, latest_br_T = $5, latest_loss_pct = $6
             WHERE run_uid = $1",
            &[
                run_uid.into(),
                row.values[0].clone(),
                verdict,
                alpha,
                br,
                loss,
            ],
        )?;
    }
    Ok(new)
}

/// `INSERT INTO table (columns) VALUES ($1, … $n)` with `tail`.
fn insert_sql(table: &str, columns: &str, tail: &str) -> String {
    let n = columns.split(',').count();
    let marks: Vec<String> = (1..=n).map(|i| format!("${i}")).collect();
    format!(
        "INSERT INTO {table} ({columns}) VALUES ({}){tail}",
        marks.join(", ")
    )
}

/// The insert of a run (built once).
fn run_insert() -> &'static str {
    static SQL: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    SQL.get_or_init(|| insert_sql("runs", entry::RUN_COLUMNS, ""))
}

/// The insert of an analysis, a second one of the same key changing nothing (built once).
fn analysis_insert() -> &'static str {
    static SQL: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    SQL.get_or_init(|| {
        insert_sql(
            "analyses",
            entry::ANALYSIS_COLUMNS,
            " ON CONFLICT (analysis_uid) DO NOTHING",
        )
    })
}
