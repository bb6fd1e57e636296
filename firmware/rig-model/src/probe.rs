//! The Hall probe and its thermistor as the rig model has them: the shared sensor physics
//! (`remanent_physics`) with the model's true constants, plus the probe's noise.

use remanent_physics::{HallSensor, Standoff, Thermistor};
use serde::{Deserialize, Serialize};

/// The linear Hall sensor and its mounting.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HallParams {
    /// The sensor's true transfer constants.
    pub sensor: HallSensor,
    /// Output noise, mV RMS per conversion.
    pub noise_mv: f64,
    /// The gap and the standoff that carries the probe.
    pub standoff: Standoff,
}

impl HallParams {
    /// The reference probe (hardware-notes/bill-of-materials.md).
    pub const REFERENCE: HallParams = HallParams {
        sensor: HallSensor {
            sensitivity_mv_per_mt: 5.0,
            sensitivity_tc_pct_per_c: 0.02,
            offset_mv: 1.5,
            offset_tc_mv_per_c: 0.004,
        },
        noise_mv: 0.25,
        standoff: Standoff {
            gap_mm: 3.0,
            standoff_mm: 20.0,
            standoff_cte_per_k: 9.3e-6,
        },
    };
}

/// The thermistor beside the probe, in its divider.
pub type NtcParams = Thermistor;

/// The reference thermistor: 10 kΩ, B = 3950 K, 10 kΩ series, 3.3 V.
pub const NTC_REFERENCE: Thermistor = Thermistor {
    r25_ohm: 10_000.0,
    beta_k: 3950.0,
    series_ohm: 10_000.0,
    supply_mv: 3300.0,
};
