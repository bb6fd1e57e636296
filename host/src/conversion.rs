//! Raw codes to physical values: the thermocouple by ITS-90 with the converter's linear
//! approximation undone, the probe temperature from its thermistor (Beta equation), and the
//! Hall code to mT with the probe's own temperature coefficient.

use remanent_physics::{adc, type_k};
use remanent_protocol::thermo_word::ThermoFault;
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

/// One sample's raw codes in physical units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Converted {
    /// Thermocouple (hot junction), °C; `None` on a converter fault.
    pub temp_c: Option<f64>,
    /// Converter's cold junction, °C.
    pub cold_junction_c: f64,
    /// Probe temperature, °C; `None` with the thermistor open or shorted.
    pub probe_c: Option<f64>,
    /// Flux density, mT; `None` without a probe temperature.
    pub flux_mt: Option<f64>,
    /// The Hall code sits at a rail (the field is beyond the range).
    pub hall_saturated: bool,
}

/// Convert a sample's codes with `cal`: the one place raw readings become °C and mT.
pub fn convert(hall_code: i16, probe_code: i16, word: ThermoWord, cal: &Calibration) -> Converted {
    let probe_c = probe_c(probe_code, &cal.ntc);
    assemble(hall_code, word, thermocouple_c(word, cal), probe_c, cal)
}

/// A sample's values from its thermocouple and probe temperatures.
fn assemble(
    hall_code: i16,
    word: ThermoWord,
    temp_c: Option<f64>,
    probe_c: Option<f64>,
    cal: &Calibration,
) -> Converted {
    Converted {
        temp_c,
        cold_junction_c: cold_junction_c(word),
        probe_c,
        flux_mt: probe_c.map(|tp| flux_mt(hall_code, tp, &cal.hall)),
        hall_saturated: hall_saturated(hall_code),
    }
}

/// As [`convert`], remembering on each thread the last thermocouple word and thermistor code
/// it converted (with the calibration constants they were converted with): a record's words
/// repeat for many samples (0.25 °C steps), and the ITS-90 inversion and the Beta equation
/// are most of a row's cost. Gives exactly what [`convert`] gives.
pub fn convert_memo(
    hall_code: i16,
    probe_code: i16,
    word: ThermoWord,
    cal: &Calibration,
) -> Converted {
    use std::cell::Cell;
    type WordMemo = Option<(u32, f64, Option<f64>)>;
    type ProbeMemo = Option<(i16, NtcCalibration, Option<f64>)>;
    thread_local! {
        static LAST_WORD: Cell<WordMemo> = const { Cell::new(None) };
        static LAST_PROBE: Cell<ProbeMemo> = const { Cell::new(None) };
    }
    let offset = cal.thermocouple.offset_c;
    let temp_c = LAST_WORD.with(|m| match m.get() {
        Some((w, o, t)) if w == word.0 && o.to_bits() == offset.to_bits() => t,
        _ => {
            let t = thermocouple_c(word, cal);
            m.set(Some((word.0, offset, t)));
            t
        }
    });
    let probe_c = LAST_PROBE.with(|m| match m.get() {
        Some((c, ntc, t)) if c == probe_code && ntc == cal.ntc => t,
        _ => {
            let t = probe_c(probe_code, &cal.ntc);
            m.set(Some((probe_code, cal.ntc, t)));
            t
        }
    });
    assemble(hall_code, word, temp_c, probe_c, cal)
}

/// The converter's fault as the record names it: `open`, `short_gnd`, `short_vcc`.
pub fn thermo_fault_name(f: ThermoFault) -> &'static str {
    match f {
        ThermoFault::Open => "open",
        ThermoFault::ShortToGnd => "short_gnd",
        ThermoFault::ShortToVcc => "short_vcc",
    }
}
