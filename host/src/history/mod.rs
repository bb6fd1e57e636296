//! The test history: every run and analysis in one store, an SQLite file in the user's data
//! folder by default or a shared PostgreSQL server chosen by a connection URL (same schema,
//! same queries). `location` says where it is, `store` opens it and writes runs and analyses,
//! `query` reads it, `trend` and `control` make a supplier's control chart, `export` writes
//! CSV. Run directories stay the record of truth: anything lost here can be re-imported.

mod backend;
pub mod certificates;
pub mod control;
pub mod entry;
mod error;
pub mod export;
mod location;
pub mod lot_decisions;
mod pg;
pub mod query;
pub mod schema;
mod sqlite;
mod store;
pub mod trend;

pub use backend::Value;
pub use certificates::CertificateEntry;
pub use entry::RunEntry;
pub use error::{software, StoreError};
pub use location::{Location, STORE_ENV};
pub use lot_decisions::LotDecision;
pub use pg::redact;
pub use query::{Filter, Found, LotHistory, TrendPoint, When};
pub use store::Store;
