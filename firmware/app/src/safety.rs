//! Safety interlocks, enforced every control period whatever the host has asked.
//!
//! [`Interlocks::check`] is the only place a [`Permit`] is made: it checks sensor health,
//! thermocouple faults, the temperature limits, the rise rate, a stuck reading, heating
//! response at full duty and the host heartbeat. Any failure is a [`Fault`] that the device
//! latches.

use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::{Fault, ThermoWord};

use crate::config::FirmwareConfig;
use crate::heater::Permit;

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
    unchanged_since: Option<(u32, ThermoWord)>,
    full_duty_since: Option<(u32, i16)>,
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

impl Interlocks {
    /// Fresh interlocks with the run limit at the ceiling.
    pub fn new(cfg: FirmwareConfig, now_ms: u32) -> Self {
        Interlocks {
            cfg,
            run_limit_tenth_c: cfg.ceiling_tenth_c(),
            last_host_ms: now_ms,
            rate_ref: None,
            unchanged_since: None,
            full_duty_since: None,
            last_temp_tenth_c: None,
        }
    }

    /// A valid frame arrived from the host.
    pub fn host_seen(&mut self, now_ms: u32) {
        self.last_host_ms = now_ms;
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

    /// Forget the history that the detectors use (after a cleared fault or a new run).
    pub fn restart_detectors(&mut self) {
        self.rate_ref = None;
        self.unchanged_since = None;
        self.full_duty_since = None;
    }

    /// Check every interlock for this period. `applied_duty` is the duty of the period that
    /// just ended (0..=1), `duty_cap` the cap; `heating_wanted` whether the state machine
    /// wants the heater on. Returns a permit only when heating is wanted and all pass.
    pub fn check(
        &mut self,
        now_ms: u32,
        reading: Reading,
        applied_duty: f32,
        duty_cap: f32,
        heating_wanted: bool,
    ) -> Result<Option<Permit>, Fault> {
        let word = match reading {
            Reading::BusError => return Err(Fault::SensorBus),
            Reading::Word(w) => w,
        };
        if let Some(f) = word.fault() {
            return Err(thermo_fault(f));
        }
        let temp = word.tc_tenth_c();
        self.last_temp_tenth_c = Some(temp);
        if temp > self.run_limit_tenth_c || temp > self.cfg.ceiling_tenth_c() {
            return Err(Fault::OverTemperature);
        }
        self.check_rise_rate(now_ms, temp)?;
        if heating_wanted {
            if now_ms.wrapping_sub(self.last_host_ms)
                > u32::from(self.cfg.limits.heartbeat_timeout_ms)
            {
                return Err(Fault::HeartbeatLost);
            }
            self.check_stuck(now_ms, word, applied_duty)?;
            self.check_heating_response(now_ms, temp, applied_duty, duty_cap)?;
            Ok(Some(Permit { _private: () }))
        } else {
            self.unchanged_since = None;
            self.full_duty_since = None;
            Ok(None)
        }
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

    fn check_stuck(&mut self, now_ms: u32, word: ThermoWord, duty: f32) -> Result<(), Fault> {
        if duty <= 0.0 {
            self.unchanged_since = None;
            return Ok(());
        }
        match self.unchanged_since {
            Some((since, w)) if w == word => {
                if now_ms.wrapping_sub(since) >= self.cfg.stuck_timeout_ms {
                    return Err(Fault::StuckReading);
                }
            }
            _ => self.unchanged_since = Some((now_ms, word)),
        }
        Ok(())
    }

    fn check_heating_response(
        &mut self,
        now_ms: u32,
        temp: i16,
        duty: f32,
        duty_cap: f32,
    ) -> Result<(), Fault> {
        if duty < duty_cap * 0.999 || duty <= 0.0 {
            self.full_duty_since = None;
            return Ok(());
        }
        match self.full_duty_since {
            None => self.full_duty_since = Some((now_ms, temp)),
            Some((since, temp0)) => {
                let window = u32::from(self.cfg.limits.no_rise_timeout_s) * 1000;
                if now_ms.wrapping_sub(since) >= window {
                    if temp - temp0 < self.cfg.min_rise_tenth_c {
                        return Err(Fault::NoHeatingResponse);
                    }
                    // it did respond: start a new window from here
                    self.full_duty_since = Some((now_ms, temp));
                }
            }
        }
        Ok(())
    }
}
