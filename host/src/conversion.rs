//! Raw codes to physical values: the thermocouple by ITS-90 with the converter's linear
//! approximation undone, the probe temperature from its thermistor (Beta equation), and the
//! Hall code to mT with the probe's own temperature coefficient.

use remanent_physics::{adc, type_k};
use remanent_protocol::ThermoWord;

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
    ntc.thermistor
        .temperature_c(adc::mv(code, ntc.full_scale_mv))
}

/// Flux density from the Hall channel's code and the probe temperature, mT.
pub fn flux_mt(code: i16, probe_c: f64, hall: &HallCalibration) -> f64 {
    hall.sensor
        .field_mt(adc::mv(code, hall.full_scale_mv), probe_c)
}

/// Whether a Hall code sits at the converter's rails (field beyond the range).
pub fn hall_saturated(code: i16) -> bool {
    adc::saturated(code)
}
