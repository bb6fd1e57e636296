//! Safety interlocks, enforced every control period whatever the host has asked.
//!
//! [`Interlocks::check`] is the only place a [`Permit`] is made: it checks the sensor bus, the
//! converter's plausibility and fault bits, the temperature limits, the rise rate (over a
//! second, and a jump within one period), the energy balances of [`response`] — too little
//! heating for the weakest fixture the identification allows, more than the strongest could
//! give — every period whether heating or not, and while heating the host heartbeat and a
//! stuck reading. No command resets that evidence: only a cleared fault does, and clearing
//! needs the fixture near ambient. Any failure is a [`Fault`] that the device latches;
//! [`latch`] says when it may be cleared and when repeated trips lock heating.

pub mod latch;
pub mod plausibility;
pub mod response;

use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::{Fault, ThermoWord};

use crate::config::FirmwareConfig;
use crate::heater::Permit;
use plausibility::Plausibility;
use response::{ExcessWatch, ResponseCheck};

/// A duty change (fraction of full power) that shows the controller acting on the reading.
const STUCK_DUTY_MOVE: f32 = 0.05;

/// One control period's thermocouple reading.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reading {
    /// The converter answered with this word.
    Word(ThermoWord),
    /// A bus transaction failed.
    BusError,
}

/// Since when the thermocouple's counts have not changed, and what the duty did meanwhile.
#[derive(Debug, Clone, Copy)]
struct Unchanged {
    since_ms: u32,
    counts: i16,
    duty0: f32,
    duty_sum: f32,
    periods: u32,
}

/// Interlock state carried from one period to the next.
#[derive(Debug, Clone)]
pub struct Interlocks {
    cfg: FirmwareConfig,
    run_limit_tenth_c: i16,
    last_host_ms: u32,
    rate_ref: Option<(u32, i16)>,
    unchanged_since: Option<Unchanged>,
    plausibility: Plausibility,
    response: ResponseCheck,
    excess: ExcessWatch,
    last_temp_tenth_c: Option<i16>,
}

/// Maps a converter fault to the interlock fault.
pub fn thermo_fault(f: ThermoFault) -> Fault {
    match f {
        ThermoFault::Open => Fault::ThermocoupleOpen,
        ThermoFault::ShortToGnd => Fault::ThermocoupleShortGnd,
        ThermoFault::ShortToVcc => Fault::ThermocoupleShortVcc,
    }
}

/// The temperature a word may be trusted for, or the fault it shows.
pub fn judge_word(cfg: &FirmwareConfig, word: ThermoWord) -> Result<i16, Fault> {
    if !plausibility::word_plausible(&cfg.plausible, word) {
        return Err(Fault::ConverterImplausible);
    }
    match word.fault() {
        Some(f) => Err(thermo_fault(f)),
        None => Ok(word.tc_tenth_c()),
    }
}

impl Interlocks {
    /// Fresh interlocks with the run limit at the ceiling.
    pub fn new(cfg: FirmwareConfig, now_ms: u32) -> Self {
        Interlocks {
            cfg,
            run_limit_tenth_c: cfg.ceiling_tenth_c(),
            last_host_ms: now_ms,
            rate_ref: None,
            unchanged_since: None,
            plausibility: Plausibility::default(),
            response: ResponseCheck::default(),
            excess: ExcessWatch::default(),
            last_temp_tenth_c: None,
        }
    }

    /// A valid frame arrived from the host.
    pub fn host_seen(&mut self, now_ms: u32) {
        self.last_host_ms = now_ms;
    }

    /// When the host's last valid frame arrived, ms.
    pub fn host_last_seen_ms(&self) -> u32 {
        self.last_host_ms
    }

    /// Take a new configuration (the host's identification of the fixture): the evidence
    /// gathered so far is kept.
    pub fn set_config(&mut self, cfg: FirmwareConfig) {
        self.cfg = cfg;
        self.run_limit_tenth_c = self.run_limit_tenth_c.min(cfg.ceiling_tenth_c());
    }

    /// Set the run's own limit (already checked to be at most the ceiling).
    pub fn set_run_limit(&mut self, limit_tenth_c: i16) {
        self.run_limit_tenth_c = limit_tenth_c.min(self.cfg.ceiling_tenth_c());
    }

    /// The limit in force: the run's, never above the ceiling.
    pub fn run_limit_tenth_c(&self) -> i16 {
        self.run_limit_tenth_c
    }

    /// Last valid thermocouple temperature, 0.1 °C.
    pub fn last_temp_tenth_c(&self) -> Option<i16> {
        self.last_temp_tenth_c
    }

    /// Forget the history that the detectors use: only after a fault was cleared, which needs
    /// the fixture shown near ambient. No command that starts or stops heating calls this, so
    /// no sequence of commands talks its way past the evidence.
    pub fn restart_detectors(&mut self) {
        self.rate_ref = None;
        self.unchanged_since = None;
        self.response.restart();
        self.excess = ExcessWatch::default();
    }

    /// Check every interlock for this period. `applied_duty` is what the heater got in the
    /// period that just ended (0..=1: its whole half-cycles when time-proportioning),
    /// `commanded_duty` what the controller asked; `heating_wanted` whether the state machine
    /// wants the heater on. Returns a permit only when heating is wanted and all pass.
    pub fn check(
        &mut self,
        now_ms: u32,
        reading: Reading,
        (applied_duty, commanded_duty): (f32, f32),
        heating_wanted: bool,
    ) -> Result<Option<Permit>, Fault> {
        let word = match reading {
            Reading::BusError => return Err(Fault::SensorBus),
            Reading::Word(w) => w,
        };
        let heating = heating_wanted || applied_duty > 0.0;
        if !self
            .plausibility
            .check(&self.cfg.plausible, now_ms, word, heating)
        {
            return Err(Fault::ConverterImplausible);
        }
        let temp = judge_word(&self.cfg, word)?;
        let rate = self.check_rise_rate(now_ms, temp);
        self.last_temp_tenth_c = Some(temp);
        if temp > self.run_limit_tenth_c || temp > self.cfg.ceiling_tenth_c() {
            return Err(Fault::OverTemperature);
        }
        rate?;
        // the energy balances run every period, heating or not: their evidence is not reset
        // by a Stop or a new setpoint
        let ambient_tenth_c = word.cj_tenth_c();
        self.excess
            .update(&self.cfg, now_ms, temp, ambient_tenth_c, applied_duty)?;
        let (temp_c, ambient_c) = (f32::from(temp) / 10.0, word.cj_c());
        let limit_c = f32::from(self.run_limit_tenth_c) / 10.0;
        self.response
            .update(&self.cfg, limit_c, now_ms, temp_c, ambient_c, applied_duty)?;
        if !heating_wanted {
            self.unchanged_since = None;
            return Ok(None);
        }
        if now_ms.wrapping_sub(self.last_host_ms) > u32::from(self.cfg.limits.heartbeat_timeout_ms)
        {
            return Err(Fault::HeartbeatLost);
        }
        self.check_stuck(now_ms, word, commanded_duty)?;
        Ok(Some(Permit { _private: () }))
    }

    fn check_rise_rate(&mut self, now_ms: u32, temp: i16) -> Result<(), Fault> {
        // a jump of more than a second's worth within one period is no block heating
        if let Some(last) = self.last_temp_tenth_c {
            if i32::from(temp) - i32::from(last) > i32::from(self.cfg.limits.max_rise_tenth_c_per_s)
            {
                return Err(Fault::RiseTooFast);
            }
        }
        match self.rate_ref {
            None => self.rate_ref = Some((now_ms, temp)),
            Some((t0, temp0)) => {
                let dt = now_ms.wrapping_sub(t0);
                if dt >= 1000 {
                    let rise = i32::from(temp) - i32::from(temp0);
                    let max = i32::from(self.cfg.limits.max_rise_tenth_c_per_s) * dt as i32 / 1000;
                    self.rate_ref = Some((now_ms, temp));
                    if rise > max {
                        return Err(Fault::RiseTooFast);
                    }
                }
            }
        }
        Ok(())
    }

    /// The thermocouple's own reading unchanged while heating (the cold-junction bits may
    /// still move: a stuck junction on a live chip) although the controller's duty, on
    /// average since the reading froze, has moved away from where it was: it is acting on an
    /// error it never sees corrected. A quiet reading at a settled hold, the duty jittering
    /// about its level, is no fault.
    fn check_stuck(&mut self, now_ms: u32, word: ThermoWord, duty: f32) -> Result<(), Fault> {
        let tc = word.tc_counts();
        match &mut self.unchanged_since {
            Some(s) if s.counts == tc => {
                s.duty_sum += duty;
                s.periods += 1;
                let mean = s.duty_sum / s.periods as f32;
                let moved = (mean - s.duty0).abs() >= STUCK_DUTY_MOVE;
                if moved && now_ms.wrapping_sub(s.since_ms) >= self.cfg.stuck_timeout_ms {
                    return Err(Fault::StuckReading);
                }
            }
            _ => {
                self.unchanged_since = Some(Unchanged {
                    since_ms: now_ms,
                    counts: tc,
                    duty0: duty,
                    duty_sum: 0.0,
                    periods: 0,
                })
            }
        }
        Ok(())
    }
}
