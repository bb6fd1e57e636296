//! The analysis input as data: a time series of temperature and flux density (and what the
//! loaders learnt on the way), and how reading one can fail — shared by the run-directory and
//! CSV loaders.

use crate::run_dir;

/// Time series, equal lengths, strictly increasing time.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Series {
    /// Time, s.
    pub time_s: Vec<f64>,
    /// Thermocouple temperature, °C.
    pub temp_c: Vec<f64>,
    /// Flux density, mT.
    pub flux_mt: Vec<f64>,
    /// Probe temperature, °C, when known.
    pub probe_c: Option<Vec<f64>>,
    /// Heater duty, %, when known (for plots).
    pub duty_pct: Option<Vec<f64>>,
    /// Setpoint, °C, when the heater was following one (NaN while off; for plots).
    pub setpoint_c: Option<Vec<f64>>,
    /// Faults the device reported: device time, s, and what (for plots).
    pub faults: Vec<(f64, crate::event::FaultMark)>,
    /// Rows left out (thermocouple faults, saturated Hall readings, blank cells), with their
    /// line and why.
    pub skipped: Vec<(usize, String)>,
    /// Thermocouple spikes rejected: time, s, and the reading, °C.
    pub spikes: Vec<(f64, f64)>,
    /// What the loader did that the report should say.
    pub notes: Vec<crate::units::Phrase>,
    /// What the loader repaired.
    pub repairs: super::repair::Repairs,
    /// Where a new record begins in a file that holds several (indices of first samples).
    pub breaks: Vec<usize>,
}

/// Input problems, naming the file, line and column.
#[derive(Debug, thiserror::Error)]
pub enum InputError {
    /// Unreadable.
    #[error("cannot read {path}: {reason}")]
    Io {
        /// File.
        path: String,
        /// Why.
        reason: String,
    },
    /// A required column is missing.
    #[error("{path}: line 1: no {column} (columns found: {found})")]
    MissingColumn {
        /// File.
        path: String,
        /// Column wanted, in words with its backticks and any hint.
        column: String,
        /// Columns present.
        found: String,
    },
    /// A cell is not a number.
    #[error("{path}: line {line}, column `{column}`: `{value}` is not a number")]
    NotANumber {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// Column.
        column: String,
        /// The cell.
        value: String,
    },
    /// A value that cannot be true (NaN, infinity).
    #[error("{path}: line {line}, column `{column}`: `{value}` is not a finite number")]
    NotFinite {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// Column.
        column: String,
        /// The cell.
        value: String,
    },
    /// Time goes backwards or repeats.
    #[error("{path}: line {line}, column `time_s`: time {value} s does not increase (previous {previous} s)")]
    TimeOrder {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// This time.
        value: f64,
        /// Previous time.
        previous: f64,
    },
    /// A row has the wrong number of fields.
    #[error("{path}: line {line}: {reason}")]
    Row {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// Why.
        reason: String,
    },
    /// Not enough rows.
    #[error("{path}: only {n} usable rows; at least {min} are needed")]
    TooFew {
        /// File.
        path: String,
        /// Rows.
        n: usize,
        /// Needed.
        min: usize,
    },
    /// Metadata problem.
    #[error(transparent)]
    Run(#[from] run_dir::RunDirError),
}

/// Fewest rows worth analysing.
pub const MIN_ROWS: usize = 20;
