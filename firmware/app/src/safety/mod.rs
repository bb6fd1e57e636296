//! Safety interlocks, enforced every control period whatever the host has asked.
//!
//! [`Interlocks::check`] is the only place a [`Permit`] is made: it checks the sensor bus, the
//! converter's plausibility and fault bits, the temperature limits, the rise rate, heating
//! while commanded off, and — while heating — the host heartbeat, a stuck reading and the
//! heating response against the energy put in. Any failure is a [`Fault`] that the device
//! latches; [`latch`] says when it may be cleared and when repeated trips lock heating.

pub mod latch;
pub mod plausibility;
pub mod response;

use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::{Fault, ThermoWord};

use crate::config::FirmwareConfig;
use crate::heater::Permit;
use plausibility::Plausibility;
use response::{OffWatch, ResponseCheck};

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

/// Interlock state carried from one period to the next.
#[derive(Debug, Clone)]
pub struct Interlocks {
    cfg: FirmwareConfig,
    run_limit_tenth_c: i16,
    last_host_ms: u32,
    rate_ref: Option<(u32, i16)>,
    unchanged_since: Option<(u32, i16, f32)>,
    plausibility: Plausibility,
    response: ResponseCheck,
    off_watch: OffWatch,
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
            off_watch: OffWatch::default(),
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

    /// The heating model's gain as refined by the response check.
    pub fn response_gain(&self) -> f32 {
        self.response.gain()
    }

    /// Forget the history that the detectors use (after a cleared fault or a new run).
    pub fn restart_detectors(&mut self) {
        self.rate_ref = None;
        self.unchanged_since = None;
        self.response.restart();
    }

    /// Check every interlock for this period. `applied_duty` is the duty of the period that
    /// just ended (0..=1); `heating_wanted` whether the state machine wants the heater on.
    /// Returns a permit only when heating is wanted and all pass.
    pub fn check(
        &mut self,
        now_ms: u32,
        reading: Reading,
        applied_duty: f32,
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
        self.last_temp_tenth_c = Some(temp);
        if temp > self.run_limit_tenth_c || temp > self.cfg.ceiling_tenth_c() {
            return Err(Fault::OverTemperature);
        }
        self.check_rise_rate(now_ms, temp)?;
        self.off_watch
            .update(&self.cfg, now_ms, temp, applied_duty <= 0.0)?;
        if !heating_wanted {
            self.unchanged_since = None;
            self.response.restart();
            return Ok(None);
        }
        if now_ms.wrapping_sub(self.last_host_ms) > u32::from(self.cfg.limits.heartbeat_timeout_ms)
        {
            return Err(Fault::HeartbeatLost);
        }
        self.check_stuck(now_ms, word, applied_duty)?;
        let (temp_c, ambient_c) = (f32::from(temp) / 10.0, word.cj_c());
        self.response
            .update(&self.cfg, now_ms, temp_c, ambient_c, applied_duty)?;
        Ok(Some(Permit { _private: () }))
    }

    fn check_rise_rate(&mut self, now_ms: u32, temp: i16) -> Result<(), Fault> {
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
    /// still move: a stuck junction on a live chip) although the controller has moved the
    /// duty since: it is acting on an error it never sees corrected. A quiet reading at a
    /// settled hold, with the duty steady, is no fault.
    fn check_stuck(&mut self, now_ms: u32, word: ThermoWord, duty: f32) -> Result<(), Fault> {
        if duty <= 0.0 {
            self.unchanged_since = None;
            return Ok(());
        }
        let tc = word.tc_counts();
        match self.unchanged_since {
            Some((since, last, duty0)) if last == tc => {
                let moved = (duty - duty0).abs() >= STUCK_DUTY_MOVE;
                if moved && now_ms.wrapping_sub(since) >= self.cfg.stuck_timeout_ms {
                    return Err(Fault::StuckReading);
                }
            }
            _ => self.unchanged_since = Some((now_ms, tc, duty)),
        }
        Ok(())
    }
}
