//! Live raw readings for calibration — the Hall output in mV, the probe's temperature and the
//! thermocouple before its offset — gathered until they hold still, or over a warming.

use std::io::{Read, Write};

use remanent_physics::{adc, type_k};

use crate::calibration::Calibration;
use crate::conversion;
use crate::link::acquisition::{Acquisition, Event};
use crate::link::LinkError;

/// One sample in the units calibration works in.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Raw {
    /// Device time, s.
    pub time_s: f64,
    /// Hall channel, mV.
    pub hall_mv: f64,
    /// Probe temperature from its thermistor, °C.
    pub probe_c: f64,
    /// Thermocouple, °C, with no offset taken off (None on a converter fault).
    pub tc_c: Option<f64>,
}

/// Mean, standard deviation and count of a window's values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stats {
    /// Mean.
    pub mean: f64,
    /// Sample standard deviation.
    pub sd: f64,
    /// Values.
    pub n: usize,
}

impl Stats {
    /// Of `v` (at least one value).
    pub fn of(v: impl Iterator<Item = f64>) -> Stats {
        let (mean, sd, n) = crate::analysis::prepare::mean(v);
        Stats {
            mean,
            sd,
            n: n.max(1),
        }
    }

    /// Standard uncertainty of the mean, neighbouring samples counted as correlated over ten.
    pub fn u_mean(&self) -> f64 {
        self.sd / (self.n as f64 / 10.0).max(1.0).sqrt()
    }
}

/// How long and how still.
#[derive(Debug, Clone, Copy)]
pub struct Stillness {
    /// The window judged, s of device time.
    pub window_s: f64,
    /// Largest drift between the window's halves, in standard deviations of the mean.
    pub max_drift_sigmas: f64,
    /// Give up after this much device time.
    pub give_up_s: f64,
}

impl Stillness {
    /// 20 s windows that do not drift, for at most 15 minutes.
    pub const DEFAULT: Stillness = Stillness {
        window_s: 20.0,
        max_drift_sigmas: 3.0,
        give_up_s: 900.0,
    };
}

/// The calibration could not be measured.
#[derive(Debug, thiserror::Error)]
pub enum ReadingError {
    /// The link failed.
    #[error(transparent)]
    Link(#[from] LinkError),
    /// The readings never held still.
    #[error("the {what} never held still in {give_up_s:.0} s (it drifted {drift:.3} {unit} across the last window): check the set-up and try again")]
    NeverStill {
        /// Which reading.
        what: &'static str,
        /// How much, in its unit.
        drift: f64,
        /// The unit.
        unit: &'static str,
        /// After how long.
        give_up_s: f64,
    },
    /// The thermocouple converter reported a fault.
    #[error("the thermocouple converter reports a fault: a thermocouple step needs a working thermocouple")]
    Thermocouple,
}

/// Samples taken within this long after a set-up was confirmed are not used (they may have
/// been taken before it was in place), s.
pub const SETTLE_S: f64 = 3.0;

/// The next raw samples from the device taken after device time `from_s`, with the live
/// reading shown to `show`.
pub fn next<P: Read + Write>(
    acq: &mut Acquisition<P>,
    cal: &Calibration,
    from_s: f64,
    out: &mut Vec<Raw>,
    show: &mut dyn FnMut(&Raw),
) -> Result<(), LinkError> {
    for e in acq.poll()?.events {
        let Event::Sample { placed, .. } = e else {
            continue;
        };
        if placed.device_time_s < from_s {
            continue;
        }
        let s = placed.sample;
        let Some(probe_c) = conversion::probe_c(s.probe_code, &cal.ntc) else {
            continue;
        };
        let tc_c = s.thermo.fault().is_none().then(|| {
            let reported = f64::from(s.thermo.tc_counts()) * 0.25;
            type_k::corrected_c(reported, conversion::cold_junction_c(s.thermo))
        });
        let raw = Raw {
            time_s: placed.device_time_s,
            hall_mv: adc::mv(s.hall_code, cal.hall.full_scale_mv),
            probe_c,
            tc_c,
        };
        show(&raw);
        out.push(raw);
    }
    Ok(())
}

/// The reading a step waits on to hold still.
#[derive(Clone, Copy)]
pub struct Quantity {
    /// In words.
    pub name: &'static str,
    /// Its unit.
    pub unit: &'static str,
    /// Its value in a sample (None: not available).
    pub value: fn(&Raw) -> Option<f64>,
}

impl Quantity {
    /// The Hall output.
    pub const HALL: Quantity = Quantity {
        name: "Hall output",
        unit: "mV",
        value: |r| Some(r.hall_mv),
    };
    /// The thermocouple.
    pub const THERMOCOUPLE: Quantity = Quantity {
        name: "thermocouple",
        unit: "°C",
        value: |r| r.tc_c,
    };
}

/// Read until the last `window_s` of `value` hold still; that window's readings.
pub fn until_still<P: Read + Write>(
    acq: &mut Acquisition<P>,
    cal: &Calibration,
    from_s: f64,
    still: Stillness,
    what: Quantity,
    show: &mut dyn FnMut(&Raw),
) -> Result<Vec<Raw>, ReadingError> {
    let Quantity { name, unit, value } = what;
    let mut all: Vec<Raw> = Vec::new();
    let mut drift = f64::NAN;
    loop {
        next(acq, cal, from_s, &mut all, show)?;
        let Some(last) = all.last().copied() else {
            continue;
        };
        if value(&last).is_none() {
            return Err(ReadingError::Thermocouple);
        }
        let t0 = all[0].time_s;
        let from = all.partition_point(|r| r.time_s < last.time_s - still.window_s);
        let window = &all[from..];
        if last.time_s - t0 >= still.window_s && window.len() >= 10 {
            let half = window.len() / 2;
            let a = Stats::of(window[..half].iter().filter_map(value));
            let b = Stats::of(window[half..].iter().filter_map(value));
            let u = (a.u_mean().powi(2) + b.u_mean().powi(2)).sqrt().max(1e-12);
            drift = (b.mean - a.mean).abs();
            if drift <= still.max_drift_sigmas * u {
                return Ok(window.to_vec());
            }
        }
        if last.time_s - t0 > still.give_up_s {
            return Err(ReadingError::NeverStill {
                what: name,
                drift,
                unit,
                give_up_s: still.give_up_s,
            });
        }
    }
}

/// Read for `duration_s` of device time (a warming).
pub fn over<P: Read + Write>(
    acq: &mut Acquisition<P>,
    cal: &Calibration,
    from_s: f64,
    duration_s: f64,
    show: &mut dyn FnMut(&Raw),
) -> Result<Vec<Raw>, LinkError> {
    let mut all: Vec<Raw> = Vec::new();
    loop {
        next(acq, cal, from_s, &mut all, show)?;
        if let (Some(a), Some(b)) = (all.first(), all.last()) {
            if b.time_s - a.time_s >= duration_s {
                return Ok(all);
            }
        }
    }
}
