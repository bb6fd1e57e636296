//! Identifying the fixture (`remanent calibrate fixture`): unattended once started, under the
//! device's model-free limits. The device reads a baseline, heats at a bounded duty (a first
//! look, then a step sized to take minutes) until the block has risen `rise_k` (or the time
//! is up), then cools on its own; the host fits the
//! heating rate at full duty, the cooling time constant and the thermocouple's lag
//! ([`super::fixture_fit`]). Then a hot pass: with that first identification in force the
//! device heats the block toward the plan's hot temperature and lets it cool again, and the
//! whole record gives the rate's fall with temperature too. Each value comes with its
//! uncertainty, dated in the calibration, which is sent to the device at every connection.

use std::io::{Read, Write};
use std::time::Duration;

use remanent_protocol::{Command, DeviceHello};

use super::fixture_fit::{fit, Fitted, Trace};
use super::CalibrateError;
use crate::calibration::{Calibration, FixtureCalibration, Stamp};
use crate::link::acquisition::{Acquisition, Event};
use crate::link::LinkError;

/// The first look: heat until this rise, K, or this long, s …
const PROBE_RISE_K: f64 = 3.0;
const PROBE_S: f64 = 60.0;
/// … then the main step's duty is chosen to take about this long, s.
const MAIN_STEP_S: f64 = 180.0;

/// A relay's window and half-cycle, s, if the board time-proportions.
fn relay_timing(hello: &DeviceHello) -> Option<(f64, f64)> {
    match hello.heater {
        remanent_protocol::HeaterDrive::TimeProportioning {
            window_ms,
            half_cycle_us,
        } => Some((
            f64::from(window_ms) / 1000.0,
            f64::from(half_cycle_us) / 1e6,
        )),
        remanent_protocol::HeaterDrive::Pwm { .. } => None,
    }
}

/// How well a relay delivers a duty step `d` (0..=1) on a block heating `rate` K/s at full
/// power up `rise_k`: each window's on-time rounds to whole half-cycles (±one in d·window), and
/// the step's last window may be cut short (±one window in the step's length), relative.
fn relay_error(d: f64, rate: f64, rise_k: f64, window_s: f64, half_s: f64) -> f64 {
    let rounding = half_s / (d * window_s).max(half_s);
    let step_s = rise_k / (rate * d).max(1e-9);
    let end = window_s / step_s.max(window_s);
    rounding.hypot(end)
}

/// The main step's duty, %: taking about [`MAIN_STEP_S`] on a DC switch; on a relay, the duty
/// that balances its two errors (d = √(h·rise/rate) / window), within 1 % … the first look's.
fn main_duty(plan: &Plan, rate: f64, relay: Option<(f64, f64)>, first: u8) -> f64 {
    let d = match relay {
        None => plan.rise_k / (rate * MAIN_STEP_S),
        Some((w, h)) => (h * plan.rise_k / rate).sqrt() / w,
    };
    (d * 100.0).ceil().clamp(1.0, f64::from(first))
}

/// The hot pass's top by default, °C: the highest built-in profile's peak.
pub const HOT_C: f64 = 150.0;
/// A hot pass that cannot heat this far above the first step's top is not run, K.
const HOT_SPAN_MIN_K: f64 = 30.0;

/// A relay step known worse than this (relative) is refused.
const MAX_RELAY_ERROR: f64 = 0.08;

/// The latest reading: device time, temperature.
fn last(t: &Trace) -> (f64, f64) {
    (
        t.time_s.last().copied().unwrap_or(0.0),
        t.temp_c.last().copied().unwrap_or(f64::NAN),
    )
}

/// How the identification runs.
#[derive(Debug, Clone, Copy)]
pub struct Plan {
    /// The duty step, % (at most what the device allows).
    pub duty_pct: u8,
    /// Heat until the block has risen this much, K.
    pub rise_k: f64,
    /// …or this long has passed, s.
    pub max_heat_s: f64,
    /// Then watch it cool this long, s.
    pub cool_s: f64,
    /// Baseline before heating, s.
    pub baseline_s: f64,
    /// The hot pass's top, °C (none: no hot pass, and no fall with temperature measured).
    pub hot_c: Option<f64>,
}

impl Default for Plan {
    /// 20 % (the model-free cap), 20 K, 30 min at most, 10 min of cooling, 30 s of baseline.
    fn default() -> Self {
        Plan {
            duty_pct: 20,
            rise_k: 20.0,
            max_heat_s: 1800.0,
            cool_s: 600.0,
            baseline_s: 30.0,
            hot_c: Some(HOT_C),
        }
    }
}

/// Where an identification is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Phase {
    /// Reading the baseline.
    Baseline,
    /// Heating at the step's duty.
    Heating,
    /// Cooling on its own.
    Cooling,
}

/// Progress: the phase, device time s, and the reading °C.
pub trait Progress {
    /// A reading.
    fn at(&mut self, phase: Phase, time_s: f64, temp_c: f64);
}

struct Run<P> {
    acq: Acquisition<P>,
    trace: Trace,
}

impl<P: Read + Write> Run<P> {
    /// Read until `done(time, temp)` holds; a fault or a refusal ends it with the reason.
    fn read_until(
        &mut self,
        phase: Phase,
        progress: &mut dyn Progress,
        mut done: impl FnMut(f64, f64) -> bool,
    ) -> Result<(), CalibrateError> {
        loop {
            for e in self.acq.poll()?.events {
                match e {
                    Event::Sample { placed, values, .. } => {
                        let Some(temp) = values.temp_c else {
                            return Err(CalibrateError::Unusable(
                                "the thermocouple reads a fault: check it before identifying the fixture".into(),
                            ));
                        };
                        let t = placed.device_time_s;
                        self.trace.time_s.push(t);
                        self.trace.temp_c.push(temp);
                        self.trace.duty.push(f64::from(placed.sample.duty) / 255.0);
                        progress.at(phase, t, temp);
                        if done(t, temp) {
                            return Ok(());
                        }
                    }
                    Event::Fault(f) => {
                        return Err(CalibrateError::Unusable(format!(
                            "the device tripped during the identification: {}",
                            crate::link::words::describe_fault(f.fault)
                        )))
                    }
                    Event::Reply { result: Err(r), .. } => {
                        return Err(LinkError::Refused {
                            command: "the identification's step",
                            reason: r,
                        }
                        .into())
                    }
                    _ => {}
                }
            }
        }
    }
}

impl<P: Read + Write> Run<P> {
    /// The hot pass: the first step's identification given to the device (which then heats
    /// under it, not under the model-free limits), a duty whose equilibrium lies a third above
    /// the top, heating until the top, then cooling on its own. False when the fixture cannot
    /// get [`HOT_SPAN_MIN_K`] above the first step's top within the device's duty cap.
    fn hot_pass(
        &mut self,
        hot_c: f64,
        low: &Fitted,
        plan: &Plan,
        progress: &mut dyn Progress,
    ) -> Result<bool, CalibrateError> {
        self.acq
            .send(Command::Fixture(calibration_of(low).model()))?;
        let hello = self.acq.rehandshake(Duration::from_secs(10))?;
        let cap = f64::from(hello.limits.duty_cap_pct) / 100.0;
        let ceiling_c = remanent_physics::wire::c_from_tenths(hello.limits.ceiling_tenth_c);
        let (a, tau, ambient_c) = (low.rate_k_per_s.0, low.cooling_tau_s.0, low.ambient_c);
        let first_top_c = self.trace.temp_c.iter().copied().fold(f64::MIN, f64::max);
        let wanted_c = hot_c.min(ceiling_c - 20.0);
        let duty = ((wanted_c - ambient_c) * 4.0 / 3.0 / (a * tau)).min(cap);
        // a quarter of the way short of what that duty could reach, for a heater that falls
        let top_c = wanted_c.min(ambient_c + 0.75 * duty * a * tau);
        if top_c - first_top_c < HOT_SPAN_MIN_K || duty < 0.01 {
            return Ok(false);
        }
        self.acq.send(Command::Duty {
            duty_pct: (duty * 100.0).floor() as u8,
            limit_tenth_c: remanent_physics::wire::tenths_from_c(top_c + 15.0),
        })?;
        let (started, _) = last(&self.trace);
        self.read_until(Phase::Heating, progress, |t, temp| {
            temp >= top_c || t - started >= plan.max_heat_s
        })?;
        self.acq.send(Command::Stop)?;
        let (stopped, _) = last(&self.trace);
        self.read_until(Phase::Cooling, progress, |t, _| t - stopped >= plan.cool_s)?;
        Ok(true)
    }
}

/// Identify the fixture on the device at `port` (`cal` converts the readings); the
/// identification and the fit behind it.
pub fn identify<P: Read + Write>(
    port: P,
    cal: &Calibration,
    plan: &Plan,
    progress: &mut dyn Progress,
) -> Result<(FixtureCalibration, Fitted), CalibrateError> {
    // the identification is what is being found: none is sent
    let bare = Calibration {
        fixture: None,
        ..*cal
    };
    let (acq, hello, _) = Acquisition::connect(port, bare, Duration::from_secs(30))?;
    if hello.latched.is_some() {
        return Err(CalibrateError::Unusable(
            "a fault is latched: clear it (`remanent clear-fault`) before identifying the fixture"
                .into(),
        ));
    }
    let mut run = Run {
        acq,
        trace: Trace::default(),
    };
    let mut t0 = None;
    run.read_until(Phase::Baseline, progress, |t, _| {
        t - *t0.get_or_insert(t) >= plan.baseline_s
    })?;
    let n = run.trace.temp_c.len() as f64;
    let ambient = run.trace.temp_c.iter().sum::<f64>() / n;
    let (duty, limit_c) = step(&hello, plan, ambient);
    run.acq.send(Command::Duty {
        duty_pct: duty,
        limit_tenth_c: remanent_physics::wire::tenths_from_c(limit_c),
    })?;
    let started = run.trace.time_s.last().copied().unwrap_or(0.0);
    let target = (ambient + plan.rise_k).min(limit_c - 3.0);
    // a first look at how fast the block heats: the main step's duty then makes it last
    // minutes, many time-proportioning windows, so a part-window at its end weighs little
    run.read_until(Phase::Heating, progress, |t, temp| {
        temp >= ambient + PROBE_RISE_K || t - started >= PROBE_S.min(plan.max_heat_s)
    })?;
    let (t1, temp1) = last(&run.trace);
    let rate = (temp1 - ambient).max(0.01) / (f64::from(duty) / 100.0 * (t1 - started).max(0.1));
    let relay = relay_timing(&hello);
    let main = main_duty(plan, rate, relay, duty);
    if let Some((window_s, half_s)) = relay {
        let err = relay_error(main / 100.0, rate, plan.rise_k, window_s, half_s);
        if err > MAX_RELAY_ERROR {
            run.acq.send(Command::Stop)?;
            return Err(CalibrateError::Unusable(format!(
                "this block heats about {rate:.1} K/s at full power: on the board's {window_s:.1} s relay window a duty step would be known only to ±{:.0} % (whole mains half-cycles, and a part-window at its end): shorten the window or drive the heater with a DC switch (hardware-notes/heater-drive.md)",
                err * 100.0
            )));
        }
    }
    if (main as u8) < duty {
        run.acq.send(Command::Duty {
            duty_pct: main as u8,
            limit_tenth_c: remanent_physics::wire::tenths_from_c(limit_c),
        })?;
    }
    run.read_until(Phase::Heating, progress, |t, temp| {
        temp >= target || t - started >= plan.max_heat_s
    })?;
    run.acq.send(Command::Stop)?;
    let stopped = run.trace.time_s.last().copied().unwrap_or(started);
    let peak = run.trace.temp_c.iter().copied().fold(f64::MIN, f64::max);
    if peak - ambient < 5.0 {
        return Err(CalibrateError::Unusable(format!(
            "the block rose only {:.1} K in {:.0} min at {duty} %: is the heater connected and switched?",
            peak - ambient,
            (stopped - started) / 60.0
        )));
    }
    run.read_until(Phase::Cooling, progress, |t, _| t - stopped >= plan.cool_s)?;
    // a relay on time-proportioning: heat enters up to half a window early
    let timing_s = relay.map_or(0.0, |(window_s, _)| window_s / 2.0);
    let low = fit(&run.trace, timing_s, false).map_err(CalibrateError::Unusable)?;
    let hot = match plan.hot_c {
        Some(hot_c) => run.hot_pass(hot_c, &low, plan, progress)?,
        None => false,
    };
    let mut fitted = if hot {
        fit(&run.trace, timing_s, true).map_err(CalibrateError::Unusable)?
    } else {
        low
    };
    if let Some((window_s, half_s)) = relay {
        // what the relay delivered is known as well as its half-cycles allow (rectangular)
        let (a, u) = fitted.rate_k_per_s;
        let err = relay_error(main / 100.0, a, plan.rise_k, window_s, half_s);
        fitted.rate_k_per_s.1 = u.hypot(a * err / 3f64.sqrt());
    }
    Ok((calibration_of(&fitted), fitted))
}

/// The step's duty (the plan's, within the device's cap) and its limit: the rise and a margin,
/// under the device's ceiling.
fn step(hello: &DeviceHello, plan: &Plan, ambient_c: f64) -> (u8, f64) {
    let duty = plan.duty_pct.min(hello.limits.duty_cap_pct).max(1);
    let ceiling_c = remanent_physics::wire::c_from_tenths(hello.limits.ceiling_tenth_c);
    (duty, (ambient_c + plan.rise_k + 10.0).min(ceiling_c - 1.0))
}

/// The calibration's entry for a fit.
pub fn calibration_of(f: &Fitted) -> FixtureCalibration {
    FixtureCalibration {
        rate_k_per_s: f.rate_k_per_s.0,
        rate_u_k_per_s: f.rate_k_per_s.1,
        cooling_tau_s: f.cooling_tau_s.0,
        cooling_tau_u_s: f.cooling_tau_s.1,
        thermocouple_lag_s: f.lag_s.0,
        thermocouple_lag_u_s: f.lag_s.1,
        rate_fall_per_k: f.rate_fall_per_k.0,
        rate_fall_u_per_k: f.rate_fall_per_k.1,
    }
}

/// Keep `found` in `cal`, dated now.
pub fn keep(cal: &mut Calibration, found: FixtureCalibration) {
    cal.fixture = Some(found);
    cal.dates.fixture = Some(Stamp::now());
}
