//! What the analysis needs besides the series, and how it fails.

use crate::calibration::Calibration;
use crate::magnets::MagnetInfo;
use crate::specs::SpecTable;

use super::lsq;

/// Thermocouple gain tolerance assumed without a calibration, % (standard-limits Type K
/// wire: ±0.75 % of reading above 333 °C; common practice to use it throughout).
pub const DEFAULT_TC_GAIN_PCT: f64 = 0.75;

/// What the analysis knows besides the series.
#[derive(Debug, Clone)]
pub struct Context {
    /// Rig calibration (for the type-B terms and the gap correction).
    pub calibration: Option<Calibration>,
    /// The magnet (for Br from geometry and the grade check).
    pub magnet: Option<MagnetInfo>,
    /// Spec table.
    pub specs: SpecTable,
    /// Thermocouple gain tolerance to assume without a calibration, %.
    pub default_tc_gain_pct: f64,
    /// The fixture's reference magnet, when Br is to be referred to it.
    pub reference: Option<crate::analysis::fixture_ref::FixtureReference>,
}

/// The analysis could not produce α.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    /// Nothing to fit.
    #[error("cannot fit α: {0}")]
    CannotFit(String),
    /// A value that cannot be true reached the analysis (it is never judged).
    #[error("cannot analyse: {0}")]
    NotFinite(String),
    /// The fit failed.
    #[error("cannot fit α: {0}")]
    Lsq(#[from] lsq::LsqError),
}
