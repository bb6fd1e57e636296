//! Raw codes to physical values: the thermocouple by ITS-90 with the converter's linear
//! approximation undone, the probe temperature from its thermistor (Beta equation), and the
//! Hall code to mT with the probe's own temperature coefficient.

use remanent_protocol::ThermoWord;
use remanent_rig_model::type_k;

use crate::calibration::{Calibration, HallCalibration, NtcCalibration};

/// True hot-junction temperature from the converter word, °C; `None` on a converter fault.
pub fn thermocouple_c(word: ThermoWord, cal: &Calibration) -> Option<f64> {
    if word.fault().is_some() {
        return None;
    }
    let reported = f64::from(word.tc_counts()) * 0.25;
    let cold = f64::from(word.cj_counts()) * 0.0625;
    Some(type_k::corrected_c(reported, cold) - cal.thermocouple.offset_c)
}

/// Cold-junction temperature from the word, °C.
pub fn cold_junction_c(word: ThermoWord) -> f64 {
    f64::from(word.cj_counts()) * 0.0625
}

/// Probe temperature from the thermistor channel's code, °C (Beta equation).
pub fn probe_c(code: i16, ntc: &NtcCalibration) -> Option<f64> {
    let v = f64::from(code) / 32768.0 * ntc.full_scale_mv;
    if v <= 0.0 || v >= ntc.supply_mv {
        return None; // open or shorted thermistor
    }
    let r = ntc.series_ohm * v / (ntc.supply_mv - v);
    let inv_t = 1.0 / 298.15 + (r / ntc.r25_ohm).ln() / ntc.beta_k;
    Some(1.0 / inv_t - 273.15)
}

/// Flux density from the Hall channel's code and the probe temperature, mT.
pub fn flux_mt(code: i16, probe_c: f64, hall: &HallCalibration) -> f64 {
    let v = f64::from(code) / 32768.0 * hall.full_scale_mv;
    let d = probe_c - 25.0;
    let s = hall.sensitivity_mv_per_mt * (1.0 + hall.sensitivity_tc_pct_per_c / 100.0 * d);
    (v - hall.offset_mv - hall.offset_tc_mv_per_c * d) / s
}

/// Whether a Hall code sits at the converter's rails (field beyond the range).
pub fn hall_saturated(code: i16) -> bool {
    code == i16::MAX || code == i16::MIN
}
