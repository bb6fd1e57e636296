//! The rig calibration: every constant that turns raw codes into °C and mT, with the standard
//! uncertainties the analysis's uncertainty budget needs, stored as TOML; and beside it in this
//! room when each step was done ([`dates`]) and whether a bench may measure with it
//! ([`policy`]). The steps that make it talk to a bench, so they are a workflow:
//! `jobs::calibrate::procedure`.

pub mod dates;
pub mod policy;

use std::path::Path;

use remanent_physics::{HallSensor, Standoff, Thermistor};
use serde::{Deserialize, Serialize};

pub use crate::calibration::dates::{Dates, Stamp};

/// Hall probe calibration: the sensor's constants as measured, with their uncertainties.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HallCalibration {
    /// Sensitivity, its temperature coefficient, offset and offset drift.
    #[serde(flatten)]
    pub sensor: HallSensor,
    /// Standard uncertainty of the sensitivity's temperature coefficient, %/°C.
    pub sensitivity_tc_u_pct_per_c: f64,
    /// Standard uncertainty of the offset drift, mV/°C.
    pub offset_tc_u_mv_per_c: f64,
    /// ADC full scale of the Hall channel, mV.
    pub full_scale_mv: f64,
    /// Standard uncertainty of the offset, mV (0 when not calibrated).
    #[serde(default)]
    pub offset_u_mv: f64,
    /// Standard uncertainty of the sensitivity, % (0 when not calibrated).
    #[serde(default)]
    pub sensitivity_u_pct: f64,
}

/// Probe position and the standoff that carries it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct GapCalibration {
    /// Gap at 20 °C, standoff length and expansion coefficient.
    #[serde(flatten)]
    pub standoff: Standoff,
    /// Standard uncertainty of the gap, mm.
    pub gap_u_mm: f64,
    /// Standard uncertainty of the expansion coefficient, 1/K.
    pub standoff_cte_u_per_k: f64,
}

/// Probe thermistor and its divider.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NtcCalibration {
    /// Thermistor and divider constants.
    #[serde(flatten)]
    pub thermistor: Thermistor,
    /// ADC full scale of the thermistor channel, mV.
    pub full_scale_mv: f64,
}

/// Thermocouple.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ThermocoupleCalibration {
    /// Offset found at the ice point, subtracted from every reading, °C.
    pub offset_c: f64,
    /// Gain tolerance of the wire as a relative half-width, % (0.4 for special limits).
    pub gain_tolerance_pct: f64,
    /// Standard uncertainty of the offset, °C (0 when not calibrated).
    #[serde(default)]
    pub offset_u_c: f64,
}

/// The fixture's thermal behaviour as `remanent calibrate fixture` identified it, each value
/// with its standard uncertainty: what the firmware's interlocks judge the heating against.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FixtureCalibration {
    /// The block's heating rate at full duty (at the mains of the day), K/s.
    #[serde(rename = "rate_K_per_s")]
    pub rate_k_per_s: f64,
    /// Its standard uncertainty, K/s.
    #[serde(rename = "rate_u_K_per_s")]
    pub rate_u_k_per_s: f64,
    /// The block's cooling time constant toward ambient, s.
    pub cooling_tau_s: f64,
    /// Its standard uncertainty, s.
    pub cooling_tau_u_s: f64,
    /// How far the thermocouple lags the block, s.
    pub thermocouple_lag_s: f64,
    /// Its standard uncertainty, s.
    pub thermocouple_lag_u_s: f64,
    /// How the heating rate falls as the block warms: the fraction lost per kelvin above
    /// 20 °C (0 when the identification had no hot pass).
    #[serde(rename = "rate_fall_per_K", default)]
    pub rate_fall_per_k: f64,
    /// Its standard uncertainty, per kelvin.
    #[serde(rename = "rate_fall_u_per_K", default)]
    pub rate_fall_u_per_k: f64,
}

impl FixtureCalibration {
    /// As the device takes it (the device checks the bounds itself).
    pub fn model(&self) -> remanent_protocol::FixtureModel {
        let whole = |v: f64| v.round().clamp(0.0, f64::from(u32::MAX)) as u32;
        remanent_protocol::FixtureModel {
            rate_mk_per_s: whole(self.rate_k_per_s * 1000.0),
            cooling_tau_s: whole(self.cooling_tau_s),
            lag_ms: whole(self.thermocouple_lag_s * 1000.0),
            // a heater whose effect grows as it warms is taken as one that does not fall
            rate_fall_ppm_per_k: whole(self.rate_fall_per_k * 1e6),
        }
    }
}

/// A rig's full calibration.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Calibration {
    /// Hall probe.
    pub hall: HallCalibration,
    /// Probe position.
    pub gap: GapCalibration,
    /// Probe thermistor.
    pub ntc: NtcCalibration,
    /// Thermocouple.
    pub thermocouple: ThermocoupleCalibration,
    /// The fixture's identification (none: the device heats under its model-free limits).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fixture: Option<FixtureCalibration>,
    /// When each calibration step was last done.
    #[serde(default, skip_serializing_if = "Dates::is_empty")]
    pub dates: Dates,
}

/// Reading a calibration failed.
#[derive(Debug, thiserror::Error)]
pub enum CalibrationError {
    /// The file could not be read.
    #[error("cannot read calibration {path}: {source}")]
    Io {
        /// The file.
        path: String,
        /// Why.
        source: std::io::Error,
    },
    /// The TOML is malformed or incomplete.
    #[error("calibration {path} is not valid: {reason}")]
    Parse {
        /// The file.
        path: String,
        /// Why (unknown keys with their lines, every missing key).
        reason: String,
    },
}

impl Calibration {
    /// Read a calibration TOML.
    pub fn load(path: &Path) -> Result<Calibration, CalibrationError> {
        let p = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|source| CalibrationError::Io {
            path: p.clone(),
            source,
        })?;
        let parse = |reason: String| CalibrationError::Parse {
            path: p.clone(),
            reason,
        };
        crate::formats::check(crate::formats::Kind::Calibration, &text).map_err(parse)?;
        toml::from_str(&text).map_err(|e| parse(crate::formats::bounded(&e.to_string())))
    }
}
