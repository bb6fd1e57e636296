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
        Location::Sqlite(data_dir().join("remanent").join("history.sqlite"))
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

/// The user's data folder, from the environment: `$XDG_DATA_HOME` or `~/.local/share` (the XDG
/// base-directory convention), `%APPDATA%` on Windows, `~/Library/Application Support` on macOS;
/// the working folder when none is set.
fn data_dir() -> PathBuf {
    let env = |k: &str| {
        std::env::var_os(k)
            .filter(|v| !v.is_empty())
            .map(PathBuf::from)
    };
    if cfg!(windows) {
        return env("APPDATA").unwrap_or_else(|| PathBuf::from("."));
    }
    if cfg!(target_os = "macos") {
        if let Some(h) = env("HOME") {
            return h.join("Library").join("Application Support");
        }
    }
    env("XDG_DATA_HOME")
        .filter(|p| p.is_absolute())
        .or_else(|| env("HOME").map(|h| h.join(".local").join("share")))
        .unwrap_or_else(|| PathBuf::from("."))
}
