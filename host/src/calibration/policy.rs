//! Whether a bench may measure with a calibration: a real bench needs one, with every step a
//! recording depends on done within a configurable age, and the device's sensor set-up (ADC
//! ranges, supply, divider) must be the one the calibration was made with. `--uncalibrated`
//! lets a bench measure anyway and marks everything it writes; a virtual rig hands over its
//! own constants.

use std::path::{Path, PathBuf};

use remanent_protocol::DeviceHello;
use serde::{Deserialize, Serialize};

use crate::calibration::{Calibration, CalibrationError, Stamp};
use remanent_rig_model::RigParams;

/// A calibration is good for this many days unless told otherwise (common practice for a
/// Hall probe in daily use: recalibrate twice a year).
pub const DEFAULT_MAX_AGE_DAYS: f64 = 182.0;

/// Boards whose sensors are the rig model's (the virtual rig, the emulated board in CI): their
/// constants are the reference design's, known exactly.
pub const SIMULATED_BOARDS: [&str; 2] = ["virtual", "qemu-lm3s6965"];

/// What the user said about calibration.
#[derive(Debug, Clone, PartialEq)]
pub struct Policy {
    /// The rig calibration file.
    pub file: Option<PathBuf>,
    /// Measure without a valid calibration, marking every output.
    pub uncalibrated: bool,
    /// Oldest acceptable calibration step, days.
    pub max_age_days: f64,
}

impl Default for Policy {
    fn default() -> Self {
        Policy {
            file: None,
            uncalibrated: false,
            max_age_days: DEFAULT_MAX_AGE_DAYS,
        }
    }
}

/// On what the conversion of a record rests.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Basis {
    /// A current calibration of this bench.
    Calibrated,
    /// The virtual rig's own constants.
    VirtualRig,
    /// No valid calibration: the user said `--uncalibrated`.
    Uncalibrated,
}

/// Why a bench may not measure.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PolicyError {
    /// No calibration at all.
    #[error("this bench has no calibration: run `remanent calibrate` and give the file with --calibration, or measure anyway with --uncalibrated (every output is then marked)")]
    Missing,
    /// Steps never done.
    #[error("the calibration has no date for: {}; run those `remanent calibrate` steps, or measure anyway with --uncalibrated", .0.join(", "))]
    Undated(Vec<&'static str>),
    /// Too old.
    #[error("the calibration's {step} step is {age_days:.0} days old, older than the {max_days:.0} days allowed (--max-calibration-age-days): recalibrate, or measure anyway with --uncalibrated")]
    TooOld {
        /// The oldest step.
        step: &'static str,
        /// Its age, days.
        age_days: f64,
        /// The limit, days.
        max_days: f64,
    },
    /// The device's sensor set-up is not the calibration's.
    #[error("the device reports {what} = {device} but the calibration was made with {calibration}: a different board or a changed set-up; recalibrate this bench")]
    Mismatch {
        /// Which setting.
        what: &'static str,
        /// As the device reports it.
        device: String,
        /// As the calibration has it.
        calibration: String,
    },
}

impl Policy {
    /// The calibration to convert with until the device has said who it is: the file, or the
    /// reference design's constants.
    pub fn provisional(&self) -> Result<Calibration, CalibrationError> {
        match &self.file {
            Some(p) => Calibration::load(p),
            None => Ok(Calibration::virtual_rig(&RigParams::REFERENCE)),
        }
    }

    /// Accept or refuse measuring with `cal` on the device that said `hello`, at `now`.
    pub fn accept(
        &self,
        hello: &DeviceHello,
        cal: &Calibration,
        now: Stamp,
    ) -> Result<Basis, PolicyError> {
        let virtual_rig = SIMULATED_BOARDS.contains(&hello.board.as_str());
        if self.file.is_some() || !virtual_rig {
            check_setup(hello, cal)?;
        }
        if virtual_rig && self.file.is_none() {
            return Ok(Basis::VirtualRig);
        }
        let verdict = match &self.file {
            None => Err(PolicyError::Missing),
            Some(_) => check_dates(cal, now, self.max_age_days),
        };
        match verdict {
            Ok(()) => Ok(Basis::Calibrated),
            Err(_) if self.uncalibrated => Ok(Basis::Uncalibrated),
            Err(e) => Err(e),
        }
    }

    /// The file's path, for messages.
    pub fn file(&self) -> Option<&Path> {
        self.file.as_deref()
    }
}

fn check_dates(cal: &Calibration, now: Stamp, max_days: f64) -> Result<(), PolicyError> {
    let req = cal.dates.required();
    let missing: Vec<&'static str> = req.iter().filter(|r| r.1.is_none()).map(|r| r.0).collect();
    if !missing.is_empty() {
        return Err(PolicyError::Undated(missing));
    }
    let (step, oldest) = req
        .iter()
        .filter_map(|(s, d)| d.map(|d| (*s, d)))
        .min_by_key(|x| x.1)
        .expect("every step dated");
    let age = oldest.age_days(now);
    if age > max_days {
        return Err(PolicyError::TooOld {
            step,
            age_days: age,
            max_days,
        });
    }
    Ok(())
}

/// The device's reported sensor set-up against the calibration's.
pub fn check_setup(hello: &DeviceHello, cal: &Calibration) -> Result<(), PolicyError> {
    let s = &hello.sensors;
    let checks = [
        (
            "the Hall channel's full scale",
            f64::from(s.hall_full_scale_uv) / 1000.0,
            cal.hall.full_scale_mv,
            "mV",
        ),
        (
            "the thermistor channel's full scale",
            f64::from(s.probe_full_scale_uv) / 1000.0,
            cal.ntc.full_scale_mv,
            "mV",
        ),
        (
            "the sensor supply",
            f64::from(s.supply_mv),
            cal.ntc.thermistor.supply_mv,
            "mV",
        ),
        (
            "the thermistor divider's resistor",
            f64::from(s.ntc_series_ohm),
            cal.ntc.thermistor.series_ohm,
            "Ω",
        ),
    ];
    for (what, device, calibration, unit) in checks {
        if (device - calibration).abs() > 1e-3 * calibration.abs().max(1.0) {
            return Err(PolicyError::Mismatch {
                what,
                device: format!("{device} {unit}"),
                calibration: format!("{calibration} {unit}"),
            });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use remanent_protocol::{examples, DeviceMsg, Label};

    fn hello(board: &str) -> DeviceHello {
        let DeviceMsg::Hello(mut h) = examples::device()[0].1.clone() else {
            panic!("the first example is a hello")
        };
        h.board = Label::new(board);
        h
    }

    fn dated(days_ago: f64) -> (Calibration, Stamp) {
        let now = Stamp(1_800_000_000);
        let then = Some(Stamp(now.0 - (days_ago * 86_400.0) as u64));
        let mut c = Calibration::virtual_rig(&RigParams::REFERENCE);
        c.dates.hall_zero = then;
        c.dates.sensitivity = then;
        c.dates.ice_point = then;
        c.dates.gap = then;
        (c, now)
    }

    fn with_file(uncalibrated: bool) -> Policy {
        Policy {
            file: Some("cal.toml".into()),
            uncalibrated,
            ..Policy::default()
        }
    }

    #[test]
    fn a_real_bench_needs_a_current_calibration() {
        let (fresh, now) = dated(30.0);
        let bench = hello("pico");
        assert_eq!(
            Policy::default().accept(&bench, &fresh, now),
            Err(PolicyError::Missing)
        );
        assert_eq!(
            with_file(false).accept(&bench, &fresh, now),
            Ok(Basis::Calibrated)
        );
        let (stale, now) = dated(400.0);
        let e = with_file(false).accept(&bench, &stale, now).unwrap_err();
        assert!(e.to_string().contains("400 days old"), "{e}");
        assert_eq!(
            with_file(true).accept(&bench, &stale, now),
            Ok(Basis::Uncalibrated)
        );
        let mut undated = fresh;
        undated.dates.gap = None;
        let e = with_file(false).accept(&bench, &undated, now).unwrap_err();
        assert_eq!(e, PolicyError::Undated(vec!["gap"]));
    }

    #[test]
    fn a_virtual_rig_hands_over_its_own_constants() {
        let c = Calibration::virtual_rig(&RigParams::REFERENCE);
        assert_eq!(
            Policy::default().accept(&hello("virtual"), &c, Stamp::now()),
            Ok(Basis::VirtualRig)
        );
    }

    #[test]
    fn a_different_sensor_set_up_is_refused_with_both_values() {
        let (mut c, now) = dated(1.0);
        c.hall.full_scale_mv = 4096.0;
        let e = with_file(true).accept(&hello("pico"), &c, now).unwrap_err();
        let text = e.to_string();
        assert!(
            text.contains("2048 mV") && text.contains("4096 mV"),
            "{text}"
        );
    }
}
