//! The SQLite engine: a file in WAL mode with a busy wait, so several writers on one host
//! queue and readers never block them. The store's `$N` placeholders become SQLite's `?N` (its
//! `$N` would be a named parameter numbered by first appearance).

use std::path::{Path, PathBuf};
use std::time::Duration;

use super::backend::{Backend, Row, Value};
use super::error::StoreError;

/// How long a writer waits for another to finish before giving up.
const BUSY_WAIT: Duration = Duration::from_secs(30);

/// An SQLite file.
pub struct Sqlite {
    conn: rusqlite::Connection,
    path: PathBuf,
}

impl rusqlite::ToSql for Value {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        use rusqlite::types::{ToSqlOutput, ValueRef};
        Ok(match self {
            Value::Null => ToSqlOutput::Borrowed(ValueRef::Null),
            Value::Int(i) => ToSqlOutput::Borrowed(ValueRef::Integer(*i)),
            Value::Real(r) => ToSqlOutput::Borrowed(ValueRef::Real(*r)),
            Value::Text(t) => ToSqlOutput::Borrowed(ValueRef::Text(t.as_bytes())),
        })
    }
}

impl Sqlite {
    /// Open (creating it and its folder if need be) with a WAL journal, so readers never
    /// block the writer, and a busy wait, so several writers on one host queue.
    pub fn open(path: &Path) -> Result<Sqlite, StoreError> {
        let at = path.display().to_string();
        if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
            std::fs::create_dir_all(dir).map_err(|e| StoreError::Open {
                store: at.clone(),
                reason: format!("cannot create its folder: {e}"),
            })?;
        }
        let conn = rusqlite::Connection::open(path).map_err(|e| StoreError::Open {
            store: at.clone(),
            reason: e.to_string(),
        })?;
        let mut db = Sqlite {
            conn,
            path: path.to_path_buf(),
        };
        db.conn.busy_timeout(BUSY_WAIT).map_err(|e| db.err(e))?;
        db.journal_wal()?;
        db.batch("PRAGMA synchronous=NORMAL; PRAGMA foreign_keys=ON;")?;
        Ok(db)
    }

    /// Switch to the WAL journal. The switch takes the file's exclusive lock and SQLite answers
    /// "locked" at once, without its busy wait, while another connection opens the same new
    /// file; so it waits here, as the busy wait would. The first read of a file that is not a
    /// database fails here too, with a clear message.
    fn journal_wal(&mut self) -> Result<(), StoreError> {
        let start = std::time::Instant::now();
        loop {
            match self
                .conn
                .query_row("PRAGMA journal_mode=WAL", [], |_| Ok(()))
            {
                Err(e)
                    if e.sqlite_error_code() == Some(rusqlite::ErrorCode::DatabaseBusy)
                        && start.elapsed() < BUSY_WAIT =>
                {
                    std::thread::sleep(Duration::from_millis(5));
                }
                other => return other.map_err(|e| self.err(e)),
            }
        }
    }

    fn err(&self, e: rusqlite::Error) -> StoreError {
        let store = self.describe();
        match e.sqlite_error_code() {
            Some(rusqlite::ErrorCode::NotADatabase)
            | Some(rusqlite::ErrorCode::DatabaseCorrupt) => StoreError::Corrupt {
                store,
                reason: e.to_string(),
            },
            _ => StoreError::Engine {
                store,
                reason: e.to_string(),
            },
        }
    }
}

/// `$N` placeholders as SQLite's `?N` (the store's SQL has no `$` in its literals).
fn numbered(sql: &str) -> String {
    let mut out = String::with_capacity(sql.len());
    let mut chars = sql.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '$' && chars.peek().is_some_and(|d| d.is_ascii_digit()) {
            out.push('?');
        } else {
            out.push(c);
        }
    }
    out
}

fn sqlite_value(v: rusqlite::types::ValueRef<'_>) -> Value {
    use rusqlite::types::ValueRef;
    match v {
        ValueRef::Null => Value::Null,
        ValueRef::Integer(i) => Value::Int(i),
        ValueRef::Real(r) => Value::Real(r),
        ValueRef::Text(t) | ValueRef::Blob(t) => Value::Text(String::from_utf8_lossy(t).into()),
    }
}

impl Backend for Sqlite {
    fn batch(&mut self, sql: &str) -> Result<(), StoreError> {
        self.conn.execute_batch(sql).map_err(|e| self.err(e))
    }

    fn execute(&mut self, sql: &str, params: &[Value]) -> Result<u64, StoreError> {
        let mut st = self
            .conn
            .prepare_cached(&numbered(sql))
            .map_err(|e| self.err(e))?;
        let n = st
            .execute(rusqlite::params_from_iter(params))
            .map_err(|e| self.err(e))?;
        Ok(n as u64)
    }

    fn query(&mut self, sql: &str, params: &[Value]) -> Result<Vec<Row>, StoreError> {
        let mut st = self
            .conn
            .prepare_cached(&numbered(sql))
            .map_err(|e| self.err(e))?;
        let n = st.column_count();
        let mut rows = st
            .query(rusqlite::params_from_iter(params))
            .map_err(|e| self.err(e))?;
        let mut out = Vec::new();
        while let Some(r) = rows.next().map_err(|e| self.err(e))? {
            out.push(
                (0..n)
                    .map(|i| r.get_ref(i).map(sqlite_value).unwrap_or(Value::Null))
                    .collect(),
            );
        }
        Ok(out)
    }

    fn begin_write(&mut self) -> Result<(), StoreError> {
        self.batch("BEGIN IMMEDIATE")
    }

    fn commit(&mut self) -> Result<(), StoreError> {
        self.batch("COMMIT")
    }

    fn rollback(&mut self) -> Result<(), StoreError> {
        self.batch("ROLLBACK")
    }

    fn lock_schema(&mut self) -> Result<(), StoreError> {
        Ok(()) // BEGIN IMMEDIATE already holds the only write lock
    }

    fn describe(&self) -> String {
        self.path.display().to_string()
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn placeholders_keep_their_numbers_on_sqlite() {
        // SQLite numbers `$2` by first appearance, `?2` by its digits (sqlite.org/lang_expr.html,
        // "Parameters"): a statement naming $2 before $1 must still bind them in number order.
        let mut db = super::Sqlite {
            conn: rusqlite::Connection::open_in_memory().unwrap(),
            path: "memory".into(),
        };
        use super::super::backend::{Backend, Value};
        let rows = db
            .query("SELECT $2, $1", &[Value::Int(1), Value::Int(2)])
            .unwrap();
        assert_eq!(rows, vec![vec![Value::Int(2), Value::Int(1)]]);
    }
}
