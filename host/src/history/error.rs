//! What can go wrong with the store, in words that say which store and what to do, and the
//! software name written beside what the store keeps.

/// The store could not be used.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// Could not open or connect.
    #[error("history store {store}: cannot open it: {reason}")]
    Open {
        /// Which store.
        store: String,
        /// Why.
        reason: String,
    },
    /// The file is not a store (or is damaged).
    #[error("history store {store} is not a readable database ({reason}): move it aside and re-import the run directories (`remanent history import`)")]
    Corrupt {
        /// Which store.
        store: String,
        /// What the engine said.
        reason: String,
    },
    /// Written by a newer program.
    #[error("history store {store} has schema version {store_version} (written by {written_by}); this program reads up to version {program_version}: use the newer program")]
    Newer {
        /// Which store.
        store: String,
        /// Its version.
        store_version: i64,
        /// Ours.
        program_version: i64,
        /// Who wrote it.
        written_by: String,
    },
    /// A migration failed (nothing of it was kept).
    #[error(
        "history store {store}: migration to version {version} failed and was undone: {reason}"
    )]
    Migration {
        /// Which store.
        store: String,
        /// The version it was going to.
        version: i64,
        /// Why.
        reason: String,
    },
    /// The server went away.
    #[error("history store {store}: connection lost ({reason}); nothing of the unfinished write was kept: the run directory keeps everything, import it again later")]
    ConnectionLost {
        /// Which store.
        store: String,
        /// Why.
        reason: String,
    },
    /// A certificate number already stands for a different analysis.
    #[error("history store {store}: certificate number {number} is already filed for a different analysis; the new certificate was not filed")]
    NumberTaken {
        /// Which store.
        store: String,
        /// The number.
        number: String,
    },
    /// The engine refused a statement.
    #[error("history store {store}: {reason}")]
    Engine {
        /// Which store.
        store: String,
        /// Why.
        reason: String,
    },
}

/// The software writing, for the store's records.
pub fn software() -> String {
    format!("remanent {}", env!("CARGO_PKG_VERSION"))
}
