//! The Hall probe and its thermistor, as the ADC sees them.

use serde::{Deserialize, Serialize};

/// The linear Hall sensor and its mounting.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HallParams {
    /// Sensitivity at 25 °C, mV/mT.
    pub sensitivity_mv_per_mt: f64,
    /// Sensitivity's temperature coefficient, %/°C.
    pub sensitivity_tc_pct_per_c: f64,
    /// Output offset at 25 °C (zero field), mV.
    pub offset_mv: f64,
    /// Offset drift, mV/°C.
    pub offset_tc_mv_per_c: f64,
    /// Output noise, mV RMS per conversion.
    pub noise_mv: f64,
    /// Gap from the pole face to the sensing element at 20 °C, mm.
    pub gap_mm: f64,
    /// Standoff length whose expansion moves the sensor away, mm.
    pub standoff_mm: f64,
    /// Standoff expansion coefficient, 1/K.
    pub standoff_cte_per_k: f64,
}

impl HallParams {
    /// The reference probe (hardware-notes/bill-of-materials.md).
    pub const REFERENCE: HallParams = HallParams {
        sensitivity_mv_per_mt: 5.0,
        sensitivity_tc_pct_per_c: 0.02,
        offset_mv: 1.5,
        offset_tc_mv_per_c: 0.004,
        noise_mv: 0.25,
        gap_mm: 3.0,
        standoff_mm: 20.0,
        standoff_cte_per_k: 9.3e-6,
    };

    /// Sensor output for `b_mt` with the sensor at `probe_c`, mV (noise-free).
    pub fn output_mv(&self, b_mt: f64, probe_c: f64) -> f64 {
        let d = probe_c - 25.0;
        let s = self.sensitivity_mv_per_mt * (1.0 + self.sensitivity_tc_pct_per_c / 100.0 * d);
        s * b_mt + self.offset_mv + self.offset_tc_mv_per_c * d
    }

    /// Gap at a standoff temperature, mm.
    pub fn gap_at_mm(&self, standoff_c: f64) -> f64 {
        self.gap_mm + self.standoff_mm * self.standoff_cte_per_k * (standoff_c - 20.0)
    }
}

/// The thermistor beside the probe, in a divider (series resistor from supply, NTC to ground).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NtcParams {
    /// Resistance at 25 °C, Ω.
    pub r25_ohm: f64,
    /// Beta, K.
    pub beta_k: f64,
    /// Series resistor, Ω.
    pub series_ohm: f64,
    /// Divider supply, mV.
    pub supply_mv: f64,
}

impl NtcParams {
    /// The reference thermistor: 10 kΩ, B = 3950 K, 10 kΩ series, 3.3 V.
    pub const REFERENCE: NtcParams = NtcParams {
        r25_ohm: 10_000.0,
        beta_k: 3950.0,
        series_ohm: 10_000.0,
        supply_mv: 3300.0,
    };

    /// Resistance at `t_c`, Ω (Beta equation).
    pub fn resistance_ohm(&self, t_c: f64) -> f64 {
        let t_k = t_c + 273.15;
        self.r25_ohm * libm::exp(self.beta_k * (1.0 / t_k - 1.0 / 298.15))
    }

    /// Divider output at `t_c`, mV.
    pub fn divider_mv(&self, t_c: f64) -> f64 {
        let r = self.resistance_ohm(t_c);
        self.supply_mv * r / (r + self.series_ohm)
    }
}

/// An ADC code for `mv` on a range of `full_scale_mv` (16-bit signed, saturating).
pub fn adc_code(mv: f64, full_scale_mv: f64) -> i16 {
    let code = libm::round(mv / full_scale_mv * 32768.0);
    code.clamp(-32768.0, 32767.0) as i16
}
