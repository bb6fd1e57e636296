//! A room-temperature survey's readings and their ranking against the set's median (robust
//! z-scores): the low ones are likely demagnetized or heat-damaged. The survey workflow
//! (`jobs::survey`) takes the readings; the render layer writes the table.

use serde::Serialize;

use crate::lot::{median, modified_z, OUTLIER_Z};

/// One magnet's reading.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Reading {
    /// Order in which it was read, from 1.
    pub index: usize,
    /// Mean flux over the window, mT (referred to 20 °C when α is given).
    #[serde(rename = "flux_mT")]
    pub flux_mt: f64,
    /// Relative standard deviation over the window.
    pub rel_sd: f64,
    /// Magnet (thermocouple) temperature, °C.
    #[serde(rename = "temp_C")]
    pub temp_c: f64,
    /// Device time, s.
    pub time_s: f64,
    /// Read on a bench without a valid calibration (`--uncalibrated`).
    pub uncalibrated: bool,
}

/// A reading ranked against the set.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Ranked {
    /// The reading.
    #[serde(flatten)]
    pub reading: Reading,
    /// Deviation from the set's median, %.
    pub deviation_pct: f64,
    /// Modified z-score against the set.
    pub z: f64,
    /// Flagged as low: likely demagnetized or heat-damaged.
    pub low: bool,
}

/// Flag threshold below the median regardless of the spread, %.
pub const MIN_FLAG_PCT: f64 = 1.0;

/// Rank the readings, lowest flux first.
pub fn rank(readings: &[Reading]) -> Vec<Ranked> {
    let flux: Vec<f64> = readings.iter().map(|r| r.flux_mt).collect();
    let med = median(&flux);
    let z = modified_z(&flux);
    let mut out: Vec<Ranked> = readings
        .iter()
        .zip(z)
        .map(|(r, z)| {
            let dev = (r.flux_mt - med) / med * 100.0;
            Ranked {
                reading: *r,
                deviation_pct: dev,
                z,
                low: dev < -MIN_FLAG_PCT && z < -OUTLIER_Z,
            }
        })
        .collect();
    out.sort_by(|a, b| a.reading.flux_mt.total_cmp(&b.reading.flux_mt));
    out
}
