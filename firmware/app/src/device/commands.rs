//! The device's answers to host commands: handshake, runs, sampling settings, clearing a
//! latched fault and drills. Every refusal names its reason; nothing is silently clamped.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use remanent_protocol::{
    Ack, Command, DeviceHello, DeviceMsg, Drill, FixtureModel, HostMsg, Label, Profile, Refusal,
    RefuseReason, SafetyLimits, SamplingConfig, SensorSetup, VERSION,
};

use super::{Device, Mode, FIRMWARE_VERSION};
use crate::config::Identified;
use crate::log::{fw_info, fw_warn};
use crate::profile::ProfileRunner;
use crate::safety::{judge_word, latch};
use crate::sampler::{OVERSAMPLE_RANGE, PERIOD_RANGE_MS};
use crate::traits::{Adc, AdcInput, Thermocouple};

/// Time one sample needs beyond its conversions (the thermocouple read, the loop), µs.
const SAMPLE_OVERHEAD_US: u32 = 1_000;

impl<A, T, P, O> Device<A, T, P, O>
where
    A: Adc,
    T: Thermocouple,
    P: SetDutyCycle,
    O: OutputPin,
{
    fn hello(&self) -> DeviceHello {
        DeviceHello {
            version: VERSION,
            firmware: FIRMWARE_VERSION,
            board: Label::new(self.board.name),
            sensors: SensorSetup {
                hall_full_scale_uv: self.adc.full_scale_uv(AdcInput::Hall),
                probe_full_scale_uv: self.adc.full_scale_uv(AdcInput::ProbeThermistor),
                supply_mv: self.board.supply_mv,
                ntc_series_ohm: self.board.ntc_series_ohm,
                thermo: self.tc.kind(),
                period_ms: self.sampler.period_ms(),
                oversample: self.sampler.oversample(),
            },
            limits: SafetyLimits::from(self.cfg),
            heater: self.heater.drive_kind(),
            boot: self.boot,
            latched: match self.mode {
                Mode::Faulted(f) => Some(f),
                _ => None,
            },
        }
    }

    pub(super) fn handle(&mut self, now_ms: u32, msg: HostMsg) {
        let id = msg.id;
        if let Command::Hello(version) = msg.command {
            if version != VERSION {
                self.refuse(id, RefuseReason::VersionMismatch(VERSION));
                return;
            }
            if !self.handshaken {
                // the host's record starts here: first slot one period from now
                let (period, oversample) = (self.sampler.period_ms(), self.sampler.oversample());
                let first = now_ms.wrapping_add(u32::from(period));
                self.sampler.reconfigure(first, period, oversample);
            }
            self.handshaken = true;
            self.interlocks.host_seen(now_ms);
            let hello = self.hello();
            self.outbox.reply(DeviceMsg::Hello(hello));
            self.ack(id);
            self.send_beacon();
            if matches!(self.mode, Mode::Faulted(_)) {
                self.report_state(now_ms); // a boot-latched fault shows at once
            }
            return;
        }
        if !self.handshaken {
            self.refuse(id, RefuseReason::HandshakeRequired);
            return;
        }
        self.interlocks.host_seen(now_ms);
        let result = match msg.command {
            Command::Hello(_) | Command::Heartbeat => Ok(()),
            Command::Start(profile) => self.start_profile(now_ms, profile),
            Command::Manual {
                setpoint_tenth_c,
                limit_tenth_c,
            } => self.start_manual(now_ms, setpoint_tenth_c, limit_tenth_c),
            Command::Stop => {
                if !matches!(self.mode, Mode::Faulted(_)) {
                    self.enter(now_ms, Mode::Idle);
                }
                let _ = self.heater.off();
                Ok(())
            }
            Command::Configure(cfg) => self.configure(now_ms, cfg),
            Command::ClearFault => self.clear_fault(now_ms),
            Command::InjectFault => {
                self.trip(now_ms, remanent_protocol::Fault::Injected);
                Ok(())
            }
            Command::Drill(drill) => self.drill(drill),
            Command::Fixture(model) => self.take_fixture(model),
            Command::Duty {
                duty_pct,
                limit_tenth_c,
            } => self.start_duty(now_ms, duty_pct, limit_tenth_c),
        };
        match result {
            Ok(()) => self.ack(id),
            Err(reason) => self.refuse(id, reason),
        }
    }

    fn ack(&mut self, id: u16) {
        self.outbox.reply(DeviceMsg::Ack(Ack { id }));
    }

    fn refuse(&mut self, id: u16, reason: RefuseReason) {
        fw_info!("refused command {}: {}", id, reason);
        self.outbox
            .reply(DeviceMsg::Refused(Refusal { id, reason }));
    }

    fn check_limit(&self, limit_tenth_c: i16) -> Result<(), RefuseReason> {
        let ceiling_tenth_c = self.cfg.ceiling_tenth_c();
        if limit_tenth_c > ceiling_tenth_c {
            return Err(RefuseReason::AboveCeiling { ceiling_tenth_c });
        }
        Ok(())
    }

    fn ready_for_run(&self) -> Result<(), RefuseReason> {
        if self.trips.is_locked() {
            return Err(RefuseReason::LockedOut {
                trips: self.trips.trips(),
            });
        }
        match self.mode {
            Mode::Faulted(f) => Err(RefuseReason::FaultLatched(f)),
            Mode::Profile(_) => Err(RefuseReason::Busy),
            Mode::Idle | Mode::Manual(_) | Mode::Duty(..) => Ok(()),
        }
    }

    fn start_profile(&mut self, now_ms: u32, profile: Profile) -> Result<(), RefuseReason> {
        self.ready_for_run()?;
        self.check_limit(profile.limit_tenth_c)?;
        if profile.segments.0.is_empty() {
            return Err(RefuseReason::Invalid);
        }
        for seg in profile.segments.0.iter() {
            self.check_limit(seg.target_tenth_c)?;
            if seg.target_tenth_c > profile.limit_tenth_c {
                return Err(RefuseReason::AboveRunLimit {
                    limit_tenth_c: profile.limit_tenth_c,
                });
            }
        }
        // the profile starts from the temperature now, which must be trustworthy
        let word = self
            .tc
            .read_word()
            .map_err(|_| RefuseReason::FaultLatched(remanent_protocol::Fault::SensorBus))?;
        let temp = judge_word(&self.cfg, word).map_err(RefuseReason::FaultLatched)?;
        self.interlocks.set_run_limit(profile.limit_tenth_c);
        self.pi.reset();
        let (band, wait) = (self.cfg.soak_band_tenth_c, self.cfg.soak_wait_max_ms);
        let run = ProfileRunner::start(profile, now_ms, temp, band, wait);
        self.enter(now_ms, Mode::Profile(run));
        Ok(())
    }

    fn start_manual(
        &mut self,
        now_ms: u32,
        setpoint_tenth_c: i16,
        limit_tenth_c: i16,
    ) -> Result<(), RefuseReason> {
        self.ready_for_run()?;
        self.check_limit(limit_tenth_c)?;
        self.check_limit(setpoint_tenth_c)?;
        if setpoint_tenth_c > limit_tenth_c {
            return Err(RefuseReason::AboveRunLimit { limit_tenth_c });
        }
        self.interlocks.set_run_limit(limit_tenth_c);
        if !matches!(self.mode, Mode::Manual(_)) {
            self.pi.reset();
        }
        self.enter(now_ms, Mode::Manual(setpoint_tenth_c));
        Ok(())
    }

    fn configure(&mut self, now_ms: u32, cfg: SamplingConfig) -> Result<(), RefuseReason> {
        if !matches!(self.mode, Mode::Idle) {
            return Err(RefuseReason::Busy);
        }
        if !PERIOD_RANGE_MS.contains(&cfg.period_ms) || !OVERSAMPLE_RANGE.contains(&cfg.oversample)
        {
            return Err(RefuseReason::Invalid);
        }
        // two inputs, each converted `oversample` times, must fit in one period
        let need_us = 2 * u32::from(cfg.oversample) * self.board.conversion_us + SAMPLE_OVERHEAD_US;
        if need_us > u32::from(cfg.period_ms) * 1000 {
            let min_period_ms = need_us.div_ceil(1000).min(u32::from(u16::MAX)) as u16;
            return Err(RefuseReason::TooFastForBoard { min_period_ms });
        }
        self.sampler
            .reconfigure(now_ms, cfg.period_ms, cfg.oversample);
        self.send_beacon();
        Ok(())
    }

    fn clear_fault(&mut self, now_ms: u32) -> Result<(), RefuseReason> {
        let latched = match self.mode {
            Mode::Faulted(f) => Some(f),
            _ => None,
        };
        let trips = self.trips.trips();
        if self.trips.is_locked() && !self.trips.releasable() {
            return Err(RefuseReason::LockedOut { trips });
        }
        let word = self.tc.read_word().ok();
        let off_ms = self.heater_off_ms(now_ms);
        let limit = self.interlocks.run_limit_tenth_c();
        if self.trips.is_locked() {
            // a lock that came through a power cycle: released under the strictest rule
            latch::may_unlock(&self.cfg, word, off_ms, limit, trips)?;
        }
        if let Some(fault) = latched {
            latch::may_clear(&self.cfg, fault, word, off_ms, limit)?;
            fw_info!("cleared {}", fault);
        } else if !self.trips.is_locked() {
            return Err(RefuseReason::NoFaultLatched);
        }
        if self.trips.is_locked() {
            fw_info!("lock released after a power cycle");
            self.trips.release();
        }
        self.reported = 0;
        self.interlocks.restart_detectors();
        self.interlocks.set_run_limit(self.cfg.ceiling_tenth_c());
        self.enter(now_ms, Mode::Idle);
        Ok(())
    }

    /// The host's identification of the fixture: bounds-checked, then the interlocks judge
    /// the heating against it (and the model-free limits no longer apply).
    fn take_fixture(&mut self, model: FixtureModel) -> Result<(), RefuseReason> {
        if matches!(
            self.mode,
            Mode::Profile(_) | Mode::Manual(_) | Mode::Duty(..)
        ) {
            return Err(RefuseReason::Busy);
        }
        let id = Identified {
            rate_k_per_s: model.rate_mk_per_s as f32 / 1000.0,
            cooling_tau_s: model.cooling_tau_s as f32,
            lag_s: model.lag_ms as f32 / 1000.0,
            rate_fall_per_k: model.rate_fall_ppm_per_k as f32 * 1e-6,
        }
        .checked()
        .ok_or(RefuseReason::Invalid)?;
        self.cfg.plant = id.plant(self.cfg.plant);
        self.cfg.identified = true;
        self.interlocks.set_config(self.cfg);
        fw_info!("fixture identified");
        Ok(())
    }

    /// An identification step: a fixed duty under a run limit, capped as any heating is.
    fn start_duty(
        &mut self,
        now_ms: u32,
        duty_pct: u8,
        limit_tenth_c: i16,
    ) -> Result<(), RefuseReason> {
        self.ready_for_run()?;
        self.check_limit(limit_tenth_c)?;
        let duty = f32::from(duty_pct) / 100.0;
        if duty_pct == 0 || duty > self.cfg.duty_cap() + 1e-6 {
            return Err(RefuseReason::Invalid);
        }
        self.interlocks.set_run_limit(limit_tenth_c);
        self.pi.reset();
        self.enter(now_ms, Mode::Duty(duty, limit_tenth_c));
        Ok(())
    }

    fn drill(&mut self, drill: Drill) -> Result<(), RefuseReason> {
        if !self.board.drills {
            return Err(RefuseReason::Unsupported);
        }
        fw_warn!("fault drill: {}", drill);
        self.drill = Some(drill);
        Ok(())
    }
}
