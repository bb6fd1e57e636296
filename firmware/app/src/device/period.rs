//! The control period: read the sensors, let the state machine say what it wants, ask every
//! interlock, and drive the heater — or trip, latching the worst fault and reporting each.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use remanent_protocol::{DeviceMsg, Fault, FaultReport};

use super::{fault_bit, Device, Mode};
use crate::log::fw_warn;
use crate::safety::{latch, Reading};
use crate::sampler::Sampler;
use crate::traits::{Adc, Thermocouple};

impl<A, T, P, O> Device<A, T, P, O>
where
    A: Adc,
    T: Thermocouple,
    P: SetDutyCycle,
    O: OutputPin,
{
    pub(super) fn control_period(&mut self, now_ms: u32, seq: u32, late_ms: u32) {
        let acq = self.sampler.acquire(&mut self.adc, &mut self.tc);
        let reading = match (acq.thermo, acq.adc_failed) {
            (Some(w), false) => Reading::Word(w),
            _ => Reading::BusError,
        };
        let temp_now = match reading {
            Reading::Word(w) => crate::safety::judge_word(&self.cfg, w).ok(),
            Reading::BusError => None,
        };
        // what the state machine wants
        let mut finished = false;
        self.setpoint_tenth_c = match &mut self.mode {
            Mode::Profile(run) => {
                let sp = temp_now.and_then(|t| run.update(now_ms, t));
                finished = sp.is_none() && temp_now.is_some();
                sp
            }
            Mode::Manual(sp) => Some(*sp),
            Mode::Duty(_, limit) => Some(*limit),
            Mode::Idle | Mode::Faulted(_) => None,
        };
        if finished {
            self.enter(now_ms, Mode::Idle);
        }
        // what the heater got during the period that just ended (its whole half-cycles)
        let applied = self.heater.delivered(now_ms);
        if applied > 0.0 {
            self.last_heat_ms = now_ms;
        }
        let wanted = self.setpoint_tenth_c.is_some();
        let duties = (applied, self.heater.duty());
        match self.interlocks.check(now_ms, reading, duties, wanted) {
            Err(fault) => self.trip(now_ms, fault),
            Ok(Some(permit)) => {
                let ambient_c = match reading {
                    Reading::Word(w) => w.cj_c(),
                    Reading::BusError => 20.0,
                };
                let t = f32::from(temp_now.unwrap_or(0)) / 10.0;
                let duty = self.control(t, ambient_c);
                if self.heater.drive(permit, duty).is_err() {
                    self.trip(now_ms, Fault::HeaterDrive);
                }
            }
            Ok(None) => {
                let _ = self.heater.off();
                self.pi.reset();
            }
        }
        if !self.handshaken {
            return; // nobody to send to; the schedule still advances
        }
        match (acq.thermo, acq.adc_failed) {
            (Some(word), false) => {
                let faulted = matches!(self.mode, Mode::Faulted(_));
                let duty = self.heater.duty();
                let sample = Sampler::sample(seq, late_ms, &acq, word, duty, duty > 0.0, faulted);
                self.sampler.enqueue(sample);
            }
            _ => self.sampler.skip(),
        }
    }

    /// Heater off and the fault latched and reported. Every fault is reported once while the
    /// latch holds (a fault arising under another is news too); the worse of the latched and
    /// the new one stays latched.
    pub(super) fn trip(&mut self, now_ms: u32, fault: Fault) {
        if self.heater.off().is_err() {
            fw_warn!("heater output did not answer while switching off");
        }
        self.pi.reset();
        self.setpoint_tenth_c = None;
        let latched = match self.mode {
            Mode::Faulted(f) => Some(f),
            _ => None,
        };
        if latched.is_none() {
            self.reported = 0;
        }
        if self.reported & fault_bit(fault) != 0 {
            return; // already told while this latch holds
        }
        self.reported |= fault_bit(fault);
        // one latch is one trip toward the lockout, however many faults it reports
        let locked = if latched.is_none() {
            self.trips.record(&self.cfg, now_ms, fault)
        } else {
            self.trips.is_locked()
        };
        fw_warn!("trip: {} (locked {})", fault, locked);
        let keep = match latched {
            Some(f) if latch::severity(f) >= latch::severity(fault) => f,
            _ => fault,
        };
        self.mode = Mode::Faulted(keep);
        let temp_tenth_c = self.interlocks.last_temp_tenth_c().unwrap_or(0);
        self.outbox.report(DeviceMsg::Fault(FaultReport {
            time_ms: now_ms,
            fault,
            temp_tenth_c,
        }));
        self.report_state(now_ms);
    }

    /// The duty for this period: the PI around a feed-forward from the identified fixture —
    /// the power that holds the setpoint against the loss, plus what moves the block at the
    /// ramp's rate — so a ramp does not wind the integral and the plateau after it is met
    /// without overshoot.
    fn control(&mut self, temp_c: f32, ambient_c: f32) -> f32 {
        let cap = self.heater.duty_cap().min(self.cfg.duty_cap());
        if let Mode::Duty(duty, _) = self.mode {
            return duty.min(cap); // an identification step: open loop, under every interlock
        }
        let sp = f32::from(self.setpoint_tenth_c.unwrap_or(0)) / 10.0;
        let rate = match &self.mode {
            Mode::Profile(run) => run.ramp_c_per_s(),
            _ => 0.0,
        };
        let m = &self.cfg.plant;
        let need_w = m.loss_w_per_k * (sp - ambient_c) + m.heat_capacity_j_per_k * rate;
        let ff = (need_w / m.heater_w_at(sp).max(1.0)).clamp(0.0, cap);
        let dt = f32::from(self.sampler.period_ms()) / 1000.0;
        self.pi.update_with(ff, sp, temp_c, dt, cap)
    }

    /// How long the heater has been off, ms.
    pub(super) fn heater_off_ms(&self, now_ms: u32) -> u32 {
        if self.heater.duty() > 0.0 {
            0
        } else {
            now_ms.wrapping_sub(self.last_heat_ms)
        }
    }
}
