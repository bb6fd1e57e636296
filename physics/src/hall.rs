//! A linear Hall sensor whose sensitivity and offset drift with its own temperature.

use serde::{Deserialize, Serialize};

/// The sensor's transfer constants (the rig model's truth, or a calibration's estimate).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HallSensor {
    /// Sensitivity at 25 °C, mV/mT.
    pub sensitivity_mv_per_mt: f64,
    /// Temperature coefficient of the sensitivity, %/°C.
    pub sensitivity_tc_pct_per_c: f64,
    /// Zero-field offset at 25 °C, mV.
    pub offset_mv: f64,
    /// Offset drift, mV/°C.
    pub offset_tc_mv_per_c: f64,
}

/// The sensor's reference temperature, °C.
pub const REFERENCE_C: f64 = 25.0;

impl HallSensor {
    fn sensitivity_at(&self, probe_c: f64) -> f64 {
        let d = probe_c - REFERENCE_C;
        self.sensitivity_mv_per_mt * (1.0 + self.sensitivity_tc_pct_per_c / 100.0 * d)
    }

    /// Output for `b_mt` with the sensor at `probe_c`, mV (forward).
    pub fn output_mv(&self, b_mt: f64, probe_c: f64) -> f64 {
        let d = probe_c - REFERENCE_C;
        self.sensitivity_at(probe_c) * b_mt + self.offset_mv + self.offset_tc_mv_per_c * d
    }

    /// Field from an output of `mv` with the sensor at `probe_c`, mT (inverse).
    pub fn field_mt(&self, mv: f64, probe_c: f64) -> f64 {
        let d = probe_c - REFERENCE_C;
        (mv - self.offset_mv - self.offset_tc_mv_per_c * d) / self.sensitivity_at(probe_c)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_inverse_undoes_the_forward_function() {
        let s = HallSensor {
            sensitivity_mv_per_mt: 5.0,
            sensitivity_tc_pct_per_c: 0.02,
            offset_mv: 1.5,
            offset_tc_mv_per_c: 0.004,
        };
        for (b, t) in [(0.0, 25.0), (250.0, 40.0), (-80.0, 5.0)] {
            assert!((s.field_mt(s.output_mv(b, t), t) - b).abs() < 1e-9);
        }
    }
}
