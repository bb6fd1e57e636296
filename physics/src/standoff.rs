//! The probe's gap to the pole face, which grows as the standoff carrying the probe warms.

use serde::{Deserialize, Serialize};

/// The gap and the standoff that sets it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Standoff {
    /// Pole face to sensing element at 20 °C, mm.
    pub gap_mm: f64,
    /// Length of the standoff whose expansion moves the probe, mm.
    pub standoff_mm: f64,
    /// Its expansion coefficient, 1/K.
    pub standoff_cte_per_k: f64,
}

/// The gap's reference temperature, °C.
pub const REFERENCE_C: f64 = 20.0;

impl Standoff {
    /// The gap with the standoff at `standoff_c`, mm.
    pub fn gap_at_mm(&self, standoff_c: f64) -> f64 {
        self.gap_mm + self.standoff_mm * self.standoff_cte_per_k * (standoff_c - REFERENCE_C)
    }
}

/// The standoff's temperature: the mean of its two ends (the block and the probe), °C.
pub fn standoff_c(block_c: f64, probe_c: f64) -> f64 {
    0.5 * (block_c + probe_c)
}
