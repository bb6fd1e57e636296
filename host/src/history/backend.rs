//! The one small interface both database engines offer the store: values, statements,
//! transactions. The engines are in `sqlite` (an embedded file, WAL journal) and `postgres` (a
//! shared server); both run the same SQL text with `$1`, `$2`… placeholders.

use super::error::StoreError;

/// One value in a row or a statement.
#[derive(Debug, Clone, PartialEq)]
pub enum Value {
    /// SQL NULL.
    Null,
    /// BIGINT.
    Int(i64),
    /// DOUBLE PRECISION.
    Real(f64),
    /// TEXT.
    Text(String),
}

impl Value {
    /// As text (None for NULL; numbers as written).
    pub fn text(&self) -> Option<String> {
        match self {
            Value::Null => None,
            Value::Int(i) => Some(i.to_string()),
            Value::Real(r) => Some(r.to_string()),
            Value::Text(t) => Some(t.clone()),
        }
    }

    /// As a number (None for NULL or text).
    pub fn real(&self) -> Option<f64> {
        match self {
            Value::Int(i) => Some(*i as f64),
            Value::Real(r) => Some(*r),
            _ => None,
        }
    }

    /// As an integer (None for NULL, text or a real).
    pub fn int(&self) -> Option<i64> {
        match self {
            Value::Int(i) => Some(*i),
            _ => None,
        }
    }
}

impl From<Option<f64>> for Value {
    fn from(v: Option<f64>) -> Value {
        v.map_or(Value::Null, Value::Real)
    }
}
impl From<f64> for Value {
    fn from(v: f64) -> Value {
        Value::Real(v)
    }
}
impl From<i64> for Value {
    fn from(v: i64) -> Value {
        Value::Int(v)
    }
}
impl From<&str> for Value {
    fn from(v: &str) -> Value {
        Value::Text(v.into())
    }
}
impl From<String> for Value {
    fn from(v: String) -> Value {
        Value::Text(v)
    }
}
impl From<Option<String>> for Value {
    fn from(v: Option<String>) -> Value {
        v.map_or(Value::Null, Value::Text)
    }
}

/// A row as the engine returned it.
pub type Row = Vec<Value>;

/// A SELECT list's column names (comma-separated, in order), split once per query, to read a
/// row's cells by name.
pub struct Columns<'a>(Vec<&'a str>);

/// What a cell no column names reads as.
static NULL: Value = Value::Null;

impl<'a> Columns<'a> {
    /// The names of the SELECT list `list`.
    pub fn new(list: &'a str) -> Self {
        Columns(list.split(',').map(str::trim).collect())
    }

    /// The cell `name` of `row`; NULL when no column has that name.
    pub fn cell<'r>(&self, row: &'r Row, name: &str) -> &'r Value {
        self.0
            .iter()
            .position(|c| *c == name)
            .and_then(|i| row.get(i))
            .unwrap_or(&NULL)
    }
}

/// What both engines do for the store.
pub trait Backend: Send {
    /// Several statements with no parameters (migrations).
    fn batch(&mut self, sql: &str) -> Result<(), StoreError>;
    /// One statement; the rows it changed.
    fn execute(&mut self, sql: &str, params: &[Value]) -> Result<u64, StoreError>;
    /// One query; its rows.
    fn query(&mut self, sql: &str, params: &[Value]) -> Result<Vec<Row>, StoreError>;
    /// Start a transaction that will write (taking the write lock at once on SQLite, so two
    /// writers queue instead of failing half-way).
    fn begin_write(&mut self) -> Result<(), StoreError>;
    /// Make it durable.
    fn commit(&mut self) -> Result<(), StoreError>;
    /// Undo it.
    fn rollback(&mut self) -> Result<(), StoreError>;
    /// Hold other writers off the schema while it is migrated (within a write transaction).
    fn lock_schema(&mut self) -> Result<(), StoreError>;
    /// Where it is, for messages.
    fn describe(&self) -> String;
}
