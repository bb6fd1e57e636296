//! The fixture's thermal network: heater plate (where the thermocouple sits), the magnet
//! coupled to it through a conductance, and the probe on its standoff, slower still.

use serde::{Deserialize, Serialize};

/// Thermal parameters.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ThermalParams {
    /// Heater power at full duty, W.
    pub heater_w: f64,
    /// Heat capacity of the plate, J/K.
    pub plate_j_per_k: f64,
    /// Loss of the plate to ambient, W/K.
    pub plate_loss_w_per_k: f64,
    /// Magnet's time constant toward the plate temperature, s.
    pub magnet_tau_s: f64,
    /// Probe's time constant, s.
    pub probe_tau_s: f64,
    /// Fraction of the plate's rise above ambient the probe reaches at equilibrium.
    pub probe_coupling: f64,
    /// Mean ambient temperature, °C.
    pub ambient_c: f64,
    /// Ambient drift amplitude, K.
    pub ambient_drift_k: f64,
    /// Ambient drift period, s.
    pub ambient_period_s: f64,
    /// How far the thermocouple's junction lags the plate, s (0: clamped in it).
    #[serde(default)]
    pub thermocouple_lag_s: f64,
    /// How the heater's power falls as the plate warms: the fraction lost per kelvin above
    /// 20 °C (a heater's resistance rising with its temperature).
    #[serde(default)]
    pub heater_fall_per_k: f64,
}

impl ThermalParams {
    /// The reference fixture (hardware-notes/fixture.md).
    pub const REFERENCE: ThermalParams = ThermalParams {
        heater_w: 600.0,
        plate_j_per_k: 150.0,
        plate_loss_w_per_k: 1.2,
        magnet_tau_s: 45.0,
        probe_tau_s: 400.0,
        probe_coupling: 0.12,
        ambient_c: 22.0,
        ambient_drift_k: 0.4,
        ambient_period_s: 5400.0,
        thermocouple_lag_s: 0.0,
        heater_fall_per_k: 0.0,
    };
}

/// Temperatures, °C.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ThermalState {
    /// Heater plate (thermocouple).
    pub plate_c: f64,
    /// Magnet.
    pub magnet_c: f64,
    /// Hall probe.
    pub probe_c: f64,
    /// The thermocouple's junction (behind the plate by the lag).
    pub junction_c: f64,
}

impl ThermalState {
    /// Everything at `t_c`.
    pub fn uniform(t_c: f64) -> Self {
        ThermalState {
            plate_c: t_c,
            magnet_c: t_c,
            probe_c: t_c,
            junction_c: t_c,
        }
    }

    /// Advance by `dt_s` (keep it ≤ 0.1 s) with `power_w` (at 20 °C) into the plate.
    pub fn advance(&mut self, p: &ThermalParams, ambient_c: f64, power_w: f64, dt_s: f64) {
        let power_w = power_w * (1.0 - p.heater_fall_per_k * (self.plate_c - 20.0)).max(0.0);
        let loss = p.plate_loss_w_per_k * (self.plate_c - ambient_c);
        self.plate_c += (power_w - loss) / p.plate_j_per_k * dt_s;
        self.magnet_c += (self.plate_c - self.magnet_c) / p.magnet_tau_s * dt_s;
        let probe_eq = ambient_c + p.probe_coupling * (self.plate_c - ambient_c);
        self.probe_c += (probe_eq - self.probe_c) / p.probe_tau_s * dt_s;
        self.junction_c = if p.thermocouple_lag_s > 0.0 {
            self.junction_c
                + (self.plate_c - self.junction_c) * dt_s / (p.thermocouple_lag_s + dt_s)
        } else {
            self.plate_c
        };
    }
}

/// Ambient temperature at `t_s`, °C.
pub fn ambient_c(p: &ThermalParams, t_s: f64) -> f64 {
    p.ambient_c + p.ambient_drift_k * libm::sin(core::f64::consts::TAU * t_s / p.ambient_period_s)
}
