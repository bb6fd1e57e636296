//! The PostgreSQL engine: a shared server chosen by a connection URL (no TLS: a lab's own
//! network), statements prepared once per connection, and a lost connection told apart from a
//! refused statement.

use std::collections::HashMap;
use std::time::Duration;

use super::backend::{Backend, Row, Value};
use super::error::StoreError;

/// A PostgreSQL server.
pub struct Postgres {
    client: postgres::Client,
    url: String,
    statements: HashMap<String, postgres::Statement>,
}

/// A value as PostgreSQL takes it.
#[derive(Debug)]
struct PgValue<'a>(&'a Value);

impl postgres::types::ToSql for PgValue<'_> {
    fn to_sql(
        &self,
        ty: &postgres::types::Type,
        out: &mut postgres::types::private::BytesMut,
    ) -> Result<postgres::types::IsNull, Box<dyn std::error::Error + Sync + Send>> {
        match self.0 {
            Value::Null => Ok(postgres::types::IsNull::Yes),
            Value::Int(i) => i.to_sql(ty, out),
            Value::Real(r) => r.to_sql(ty, out),
            Value::Text(t) => t.to_sql(ty, out),
        }
    }

    fn accepts(_: &postgres::types::Type) -> bool {
        true
    }

    postgres::types::to_sql_checked!();
}

impl Postgres {
    /// Connect.
    pub fn connect(url: &str) -> Result<Postgres, StoreError> {
        let shown = redact(url);
        let mut config: postgres::Config = url.parse().map_err(|e| StoreError::Open {
            store: shown.clone(),
            reason: format!("not a connection URL: {e}"),
        })?;
        if config.get_connect_timeout().is_none() {
            config.connect_timeout(Duration::from_secs(10));
        }
        let client = config
            .connect(postgres::NoTls)
            .map_err(|e| StoreError::Open {
                store: shown.clone(),
                reason: pg_reason(&e),
            })?;
        let mut db = Postgres {
            client,
            url: shown,
            statements: HashMap::new(),
        };
        db.batch("SET client_min_messages = WARNING")?;
        Ok(db)
    }

    fn err(&self, e: postgres::Error) -> StoreError {
        // class 08 is a connection exception; 57P01…57P03 a server shutting down or
        // ending the session (PostgreSQL's error-code table, appendix A)
        let code = e.code().map(|c| c.code().to_string()).unwrap_or_default();
        let gone = code.starts_with("08") || matches!(code.as_str(), "57P01" | "57P02" | "57P03");
        let io = std::error::Error::source(&e).is_some_and(|s| s.is::<std::io::Error>());
        if e.is_closed() || gone || io {
            return StoreError::ConnectionLost {
                store: self.url.clone(),
                reason: pg_reason(&e),
            };
        }
        StoreError::Engine {
            store: self.url.clone(),
            reason: pg_reason(&e),
        }
    }

    /// Run `f` with `sql` prepared (once per connection) and `params` as PostgreSQL takes them.
    fn with_params<T>(
        &mut self,
        sql: &str,
        params: &[Value],
        f: impl FnOnce(
            &mut postgres::Client,
            &postgres::Statement,
            &[&(dyn postgres::types::ToSql + Sync)],
        ) -> Result<T, postgres::Error>,
    ) -> Result<T, StoreError> {
        let st = self.statement(sql)?;
        let vals: Vec<PgValue> = params.iter().map(PgValue).collect();
        let refs: Vec<&(dyn postgres::types::ToSql + Sync)> = vals
            .iter()
            .map(|v| v as &(dyn postgres::types::ToSql + Sync))
            .collect();
        f(&mut self.client, &st, &refs).map_err(|e| self.err(e))
    }

    fn statement(&mut self, sql: &str) -> Result<postgres::Statement, StoreError> {
        if let Some(s) = self.statements.get(sql) {
            return Ok(s.clone());
        }
        let s = self.client.prepare(sql).map_err(|e| self.err(e))?;
        self.statements.insert(sql.into(), s.clone());
        Ok(s)
    }
}

/// The full reason of a PostgreSQL error (its database message, when there is one).
fn pg_reason(e: &postgres::Error) -> String {
    match e.as_db_error() {
        Some(db) => format!("{} ({})", db.message(), db.code().code()),
        None => {
            let mut s = e.to_string();
            let mut src = std::error::Error::source(e);
            while let Some(inner) = src {
                s = format!("{s}: {inner}");
                src = inner.source();
            }
            s
        }
    }
}

/// A connection URL without its password, for messages.
pub fn redact(url: &str) -> String {
    match (url.find("://"), url.rfind('@')) {
        (Some(s), Some(at)) if at > s => {
            let userinfo = &url[s + 3..at];
            match userinfo.split_once(':') {
                Some((user, _)) => format!("{}{user}:***{}", &url[..s + 3], &url[at..]),
                None => url.into(),
            }
        }
        _ => url.into(),
    }
}

fn pg_value(row: &postgres::Row, i: usize) -> Value {
    use postgres::types::Type;
    let ty = row.columns()[i].type_();
    let got = if *ty == Type::INT8 {
        row.try_get::<_, Option<i64>>(i).map(|v| v.map(Value::Int))
    } else if *ty == Type::INT4 {
        row.try_get::<_, Option<i32>>(i)
            .map(|v| v.map(|x| Value::Int(x.into())))
    } else if *ty == Type::FLOAT8 {
        row.try_get::<_, Option<f64>>(i).map(|v| v.map(Value::Real))
    } else if *ty == Type::NUMERIC {
        // aggregates of BIGINT (SUM) are NUMERIC: the queries cast them, this is a backstop
        return Value::Null;
    } else {
        row.try_get::<_, Option<String>>(i)
            .map(|v| v.map(Value::Text))
    };
    got.ok().flatten().unwrap_or(Value::Null)
}

impl Backend for Postgres {
    fn batch(&mut self, sql: &str) -> Result<(), StoreError> {
        self.client.batch_execute(sql).map_err(|e| self.err(e))
    }

    fn execute(&mut self, sql: &str, params: &[Value]) -> Result<u64, StoreError> {
        self.with_params(sql, params, |c, st, p| c.execute(st, p))
    }

    fn query(&mut self, sql: &str, params: &[Value]) -> Result<Vec<Row>, StoreError> {
        let rows = self.with_params(sql, params, |c, st, p| c.query(st, p))?;
        Ok(rows
            .iter()
            .map(|r| (0..r.len()).map(|i| pg_value(r, i)).collect())
            .collect())
    }

    fn begin_write(&mut self) -> Result<(), StoreError> {
        self.batch("BEGIN")
    }

    fn commit(&mut self) -> Result<(), StoreError> {
        self.batch("COMMIT")
    }

    fn rollback(&mut self) -> Result<(), StoreError> {
        self.batch("ROLLBACK")
    }

    fn lock_schema(&mut self) -> Result<(), StoreError> {
        // one migration at a time across every host (released at the transaction's end)
        self.batch("SELECT pg_advisory_xact_lock(72656164)")
    }

    fn describe(&self) -> String {
        self.url.clone()
    }
}
