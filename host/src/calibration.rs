//! The rig calibration: every constant that turns raw codes into °C and mT, with the standard
//! uncertainties the analysis's uncertainty budget needs. Stored as TOML.

use std::path::Path;

use remanent_rig_model::RigParams;
use serde::{Deserialize, Serialize};

/// Hall probe calibration.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HallCalibration {
    /// Sensitivity at 25 °C probe temperature, mV/mT.
    pub sensitivity_mv_per_mt: f64,
    /// Temperature coefficient of the sensitivity, %/°C.
    pub sensitivity_tc_pct_per_c: f64,
    /// Standard uncertainty of that coefficient, %/°C.
    pub sensitivity_tc_u_pct_per_c: f64,
    /// Zero-field offset at 25 °C, mV.
    pub offset_mv: f64,
    /// Offset drift, mV/°C.
    pub offset_tc_mv_per_c: f64,
    /// Standard uncertainty of the offset drift, mV/°C.
    pub offset_tc_u_mv_per_c: f64,
    /// ADC full scale of the Hall channel, mV.
    pub full_scale_mv: f64,
}

/// Probe position and the standoff that carries it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct GapCalibration {
    /// Pole face to sensing element at 20 °C, mm.
    pub gap_mm: f64,
    /// Standard uncertainty of the gap, mm.
    pub gap_u_mm: f64,
    /// Length of the standoff whose expansion moves the probe, mm.
    pub standoff_mm: f64,
    /// Its expansion coefficient, 1/K.
    pub standoff_cte_per_k: f64,
    /// Standard uncertainty of the expansion coefficient, 1/K.
    pub standoff_cte_u_per_k: f64,
}

/// Probe thermistor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct NtcCalibration {
    /// Resistance at 25 °C, Ω.
    pub r25_ohm: f64,
    /// Beta, K.
    pub beta_k: f64,
    /// Series resistor from the supply, Ω.
    pub series_ohm: f64,
    /// Divider supply, mV.
    pub supply_mv: f64,
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
    #[error("calibration {path} is not valid: {source}")]
    Parse {
        /// The file.
        path: String,
        /// Why.
        source: toml::de::Error,
    },
}

impl Calibration {
    /// The calibration of the built-in virtual rig (its model's true constants, with the
    /// uncertainties a careful calibration of a real rig would reach).
    pub fn virtual_rig(params: &RigParams) -> Calibration {
        Calibration {
            hall: HallCalibration {
                sensitivity_mv_per_mt: params.hall.sensitivity_mv_per_mt,
                sensitivity_tc_pct_per_c: params.hall.sensitivity_tc_pct_per_c,
                sensitivity_tc_u_pct_per_c: 0.002,
                offset_mv: params.hall.offset_mv,
                offset_tc_mv_per_c: params.hall.offset_tc_mv_per_c,
                offset_tc_u_mv_per_c: 0.001,
                full_scale_mv: params.hall_full_scale_mv,
            },
            gap: GapCalibration {
                gap_mm: params.hall.gap_mm,
                gap_u_mm: 0.05,
                standoff_mm: params.hall.standoff_mm,
                standoff_cte_per_k: params.hall.standoff_cte_per_k,
                standoff_cte_u_per_k: 1.0e-6,
            },
            ntc: NtcCalibration {
                r25_ohm: params.ntc.r25_ohm,
                beta_k: params.ntc.beta_k,
                series_ohm: params.ntc.series_ohm,
                supply_mv: params.ntc.supply_mv,
                full_scale_mv: params.probe_full_scale_mv,
            },
            thermocouple: ThermocoupleCalibration {
                offset_c: 0.0,
                gain_tolerance_pct: 0.4,
            },
        }
    }

    /// Read a calibration TOML.
    pub fn load(path: &Path) -> Result<Calibration, CalibrationError> {
        let p = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|source| CalibrationError::Io {
            path: p.clone(),
            source,
        })?;
        toml::from_str(&text).map_err(|source| CalibrationError::Parse { path: p, source })
    }
}
