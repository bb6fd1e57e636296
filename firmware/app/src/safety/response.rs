//! Does the fixture heat as the energy put in says it must, and stay put when it gets none?
//!
//! [`ResponseCheck`] integrates a first-order energy balance of the heated block over a window
//! and trips when the measured rise is far below the predicted one: a heater or a thermocouple
//! that has come off the block (reading room air) is caught within a few kelvin of predicted
//! rise, long before the block runs far past the run limit. [`OffWatch`] sees the temperature
//! climb while the heater has long been commanded off: a switch that failed on.

use remanent_protocol::Fault;

use crate::config::{FirmwareConfig, PlantModel};

/// Refinement of the model by what the check sees, bounded so no drift can blunt it.
const GAIN_RANGE: (f32, f32) = (0.6, 1.5);

#[derive(Debug, Clone, Copy)]
struct Window {
    since_ms: u32,
    temp0_c: f32,
    predicted_k: f32,
}

/// The heating-response interlock's state.
#[derive(Debug, Clone)]
pub struct ResponseCheck {
    window: Option<Window>,
    last_ms: Option<u32>,
    gain: f32,
}

impl Default for ResponseCheck {
    fn default() -> Self {
        ResponseCheck {
            window: None,
            last_ms: None,
            gain: 1.0,
        }
    }
}

impl ResponseCheck {
    /// Forget the window (heater off, new run).
    pub fn restart(&mut self) {
        self.window = None;
        self.last_ms = None;
    }

    /// The model's gain as refined so far (measured ÷ predicted rise).
    pub fn gain(&self) -> f32 {
        self.gain
    }

    /// One period that ran at `duty` (0..=1) and ended at `temp_c`; `ambient_c` from the cold
    /// junction. [`Fault::NoHeatingResponse`] when the rise is far below the prediction.
    pub fn update(
        &mut self,
        cfg: &FirmwareConfig,
        now_ms: u32,
        temp_c: f32,
        ambient_c: f32,
        duty: f32,
    ) -> Result<(), Fault> {
        let m: &PlantModel = &cfg.plant;
        let dt_s = match self.last_ms.replace(now_ms) {
            Some(last) => now_ms.wrapping_sub(last) as f32 / 1000.0,
            None => 0.0,
        };
        let w = self.window.get_or_insert(Window {
            since_ms: now_ms,
            temp0_c: temp_c,
            predicted_k: 0.0,
        });
        let power_w = duty * m.heater_w - m.loss_w_per_k * (temp_c - ambient_c);
        w.predicted_k += power_w / m.heat_capacity_j_per_k * dt_s;
        let judge_k = f32::from(m.judge_rise_tenth_c) / 10.0;
        if w.predicted_k >= judge_k {
            let measured = temp_c - w.temp0_c;
            let predicted = w.predicted_k;
            if measured < m.min_fraction * self.gain * predicted {
                return Err(Fault::NoHeatingResponse);
            }
            let ratio = (measured / predicted).clamp(GAIN_RANGE.0, GAIN_RANGE.1);
            self.gain = 0.5 * (self.gain + ratio);
            self.window = None;
        } else if now_ms.wrapping_sub(w.since_ms) >= u32::from(cfg.limits.response_window_s) * 1000
        {
            // too little net energy to judge in this window (a hold, a cool-down): start anew
            self.window = None;
        }
        Ok(())
    }
}

/// Watches for heating while the heater is commanded off.
#[derive(Debug, Clone, Default)]
pub struct OffWatch {
    off_since_ms: Option<u32>,
    window: Option<(u32, i16)>,
}

impl OffWatch {
    /// One period; `heater_off` when no duty was applied in it. [`Fault::HeatingWhileOff`]
    /// when the temperature climbs after the settling time.
    pub fn update(
        &mut self,
        cfg: &FirmwareConfig,
        now_ms: u32,
        temp_tenth_c: i16,
        heater_off: bool,
    ) -> Result<(), Fault> {
        if !heater_off {
            *self = OffWatch::default();
            return Ok(());
        }
        let since = *self.off_since_ms.get_or_insert(now_ms);
        if now_ms.wrapping_sub(since) < cfg.off_settle_ms {
            return Ok(()); // the block may still be evening out after heating
        }
        let (start, min) = self.window.get_or_insert((now_ms, temp_tenth_c));
        *min = (*min).min(temp_tenth_c);
        if temp_tenth_c - *min >= cfg.off_rise_tenth_c {
            return Err(Fault::HeatingWhileOff);
        }
        if now_ms.wrapping_sub(*start) >= cfg.off_window_ms {
            self.window = Some((now_ms, temp_tenth_c));
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const CFG: FirmwareConfig = FirmwareConfig::REFERENCE;

    /// The reference plate heated at `duty`; `seen` maps the true temperature to the reading.
    fn run(duty: f32, seconds: u32, seen: impl Fn(f32, f32) -> f32) -> Option<u32> {
        let m = CFG.plant;
        let (mut t, amb) = (40.0f32, 22.0f32);
        let mut check = ResponseCheck::default();
        for k in 0..seconds * 10 {
            let now = k * 100;
            t += (duty * m.heater_w - m.loss_w_per_k * (t - amb)) / m.heat_capacity_j_per_k * 0.1;
            if check
                .update(&CFG, now, seen(t, now as f32 / 1000.0), amb, duty)
                .is_err()
            {
                return Some(now);
            }
        }
        None
    }

    #[test]
    fn a_block_that_heats_as_modelled_never_trips() {
        for duty in [0.05, 0.2, 0.5, 0.85] {
            assert_eq!(run(duty, 600, |t, _| t), None, "duty {duty}");
        }
        // a heater 30 % weaker than the board says still passes
        assert_eq!(run(0.85 * 0.7, 600, |t, _| t), None);
    }

    #[test]
    fn a_thermocouple_reading_warming_air_trips_within_seconds() {
        // the junction slipped off at 40 °C and reads air warming at 1.5 °C/min
        let tripped = run(0.85, 600, |_, s| 40.0 + 1.5 * s / 60.0).expect("tripped");
        // at full duty the plate rises 3.4 K/s: a few seconds means a few kelvin
        assert!(tripped <= 3_000, "after {tripped} ms");
    }

    #[test]
    fn heating_while_off_is_seen_after_the_settling_time() {
        let mut w = OffWatch::default();
        let mut temp = 800i16; // cooling from 80 °C for a while
        for k in 0..1200u32 {
            temp -= i16::from(k % 10 == 0);
            assert!(w.update(&CFG, k * 100, temp, true).is_ok());
        }
        // the switch fails on: +0.4 °C per period
        let mut k = 1200u32;
        while w.update(&CFG, k * 100, temp, true).is_ok() {
            temp += 4;
            k += 1;
            assert!(k < 1300, "never tripped");
        }
        assert!((k - 1200) * 100 <= 1_000);
    }
}
