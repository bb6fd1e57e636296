//! The recorder's rest before heating and its live figures: the rest ends once the fixture is
//! steady (a fixture still cooling from the part before biases the room-temperature
//! reference: a third part in a row once read a 0.35 % loss that was not there), or at the
//! latest [`MAX_SETTLE_S`] after the rest asked for; every sample updates the figures.

use super::{Notice, Progress, Recorder};

/// The fixture is steady when its temperature moves less than this, °C/min.
pub const STEADY_C_PER_MIN: f64 = 0.3;
/// The longest the rest is drawn out waiting for a steady fixture, s.
pub const MAX_SETTLE_S: f64 = 900.0;

/// The least-squares slope of (`t` s, `temp` °C) in °C/min, once the window spans 20 s (the
/// converter's 0.25 °C steps make a slope from two end points jump: a fixture still cooling at
/// 0.6 K/min read as steady).
fn slope_c_per_min(h: &std::collections::VecDeque<(f64, f64)>) -> Option<f64> {
    let (first, last) = (h.front()?, h.back()?);
    if last.0 - first.0 < 20.0 {
        return None;
    }
    let n = h.len() as f64;
    let mt = h.iter().map(|p| p.0).sum::<f64>() / n;
    let my = h.iter().map(|p| p.1).sum::<f64>() / n;
    let sxx: f64 = h.iter().map(|p| (p.0 - mt).powi(2)).sum();
    let sxy: f64 = h.iter().map(|p| (p.0 - mt) * (p.1 - my)).sum();
    Some(sxy / sxx * 60.0)
}

impl Recorder {
    /// The rest before heating is over: `preroll_s` of samples, and a steady fixture (or
    /// [`MAX_SETTLE_S`] more); the first time it waits for the fixture it says so.
    pub(super) fn rest_over(&mut self, preroll_s: f64, progress: &mut dyn Progress) -> bool {
        let rest = self.rest_s();
        if rest < preroll_s {
            return false;
        }
        let moving = slope_c_per_min(&self.history).filter(|r| r.abs() >= STEADY_C_PER_MIN);
        match moving {
            Some(r) if rest < preroll_s + MAX_SETTLE_S => {
                if !self.told_settling {
                    self.told_settling = true;
                    progress.notice(&Notice::Settling { c_per_min: r });
                }
                false
            }
            _ => true,
        }
    }

    /// Device time covered by samples so far, s.
    pub(super) fn rest_s(&self) -> f64 {
        match (self.first_sample_s, self.history.back()) {
            (Some(a), Some(b)) => b.0 - a,
            _ => 0.0,
        }
    }

    pub(super) fn track(
        &mut self,
        t: f64,
        temp_c: Option<f64>,
        flux_mt: Option<f64>,
        duty_pct: f64,
    ) {
        self.first_sample_s.get_or_insert(t);
        let start = if self.running() {
            *self.start_device_s.get_or_insert(t)
        } else {
            t
        };
        self.status.elapsed_s = t - start;
        self.status.remaining_s = (self.nominal_s - self.status.elapsed_s).max(0.0);
        self.status.temp_c = temp_c;
        self.status.flux_mt = flux_mt;
        self.status.duty_pct = duty_pct;
        if let Some(tc) = temp_c {
            if let Some(r) =
                super::super::types::ramp_rate(&mut self.history, t, tc, super::RAMP_WINDOW_S)
            {
                self.status.ramp_c_per_min = Some(r);
            }
        }
    }
}
