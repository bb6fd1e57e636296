//! The probe's thermistor in a divider (series resistor from the supply, thermistor to
//! ground), by the Beta equation.

use serde::{Deserialize, Serialize};

/// Thermistor and divider constants.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Thermistor {
    /// Resistance at 25 °C, Ω.
    pub r25_ohm: f64,
    /// Beta, K.
    pub beta_k: f64,
    /// Series resistor from the supply, Ω.
    pub series_ohm: f64,
    /// Divider supply, mV.
    pub supply_mv: f64,
}

/// 25 °C in kelvin (the Beta equation's reference).
const T25_K: f64 = 298.15;
/// 0 °C in kelvin.
const ZERO_C_K: f64 = 273.15;

impl Thermistor {
    /// Resistance at `t_c`, Ω.
    pub fn resistance_ohm(&self, t_c: f64) -> f64 {
        let t_k = t_c + ZERO_C_K;
        self.r25_ohm * libm::exp(self.beta_k * (1.0 / t_k - 1.0 / T25_K))
    }

    /// Divider output at `t_c`, mV (forward).
    pub fn divider_mv(&self, t_c: f64) -> f64 {
        let r = self.resistance_ohm(t_c);
        self.supply_mv * r / (r + self.series_ohm)
    }

    /// Temperature from the divider output, °C (inverse); `None` for an open or shorted
    /// thermistor (output at or beyond a rail).
    pub fn temperature_c(&self, mv: f64) -> Option<f64> {
        if mv <= 0.0 || mv >= self.supply_mv {
            return None;
        }
        let r = self.series_ohm * mv / (self.supply_mv - mv);
        let inv_t = 1.0 / T25_K + libm::log(r / self.r25_ohm) / self.beta_k;
        Some(1.0 / inv_t - ZERO_C_K)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_inverse_undoes_the_forward_function_and_rails_are_faults() {
        let n = Thermistor {
            r25_ohm: 10_000.0,
            beta_k: 3950.0,
            series_ohm: 10_000.0,
            supply_mv: 3300.0,
        };
        // at 25 °C the divider sits at half the supply (equal resistors)
        assert!((n.divider_mv(25.0) - 1650.0).abs() < 1e-9);
        for t in [-10.0, 25.0, 80.0] {
            assert!((n.temperature_c(n.divider_mv(t)).unwrap() - t).abs() < 1e-9);
        }
        assert_eq!(n.temperature_c(0.0), None);
        assert_eq!(n.temperature_c(3300.0), None);
    }
}
