//! Does the fixture heat as the energy put in says it must — no less, and no more?
//!
//! [`ResponseCheck`] integrates the energy balance of the *weakest* fixture the identification
//! allows (lowest heater gain, highest loss, the loss taken from the measured temperature every
//! period so the prediction follows the measurement), seen through the *longest* thermocouple
//! lag allowed, and trips when the measured rise falls far below even that: a heater or a
//! thermocouple that has come off the block is caught within a couple of kelvin of predicted
//! rise. [`ExcessWatch`] trips when the block rises by more than the *strongest* allowed fixture
//! could from the duty of the recent past: a switch that failed on, during a hold or while idle.
//! Neither is reset by commands: their evidence runs on through Stop, Manual and Start.

use heapless::Deque;
use remanent_protocol::Fault;

use crate::config::FirmwareConfig;

#[derive(Debug, Clone, Copy)]
struct Window {
    since_ms: u32,
    temp0_c: f32,
    predicted_k: f32,
    seen_k: f32,
}

/// The heating-response interlock's state.
#[derive(Debug, Clone, Default)]
pub struct ResponseCheck {
    window: Option<Window>,
    last_ms: Option<u32>,
}

/// Seconds since the period before (none for the first), and `now_ms` kept for the next.
fn step_s(last_ms: &mut Option<u32>, now_ms: u32) -> f32 {
    last_ms
        .replace(now_ms)
        .map_or(0.0, |last| now_ms.wrapping_sub(last) as f32 / 1000.0)
}

/// A rise with no duty at all on an idle fixture within the ambient band: what a hand-warm
/// part placed on it does, which no switch failing on stays within.
fn warm_part_placed(
    cfg: &FirmwareConfig,
    duty_s: f32,
    temp_tenth_c: i16,
    ambient_tenth_c: i16,
) -> bool {
    duty_s <= 0.0 && temp_tenth_c <= ambient_tenth_c.saturating_add(cfg.ambient_band_tenth_c)
}

/// How long a window may run before it is judged or given up, ms: the configured window, or
/// three times what the weakest fixture at the duty cap, losing the most it may at the run
/// limit `limit_c` above `ambient_c`, needs to show the judged rise through the longest lag,
/// whichever is longer (at most an hour: a fixture that can barely reach its limit is judged
/// as the reading falls away from it, which lowers the loss the prediction carries).
pub fn window_ms(cfg: &FirmwareConfig, limit_c: f32, ambient_c: f32) -> u32 {
    let m = &cfg.plant;
    let cap = cfg.duty_cap().max(0.01);
    let gross_w = m.gain_min * cap * m.heater_w_at(limit_c);
    let loss_w = m.loss_max_factor * m.loss_w_per_k * (limit_c - ambient_c).max(0.0);
    let net_w = (gross_w - loss_w).max(0.1 * gross_w);
    let rate = (net_w / m.heat_capacity_j_per_k).max(1e-4);
    let need_s = f32::from(m.judge_rise_tenth_c) / 10.0 / rate + m.max_lag_s;
    let configured = u32::from(cfg.limits.response_window_s) * 1000;
    configured.max(((3.0 * need_s).min(3600.0) * 1000.0) as u32)
}

impl ResponseCheck {
    /// Forget the window (only after a cleared fault: the block is then near ambient).
    pub fn restart(&mut self) {
        self.window = None;
        self.last_ms = None;
    }

    /// One period that ran at `duty` (0..=1) and ended at `temp_c`; `ambient_c` from the cold
    /// junction. [`Fault::NoHeatingResponse`] when the rise is far below the weakest fixture's.
    #[allow(clippy::too_many_arguments)]
    pub fn update(
        &mut self,
        cfg: &FirmwareConfig,
        limit_c: f32,
        now_ms: u32,
        temp_c: f32,
        ambient_c: f32,
        duty: f32,
    ) -> Result<(), Fault> {
        if !cfg.identified {
            // no model to judge against: the model-free limits bound the heating instead
            self.restart();
            return Ok(());
        }
        let m = &cfg.plant;
        let dt_s = step_s(&mut self.last_ms, now_ms);
        let w = self.window.get_or_insert(Window {
            since_ms: now_ms,
            temp0_c: temp_c,
            predicted_k: 0.0,
            seen_k: 0.0,
        });
        let loss_w = m.loss_max_factor * m.loss_w_per_k * (temp_c - ambient_c).max(0.0);
        let power_w = m.gain_min * duty * m.heater_w_at(temp_c) - loss_w;
        w.predicted_k += power_w / m.heat_capacity_j_per_k * dt_s;
        if w.predicted_k <= 0.0 {
            // the weakest fixture would not be warming (a hold, a cool-down): no evidence
            // either way yet, so the window starts from here
            *w = Window {
                since_ms: now_ms,
                temp0_c: temp_c,
                predicted_k: 0.0,
                seen_k: 0.0,
            };
            return Ok(());
        }
        // the reading follows the block through at most the longest lag (backward Euler)
        w.seen_k += (w.predicted_k - w.seen_k) * dt_s / (m.max_lag_s + dt_s).max(1e-6);
        let judge_k = f32::from(m.judge_rise_tenth_c) / 10.0;
        if w.seen_k >= judge_k {
            let measured = temp_c - w.temp0_c;
            if measured < m.min_fraction * w.seen_k {
                return Err(Fault::NoHeatingResponse);
            }
            self.window = None;
        } else if now_ms.wrapping_sub(w.since_ms) >= window_ms(cfg, limit_c, ambient_c) {
            // too little net energy to judge in this window (a hold, a cool-down): start anew
            self.window = None;
        }
        Ok(())
    }
}

/// Most buckets the excess watch keeps.
const BUCKETS: usize = 32;

#[derive(Debug, Clone, Copy)]
struct Bucket {
    duty_s: f32,
    end_tenth_c: i16,
}

/// Coarse buckets of the long energy balance, and their length, ms.
const LONG_BUCKETS: usize = 16;
const LONG_BUCKET_MS: u32 = 15_000;

#[derive(Debug, Clone, Copy, Default)]
struct LongBucket {
    duty_s: f32,
    above_k_s: f32,
    start_tenth_c: i16,
}

/// Watches for heating the duty cannot explain: over a short window (a switch failed on at
/// full power) and over up to four minutes of energy balance (a failed switch whose power the
/// enable line keeps cutting, so the block only holds where the duty alone would let it cool).
#[derive(Debug, Clone, Default)]
pub struct ExcessWatch {
    buckets: Deque<Bucket, BUCKETS>,
    open: Option<(u32, f32)>,
    last_ms: Option<u32>,
    long: Deque<LongBucket, LONG_BUCKETS>,
    long_open: Option<(u32, LongBucket)>,
}

/// The watch's geometry for a fixture: bucket length, buckets in the judged window, buckets
/// looked back over for the duty (the window and the lag allowance).
pub fn excess_geometry(cfg: &FirmwareConfig) -> (u32, usize, usize) {
    let allow_k = f32::from(cfg.excess_allowance_tenth_c) / 10.0;
    // long enough for the fixture at full power to rise four allowances
    let rate = cfg.plant.full_rate_k_per_s().max(1e-4);
    let w_ms = cfg
        .excess_window_min_ms
        .max((4.0 * allow_k / rate * 1000.0) as u32);
    let bucket_ms = (w_ms / 8).max(250);
    let n_w = (w_ms / bucket_ms).max(1) as usize;
    // heat put in shows through the thermocouple within four of its longest lags
    let lag_ms = ((4.0 * cfg.plant.max_lag_s * 1000.0) as u32).max(cfg.lag_allowance_ms);
    let n_lag = lag_ms.div_ceil(bucket_ms) as usize;
    (bucket_ms, n_w, (n_w + n_lag).min(BUCKETS))
}

impl ExcessWatch {
    /// One period that ran at `duty` and ended at `temp_tenth_c`; `ambient_tenth_c` from the
    /// cold junction. [`Fault::HeatingWhileOff`] when the block rose more than the strongest
    /// allowed fixture could from the duty of the window and the lag allowance before it.
    pub fn update(
        &mut self,
        cfg: &FirmwareConfig,
        now_ms: u32,
        temp_tenth_c: i16,
        ambient_tenth_c: i16,
        duty: f32,
    ) -> Result<(), Fault> {
        let (bucket_ms, n_w, n_total) = excess_geometry(cfg);
        let dt_s = step_s(&mut self.last_ms, now_ms);
        self.long_balance(cfg, now_ms, temp_tenth_c, ambient_tenth_c, duty, dt_s)?;
        let (start, acc) = self.open.get_or_insert((now_ms, 0.0));
        *acc += duty.max(0.0) * dt_s;
        if now_ms.wrapping_sub(*start) >= bucket_ms {
            let b = Bucket {
                duty_s: *acc,
                end_tenth_c: temp_tenth_c,
            };
            self.open = None;
            while self.buckets.len() >= n_total.max(n_w + 1) || self.buckets.is_full() {
                self.buckets.pop_front();
            }
            let _ = self.buckets.push_back(b);
        }
        if self.buckets.len() <= n_w {
            return Ok(());
        }
        let then = self
            .buckets
            .iter()
            .rev()
            .nth(n_w)
            .map_or(temp_tenth_c, |b| b.end_tenth_c);
        let rise_k = f32::from(temp_tenth_c - then) / 10.0;
        let duty_s =
            self.buckets.iter().map(|b| b.duty_s).sum::<f32>() + self.open.map_or(0.0, |o| o.1);
        let m = &cfg.plant;
        // the least the block can lose meanwhile is taken off: at a hold the duty only
        // replaces the loss
        let window_s = (n_w as u32 * bucket_ms) as f32 / 1000.0;
        let above_k = (f32::from(then) - f32::from(ambient_tenth_c)).max(0.0) / 10.0;
        let (heat_per_duty_s, least_loss_k) = if cfg.identified {
            let loss = m.loss_w_per_k / m.loss_max_factor * above_k / m.heat_capacity_j_per_k;
            (m.gain_max * m.full_rate_k_per_s(), loss * window_s)
        } else {
            // unidentified: any duty explains any rise; only heat with none at all is judged
            (f32::INFINITY, 0.0)
        };
        let heat_k = if duty_s > 0.0 {
            heat_per_duty_s * duty_s
        } else {
            0.0
        };
        let budget_k = heat_k - least_loss_k + f32::from(cfg.excess_allowance_tenth_c) / 10.0;
        if rise_k <= budget_k {
            return Ok(());
        }
        if warm_part_placed(cfg, duty_s, temp_tenth_c, ambient_tenth_c) {
            return Ok(());
        }
        Err(Fault::HeatingWhileOff)
    }

    /// The long balance: over the coarse buckets kept (one to four minutes), the reading may
    /// rise by no more than the strongest fixture's heating from the duty, less the least it
    /// can lose at the temperatures it was at, plus what a lagging thermocouple still owed at
    /// the start (the longest lag at the duty cap) and the allowance.
    fn long_balance(
        &mut self,
        cfg: &FirmwareConfig,
        now_ms: u32,
        temp_tenth_c: i16,
        ambient_tenth_c: i16,
        duty: f32,
        dt_s: f32,
    ) -> Result<(), Fault> {
        let above_k = (f32::from(temp_tenth_c) - f32::from(ambient_tenth_c)).max(0.0) / 10.0;
        let (start, b) = self.long_open.get_or_insert((
            now_ms,
            LongBucket {
                start_tenth_c: temp_tenth_c,
                ..LongBucket::default()
            },
        ));
        b.duty_s += duty.max(0.0) * dt_s;
        b.above_k_s += above_k * dt_s;
        if now_ms.wrapping_sub(*start) >= LONG_BUCKET_MS {
            if self.long.is_full() {
                self.long.pop_front();
            }
            let _ = self.long.push_back(*b);
            self.long_open = None;
        }
        let Some(first) = self.long.front() else {
            return Ok(());
        };
        if self.long.len() < 4 {
            return Ok(());
        }
        let m = &cfg.plant;
        // the open bucket too: the rise is judged up to now, so is the heat put in
        let open = self.long_open.map(|(_, b)| b).unwrap_or_default();
        let duty_s = self.long.iter().map(|b| b.duty_s).sum::<f32>() + open.duty_s;
        if !cfg.identified && duty_s > 0.0 {
            return Ok(()); // no model: only a rise with no duty at all is judged
        }
        let above_k_s = self.long.iter().map(|b| b.above_k_s).sum::<f32>() + open.above_k_s;
        let heat_k = m.gain_max * m.full_rate_k_per_s() * duty_s;
        let loss_k = if cfg.identified {
            m.loss_w_per_k / m.loss_max_factor / m.heat_capacity_j_per_k * above_k_s
        } else {
            0.0
        };
        let owed_k = m.max_lag_s * m.gain_max * m.full_rate_k_per_s() * cfg.duty_cap();
        let allow_k = f32::from(cfg.excess_allowance_tenth_c) / 10.0;
        let rise_k = f32::from(temp_tenth_c - first.start_tenth_c) / 10.0;
        let placed = warm_part_placed(cfg, duty_s, temp_tenth_c, ambient_tenth_c);
        if rise_k > heat_k - loss_k + owed_k + allow_k && !placed {
            return Err(Fault::HeatingWhileOff);
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
                .update(&CFG, 350.0, now, seen(t, now as f32 / 1000.0), amb, duty)
                .is_err()
            {
                return Some(now);
            }
        }
        None
    }

    #[test]
    fn a_fast_block_heating_after_minutes_idle_is_within_the_long_balance() {
        // the reference plate idles at ambient for five minutes, then heats at half duty
        // (2 K/s): the heat of the bucket still open explains the rise it shows
        let m = CFG.plant;
        let (mut t, amb) = (22.0f32, 22.0f32);
        let mut watch = ExcessWatch::default();
        for k in 0..(300 + 40) * 10 {
            let now = k * 100;
            let duty = if k >= 3000 { 0.5 } else { 0.0 };
            t += (duty * m.heater_w - m.loss_w_per_k * (t - amb)) / m.heat_capacity_j_per_k * 0.1;
            let r = watch.update(&CFG, now, (t * 10.0) as i16, (amb * 10.0) as i16, duty);
            assert_eq!(
                r,
                Ok(()),
                "tripped at {:.1} s, {t:.1} °C",
                now as f32 / 1000.0
            );
        }
        assert!(t > 90.0, "it heated: {t:.1} °C");
    }

    #[test]
    fn a_block_within_the_bounds_never_trips_and_a_detached_junction_does_at_once() {
        for duty in [0.05, 0.2, 0.5, 0.85] {
            assert_eq!(run(duty, 600, |t, _| t), None, "duty {duty}");
        }
        // the junction slipped off at 40 °C and reads air warming at 1.5 °C/min: at full duty
        // the weakest allowed plate would have shown 2 K within a few seconds
        let tripped = run(0.85, 600, |_, s| 40.0 + 1.5 * s / 60.0).expect("tripped");
        assert!(tripped <= 4_000, "after {tripped} ms");
    }

    #[test]
    fn a_hand_warm_part_on_an_idle_fixture_is_not_heating_but_a_switch_failed_on_is() {
        let amb = 250i16;
        let mut w = ExcessWatch::default();
        // a part at 34 °C placed at 20 s: the reading climbs toward it with τ 8 s (3 K in
        // the first 10 s)
        let mut r = 250.0f32;
        for k in 0..1200u32 {
            if k >= 200 {
                r += (340.0 - r) * 0.1 / 8.0;
            }
            let res = w.update(&CFG, k * 100, r as i16, amb, 0.0);
            assert_eq!(res, Ok(()), "at {} s", k / 10);
        }
        // the switch fails on: the plate climbs at 4 K/s with no duty given
        let mut t = 340.0f32;
        let mut k = 1200u32;
        while w.update(&CFG, k * 100, t as i16, amb, 0.0).is_ok() {
            t += 4.0;
            k += 1;
            assert!(k < 1400, "never tripped");
        }
        assert!(t < 250.0 + 150.0 + 100.0, "tripped at {} °C", t / 10.0);
    }
}
