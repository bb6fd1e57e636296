//! The store's schema and its versioned migrations: each version is a list of statements both
//! engines run; a store is brought up to this program's version in one transaction, and a store
//! written by a newer program is refused with both versions named.

use super::backend::{Backend, Value};
use super::error::StoreError;

/// The schema version this program writes and reads.
pub const SCHEMA_VERSION: i64 = 4;

/// One step of the schema.
pub struct Migration {
    /// The version it brings the store to.
    pub version: i64,
    /// What it changes, in words.
    pub summary: &'static str,
    /// Its statements, in order (SQL both engines accept).
    pub statements: &'static [&'static str],
}

/// Every migration, oldest first.
pub const MIGRATIONS: &[Migration] = &[
    Migration {
        version: 1,
        summary: "runs and analyses",
        statements: &[
            "CREATE TABLE runs (
                run_uid TEXT PRIMARY KEY,
                run_name TEXT NOT NULL,
                source TEXT NOT NULL,
                location TEXT NOT NULL,
                host TEXT NOT NULL,
                magnet_id TEXT,
                grade TEXT,
                lot TEXT,
                purchase_order TEXT,
                supplier TEXT,
                operator TEXT,
                started_utc TEXT,
                finished_utc TEXT,
                end_reason TEXT,
                profile TEXT,
                board TEXT,
                firmware TEXT,
                port TEXT,
                calibration_basis TEXT,
                calibration_oldest_utc TEXT,
                calibration_json TEXT,
                samples BIGINT,
                gap_samples BIGINT,
                stored_utc TEXT NOT NULL,
                software TEXT NOT NULL
            )",
            "CREATE TABLE analyses (
                analysis_uid TEXT PRIMARY KEY,
                run_uid TEXT NOT NULL REFERENCES runs (run_uid),
                analysed_utc TEXT NOT NULL,
                software TEXT NOT NULL,
                verdict TEXT NOT NULL,
                grade TEXT,
                material_family TEXT NOT NULL,
                alpha_pct_per_C DOUBLE PRECISION,
                alpha_u95_pct_per_C DOUBLE PRECISION,
                b20_mT DOUBLE PRECISION,
                b20_u_mT DOUBLE PRECISION,
                br_T DOUBLE PRECISION,
                br_u95_T DOUBLE PRECISION,
                loss_pct DOUBLE PRECISION,
                loss_u95_pct DOUBLE PRECISION,
                fit_min_C DOUBLE PRECISION,
                fit_max_C DOUBLE PRECISION,
                max_magnet_temp_C DOUBLE PRECISION,
                fit_method_code TEXT NOT NULL,
                heat_damaged BIGINT NOT NULL,
                uncalibrated BIGINT NOT NULL,
                analysis_json TEXT NOT NULL
            )",
        ],
    },
    Migration {
        version: 2,
        summary: "each run's latest analysis and its figures beside the run (what the searches \
                  and trends read), and indexes for them",
        statements: &[
            "ALTER TABLE runs ADD COLUMN latest_analysis_uid TEXT",
            "ALTER TABLE runs ADD COLUMN latest_verdict TEXT",
            "ALTER TABLE runs ADD COLUMN latest_alpha_pct_per_C DOUBLE PRECISION",
            "ALTER TABLE runs ADD COLUMN latest_br_T DOUBLE PRECISION",
            "ALTER TABLE runs ADD COLUMN latest_loss_pct DOUBLE PRECISION",
            "UPDATE runs SET started_utc = stored_utc WHERE started_utc IS NULL",
            "CREATE INDEX runs_trend ON runs (supplier, started_utc, run_uid, magnet_id, lot, \
             latest_alpha_pct_per_C, latest_br_T, latest_loss_pct)",
            "CREATE INDEX runs_by_lot ON runs (lot)",
            "CREATE INDEX runs_by_magnet ON runs (magnet_id)",
            "CREATE INDEX runs_by_start ON runs (started_utc)",
            "CREATE INDEX analyses_by_run ON analyses (run_uid)",
        ],
    },
    Migration {
        version: 3,
        summary: "certificates: each number once, with the fingerprints of the record and the \
                  analysis it states and where it was written (what `verify NUMBER` checks)",
        statements: &["CREATE TABLE certificates (
                number TEXT PRIMARY KEY,
                run_uid TEXT NOT NULL REFERENCES runs (run_uid),
                analysis_uid TEXT NOT NULL,
                issued_utc TEXT NOT NULL,
                issuer TEXT,
                folder TEXT NOT NULL,
                raw_file TEXT NOT NULL,
                raw_sha256 TEXT NOT NULL,
                analysis_file TEXT NOT NULL,
                analysis_sha256 TEXT NOT NULL,
                stored_utc TEXT NOT NULL
            )"],
    },
    Migration {
        version: 4,
        summary: "lot decisions: a lot's sampling plan and its decision as the console judged it",
        statements: &["CREATE TABLE lot_decisions (
                lot TEXT PRIMARY KEY,
                supplier TEXT,
                purchase_order TEXT,
                grade TEXT NOT NULL,
                sample_size BIGINT NOT NULL,
                acceptance_number BIGINT NOT NULL,
                judged BIGINT NOT NULL,
                defects BIGINT NOT NULL,
                decision TEXT NOT NULL,
                words TEXT NOT NULL,
                decided_utc TEXT NOT NULL
            )"],
    },
];

const VERSION_TABLE: &str = "CREATE TABLE IF NOT EXISTS remanent_schema (
    version BIGINT PRIMARY KEY,
    applied_utc TEXT NOT NULL,
    software TEXT NOT NULL
)";

/// The store's version (0: empty) and the software that last migrated it.
pub fn version(db: &mut dyn Backend) -> Result<(i64, String), StoreError> {
    let rows = db.query(
        "SELECT version, software FROM remanent_schema ORDER BY version DESC LIMIT 1",
        &[],
    )?;
    Ok(rows
        .first()
        .map(|r| (r[0].int().unwrap_or(0), r[1].text().unwrap_or_default()))
        .unwrap_or((0, String::new())))
}

/// Bring the store to `target` (normally [`SCHEMA_VERSION`]), or refuse one that is newer.
pub fn migrate(db: &mut dyn Backend, target: i64) -> Result<i64, StoreError> {
    db.begin_write()?;
    let result = migrate_locked(db, target);
    match result {
        Ok(v) => {
            db.commit()?;
            Ok(v)
        }
        Err(e) => {
            let _ = db.rollback();
            Err(e)
        }
    }
}

fn migrate_locked(db: &mut dyn Backend, target: i64) -> Result<i64, StoreError> {
    db.lock_schema()?;
    db.batch(VERSION_TABLE)?;
    let (have, by) = version(db)?;
    if have > SCHEMA_VERSION {
        return Err(StoreError::Newer {
            store: db.describe(),
            store_version: have,
            program_version: SCHEMA_VERSION,
            written_by: by,
        });
    }
    for m in MIGRATIONS
        .iter()
        .filter(|m| m.version > have && m.version <= target)
    {
        for st in m.statements {
            db.batch(st).map_err(|e| StoreError::Migration {
                store: db.describe(),
                version: m.version,
                reason: e.to_string(),
            })?;
        }
        db.execute(
            "INSERT INTO remanent_schema (version, applied_utc, software) VALUES ($1, $2, $3)",
            &[
                Value::Int(m.version),
                Value::Text(crate::run_dir::utc_now()),
                Value::Text(super::error::software()),
            ],
        )?;
    }
    Ok(have.max(target))
}
