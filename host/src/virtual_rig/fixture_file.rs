//! A builder's own fixture for the virtual rig (`remanent virtual-rig --fixture FILE.toml`):
//! its heater, block, loss, thermocouple lag and mains, so a bench can be rehearsed before it
//! is built. The virtual board then starts as a real one would, with its fixture unidentified.

use std::path::Path;

use remanent_rig_model::HeaterSwitch;
use serde::Deserialize;

use super::options::VirtualRigOptions;

/// The file's keys.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FixtureFile {
    /// Heater power at nominal mains, W.
    pub heater_w: f64,
    /// Heat capacity of the heated block, J/K.
    pub heat_capacity_j_per_k: f64,
    /// Its loss to ambient, W/K.
    pub loss_w_per_k: f64,
    /// How far the thermocouple lags the block, s.
    pub thermocouple_lag_s: f64,
    /// Mains frequency, Hz (50 or 60): the heater is switched by a zero-crossing relay.
    pub mains_hz: f64,
    /// Mains voltage off nominal, % (the heater's power goes with its square).
    pub mains_deviation_pct: f64,
    /// How the heater's power falls as the block warms, % per 100 K above 20 °C (a heater's
    /// resistance rising; none if left out).
    #[serde(default)]
    pub heater_fall_pct_per_100k: f64,
}

/// A fixture file could not be used.
#[derive(Debug, thiserror::Error)]
#[error("fixture file {path}: {reason}")]
pub struct FixtureFileError {
    /// The file.
    pub path: String,
    /// Why.
    pub reason: String,
}

impl FixtureFile {
    /// Read and check a fixture file.
    pub fn load(path: &Path) -> Result<FixtureFile, FixtureFileError> {
        let err = |reason: String| FixtureFileError {
            path: path.display().to_string(),
            reason,
        };
        let text = std::fs::read_to_string(path).map_err(|e| err(e.to_string()))?;
        let f: FixtureFile = toml::from_str(&text).map_err(|e| err(e.to_string()))?;
        f.check().map_err(err)?;
        Ok(f)
    }

    /// Every value finite and in the range a bench fixture has.
    pub fn check(&self) -> Result<(), String> {
        let ranges = [
            ("heater_w", self.heater_w, 1.0, 5000.0),
            (
                "heat_capacity_j_per_k",
                self.heat_capacity_j_per_k,
                5.0,
                10_000.0,
            ),
            ("loss_w_per_k", self.loss_w_per_k, 0.01, 100.0),
            ("thermocouple_lag_s", self.thermocouple_lag_s, 0.0, 30.0),
            ("mains_deviation_pct", self.mains_deviation_pct, -20.0, 20.0),
            (
                "heater_fall_pct_per_100k",
                self.heater_fall_pct_per_100k,
                0.0,
                20.0,
            ),
        ];
        for (key, v, lo, hi) in ranges {
            if !(v.is_finite() && (lo..=hi).contains(&v)) {
                return Err(format!("{key} = {v} is outside {lo} … {hi}"));
            }
        }
        if self.mains_hz != 50.0 && self.mains_hz != 60.0 {
            return Err(format!("mains_hz = {} is neither 50 nor 60", self.mains_hz));
        }
        Ok(())
    }

    /// The heater's power at this mains, W.
    pub fn heater_power_w(&self) -> f64 {
        self.heater_w * (1.0 + self.mains_deviation_pct / 100.0).powi(2)
    }

    /// Put this fixture into the rig `opts` describes; its board starts unidentified.
    pub fn apply(&self, opts: &mut VirtualRigOptions) {
        let t = &mut opts.params.thermal;
        t.heater_w = self.heater_power_w();
        t.plate_j_per_k = self.heat_capacity_j_per_k;
        t.plate_loss_w_per_k = self.loss_w_per_k;
        t.thermocouple_lag_s = self.thermocouple_lag_s;
        t.heater_fall_per_k = self.heater_fall_pct_per_100k / 1e4;
        opts.params.switch = HeaterSwitch::ZeroCross {
            half_cycle_s: 0.5 / self.mains_hz,
        };
        opts.identified = false;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_fixture_file_sets_the_rig_and_bad_values_are_named() {
        let text = "heater_w = 200.0\\nheat_capacity_j_per_k = 450.0\\nloss_w_per_k = 1.0\\nthermocouple_lag_s = 3.0\\nmains_hz = 60.0\\nmains_deviation_pct = -10.0\\n";
        let f: FixtureFile = toml::from_str(&text.replace("\\n", "\n")).unwrap();
        assert_eq!(f.check(), Ok(()));
        // 200 W at 90 % of the voltage: 162 W
        assert!((f.heater_power_w() - 162.0).abs() < 1e-9);
        let mut o = VirtualRigOptions::new(remanent_rig_model::catalogue::PARTS[0].magnet);
        f.apply(&mut o);
        assert_eq!(
            o.params.switch,
            HeaterSwitch::ZeroCross {
                half_cycle_s: 0.5 / 60.0
            }
        );
        assert!(!o.identified);
        let bad = FixtureFile {
            mains_hz: 55.0,
            ..f
        };
        assert!(bad.check().unwrap_err().contains("mains_hz = 55"));
        let bad = FixtureFile {
            loss_w_per_k: f64::NAN,
            ..f
        };
        assert!(bad.check().unwrap_err().contains("loss_w_per_k"));
    }
}
