//! Br from the measured field, the magnet's shape and the probe gap (closed forms), and how
//! sensitive that estimate is to the gap.

use remanent_physics::shape::dln_bz_per_mm;
use remanent_physics::Shape;

/// Br estimated from geometry.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct BrEstimate {
    /// Br at 20 °C, T.
    pub br_t: f64,
    /// Expanded uncertainty (k = 2) from the gap's uncertainty, T.
    pub br_u95_t: f64,
    /// Relative change of the estimate per +0.1 mm of gap, %.
    pub pct_per_0_1_mm: f64,
}

/// Br from the field `b20_mt` (at 20 °C) at `gap_mm`, with the gap's standard uncertainty.
pub fn estimate_br(shape: &Shape, gap_mm: f64, gap_u_mm: f64, b20_mt: f64) -> BrEstimate {
    let br_t = b20_mt / 1000.0 / shape.bz_per_br(gap_mm);
    let d = dln_bz_per_mm(shape, gap_mm);
    BrEstimate {
        br_t,
        br_u95_t: 2.0 * br_t * (d * gap_u_mm).abs(),
        pct_per_0_1_mm: -d * 0.1 * 100.0,
    }
}
