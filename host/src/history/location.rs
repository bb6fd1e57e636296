//! Where the store is: an SQLite file (by default in the user's data folder), a PostgreSQL
//! URL, or off; chosen by an option, else the environment, else the default.

use std::path::PathBuf;

use super::pg::redact;

/// The environment variable that names the store (a path or a URL, or `off`).
pub const STORE_ENV: &str = "REMANENT_HISTORY";

/// Where the store is.
#[derive(Debug, Clone, PartialEq)]
pub enum Location {
    /// An SQLite file.
    Sqlite(PathBuf),
    /// A PostgreSQL server (a `postgres://` or `postgresql://` URL).
    Postgres(String),
    /// No store: nothing is written.
    Off,
}

impl Location {
    /// A path, `sqlite:PATH`, a PostgreSQL URL, or `off`.
    pub fn parse(text: &str) -> Location {
        let t = text.trim();
        if t.eq_ignore_ascii_case("off") || t.eq_ignore_ascii_case("none") {
            Location::Off
        } else if t.starts_with("postgres://") || t.starts_with("postgresql://") {
            Location::Postgres(t.into())
        } else {
            Location::Sqlite(PathBuf::from(t.strip_prefix("sqlite:").unwrap_or(t)))
        }
    }

    /// The store named by `given`, else by `REMANENT_HISTORY`, else `history.sqlite` in the
    /// user's data folder (`~/.local/share/remanent` on Linux).
    pub fn choose(given: Option<&str>) -> Location {
        if let Some(g) = given {
            return Location::parse(g);
        }
        if let Ok(e) = std::env::var(STORE_ENV) {
            if !e.trim().is_empty() {
                return Location::parse(&e);
            }
        }
        Location::Sqlite(
            crate::user_dirs::data_dir()
                .join("remanent")
                .join("history.sqlite"),
        )
    }

    /// For messages (a URL without its password).
    pub fn describe(&self) -> String {
        match self {
            Location::Sqlite(p) => p.display().to_string(),
            Location::Postgres(u) => redact(u),
            Location::Off => "off".into(),
        }
    }
}
