//! The heater output: a duty through `SetDutyCycle` and an enable pin as a second path, driven
//! the way the board's switch needs it ([`HeaterDrive`]).
//!
//! A DC switch (a MOSFET) takes the duty as fast PWM. A zero-crossing relay switches only at
//! mains zero crossings, so fast PWM into it delivers a power unrelated to the duty; it gets
//! slow time-proportioning instead: in each window the output is fully on for a whole number
//! of mains half-cycles, set by [`Heater::tick`] from the main loop.
//!
//! The enable pin is either a level (high while heating) or, with
//! [`Heater::with_toggling_enable`], a square wave toggled from [`Heater::tick`] while heating
//! is permitted: the board's enable path then needs edges (a charge pump or a retriggerable
//! monostable, hardware-notes/safety.md), so a pin stuck high, a halted core or a hung main
//! loop cannot hold the relay on.
//!
//! Energising needs a [`Permit`], which only the interlocks can issue (`safety` module), so no
//! code path can switch the heater on without every interlock having passed this period.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use remanent_protocol::HeaterDrive;

/// Proof that every interlock passed for this control period. Not `Clone`: one use.
#[derive(Debug)]
pub struct Permit {
    pub(crate) _private: (),
}

/// Heater driver error.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Error<P, O> {
    /// Setting the PWM duty failed.
    Pwm(P),
    /// Driving the enable pin failed.
    Pin(O),
}

/// Where a time-proportioning window is.
#[derive(Debug, Clone, Copy)]
struct Window {
    start_ms: u32,
    on_ms: u32,
    output_on: bool,
}

/// Duty output plus enable pin.
pub struct Heater<P, O> {
    pwm: P,
    enable: O,
    drive_kind: HeaterDrive,
    duty_cap: f32,
    duty: f32,
    window: Option<Window>,
    /// Time-proportioning: the output's on-time counted since `counted_from_ms`, and when
    /// [`Heater::tick`] last ran.
    on_counted_ms: u32,
    counted_from_ms: Option<u32>,
    last_tick_ms: Option<u32>,
    /// A toggling enable: flipped every [`TOGGLE_MS`] by [`Heater::tick`] while heating.
    toggling: bool,
    enable_high: bool,
    last_toggle_ms: u32,
}

/// A toggling enable's half-period, ms (at most: a tick that comes late flips late).
pub const TOGGLE_MS: u32 = 1;

/// Resolution of duty commands given to the PWM (parts per this).
const DUTY_STEPS: u16 = 1000;

/// Time-proportioning: the on-time of one window for `duty`, whole half-cycles, ms.
pub fn window_on_ms(duty: f32, window_ms: u16, half_cycle_us: u16) -> u32 {
    let half = u32::from(half_cycle_us.max(1));
    let window_us = u32::from(window_ms) * 1000;
    let cycles = (duty.clamp(0.0, 1.0) * (window_us / half) as f32 + 0.5) as u32;
    cycles * half / 1000
}

impl<P: SetDutyCycle, O: OutputPin> Heater<P, O> {
    /// A heater driver; call [`Heater::off`] before anything else.
    pub fn new(pwm: P, enable: O, duty_cap_pct: u8, drive_kind: HeaterDrive) -> Self {
        Heater {
            pwm,
            enable,
            drive_kind,
            duty_cap: f32::from(duty_cap_pct.min(100)) / 100.0,
            duty: 0.0,
            window: None,
            on_counted_ms: 0,
            counted_from_ms: None,
            last_tick_ms: None,
            toggling: false,
            enable_high: false,
            last_toggle_ms: 0,
        }
    }

    /// Drive the enable pin as a square wave while heating, toggled from [`Heater::tick`]
    /// (the main loop), never as a steady level.
    pub fn with_toggling_enable(mut self) -> Self {
        self.toggling = true;
        self
    }

    /// The fraction of full power the heater got since the last call: the duty for a DC
    /// switch; for time-proportioning, the output's counted on-time over the time elapsed
    /// (a window delivers its whole half-cycles at its start, whatever the duty does later).
    pub fn delivered(&mut self, now_ms: u32) -> f32 {
        if !matches!(self.drive_kind, HeaterDrive::TimeProportioning { .. }) {
            return self.duty;
        }
        let from = self.counted_from_ms.replace(now_ms).unwrap_or(now_ms);
        let span = now_ms.wrapping_sub(from);
        let on = core::mem::take(&mut self.on_counted_ms);
        if span == 0 {
            self.duty
        } else {
            (on as f32 / span as f32).clamp(0.0, 1.0)
        }
    }

    /// Both paths off: enable low first, then zero duty. Tries both even if one fails.
    pub fn off(&mut self) -> Result<(), Error<P::Error, O::Error>> {
        self.duty = 0.0;
        self.window = None;
        self.enable_high = false;
        let pin = self.enable.set_low().map_err(Error::Pin);
        let pwm = self.pwm.set_duty_cycle_fully_off().map_err(Error::Pwm);
        pin.and(pwm)
    }

    /// Drive at `fraction` of full power (capped), with the enable pin high; a zero duty
    /// drops the enable pin as well, so a switch that fails on while nothing is asked of it
    /// still has its second path open.
    pub fn drive(
        &mut self,
        _permit: Permit,
        fraction: f32,
    ) -> Result<(), Error<P::Error, O::Error>> {
        let mut duty = fraction.clamp(0.0, self.duty_cap);
        if let HeaterDrive::TimeProportioning {
            window_ms,
            half_cycle_us,
        } = self.drive_kind
        {
            // what a window delivers: whole half-cycles, so the duty the interlocks count is
            // the one the heater gets (a tenth of a half-cycle asked is none, 0.6 is one)
            duty =
                window_on_ms(duty, window_ms, half_cycle_us) as f32 / f32::from(window_ms.max(1));
        }
        if duty <= 0.0 {
            return self.off();
        }
        if let HeaterDrive::Pwm { .. } = self.drive_kind {
            let steps = (duty * f32::from(DUTY_STEPS)) as u16;
            self.pwm
                .set_duty_cycle_fraction(steps, DUTY_STEPS)
                .map_err(Error::Pwm)?;
        }
        if !self.toggling || self.duty <= 0.0 {
            // a toggling enable starts with an edge now; tick keeps it toggling
            self.enable.set_high().map_err(Error::Pin)?;
            self.enable_high = true;
        }
        self.duty = duty;
        Ok(())
    }

    /// Call from the main loop at least every few ms: toggles a toggling enable while heating
    /// and, when time-proportioning, switches the output for `now_ms` (each window's on-time
    /// fixed at its start from the duty then in force).
    pub fn tick(&mut self, now_ms: u32) -> Result<(), Error<P::Error, O::Error>> {
        if self.toggling && self.duty > 0.0 && now_ms.wrapping_sub(self.last_toggle_ms) >= TOGGLE_MS
        {
            self.last_toggle_ms = now_ms;
            self.enable_high = !self.enable_high;
            let r = if self.enable_high {
                self.enable.set_high()
            } else {
                self.enable.set_low()
            };
            r.map_err(Error::Pin)?;
        }
        self.switch_window(now_ms)
    }

    fn switch_window(&mut self, now_ms: u32) -> Result<(), Error<P::Error, O::Error>> {
        let HeaterDrive::TimeProportioning {
            window_ms,
            half_cycle_us,
        } = self.drive_kind
        else {
            return Ok(());
        };
        let last = self.last_tick_ms.replace(now_ms).unwrap_or(now_ms);
        if self.window.is_some_and(|w| w.output_on) {
            self.on_counted_ms = self.on_counted_ms.saturating_add(now_ms.wrapping_sub(last));
        }
        if self.duty <= 0.0 && self.window.is_none() {
            return Ok(());
        }
        let duty = self.duty;
        let w = self.window.get_or_insert(Window {
            start_ms: now_ms,
            on_ms: window_on_ms(duty, window_ms, half_cycle_us),
            output_on: false,
        });
        if now_ms.wrapping_sub(w.start_ms) >= u32::from(window_ms) {
            w.start_ms = now_ms;
            w.on_ms = window_on_ms(duty, window_ms, half_cycle_us);
        }
        let on = now_ms.wrapping_sub(w.start_ms) < w.on_ms;
        if on != w.output_on {
            w.output_on = on;
            let r = if on {
                self.pwm.set_duty_cycle_fully_on()
            } else {
                self.pwm.set_duty_cycle_fully_off()
            };
            r.map_err(Error::Pwm)?;
        }
        Ok(())
    }

    /// The duty now applied, 0..=1 (the mean over a window when time-proportioning).
    pub fn duty(&self) -> f32 {
        self.duty
    }

    /// The duty cap, 0..=1.
    pub fn duty_cap(&self) -> f32 {
        self.duty_cap
    }

    /// How the output is driven.
    pub fn drive_kind(&self) -> HeaterDrive {
        self.drive_kind
    }

    /// Hand the PWM channel and the pin back.
    pub fn release(self) -> (P, O) {
        (self.pwm, self.enable)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use core::convert::Infallible;

    /// An enable pin that counts its rising and falling edges.
    #[derive(Default)]
    struct EdgePin {
        high: bool,
        edges: u32,
    }
    impl embedded_hal::digital::ErrorType for EdgePin {
        type Error = Infallible;
    }
    impl OutputPin for EdgePin {
        fn set_low(&mut self) -> Result<(), Infallible> {
            self.edges += u32::from(self.high);
            self.high = false;
            Ok(())
        }
        fn set_high(&mut self) -> Result<(), Infallible> {
            self.edges += u32::from(!self.high);
            self.high = true;
            Ok(())
        }
    }
    struct NoPwm;
    impl embedded_hal::pwm::ErrorType for NoPwm {
        type Error = Infallible;
    }
    impl SetDutyCycle for NoPwm {
        fn max_duty_cycle(&self) -> u16 {
            1000
        }
        fn set_duty_cycle(&mut self, _duty: u16) -> Result<(), Infallible> {
            Ok(())
        }
    }

    fn edges_over(heater: &mut Heater<NoPwm, EdgePin>, from_ms: u32, ms: u32) -> u32 {
        let before = heater.enable.edges;
        for t in from_ms..from_ms + ms {
            heater.tick(t).unwrap();
        }
        heater.enable.edges - before
    }

    #[test]
    fn a_toggling_enable_toggles_only_while_heating_and_only_when_ticked() {
        let drive = HeaterDrive::TimeProportioning {
            window_ms: 2000,
            half_cycle_us: 10_000,
        };
        let mut h = Heater::new(NoPwm, EdgePin::default(), 85, drive).with_toggling_enable();
        h.off().unwrap();
        assert_eq!(edges_over(&mut h, 0, 100), 0, "idle: no edges");
        h.drive(Permit { _private: () }, 0.5).unwrap();
        // a 1 ms half-period: an edge every tick of a 1 ms loop
        assert_eq!(edges_over(&mut h, 100, 100), 100, "heating: a square wave");
        // driving again at another duty does not hold the line at a level
        h.drive(Permit { _private: () }, 0.3).unwrap();
        assert_eq!(edges_over(&mut h, 200, 10), 10);
        h.off().unwrap();
        assert!(!h.enable.high, "off: low");
        assert_eq!(edges_over(&mut h, 300, 100), 0, "off: no edges");
        // a level enable: high while heating, no edges
        let mut level = Heater::new(NoPwm, EdgePin::default(), 85, drive);
        level.drive(Permit { _private: () }, 0.5).unwrap();
        assert_eq!(edges_over(&mut level, 0, 100), 0);
        assert!(level.enable.high);
    }

    #[test]
    fn time_proportioning_switches_whole_half_cycles() {
        // 50 Hz mains: 10 ms half-cycles; a 2 s window holds 200 of them
        assert_eq!(window_on_ms(0.5, 2000, 10_000), 1000);
        assert_eq!(window_on_ms(0.004, 2000, 10_000), 10, "0.8 half-cycles → 1");
        assert_eq!(window_on_ms(0.002, 2000, 10_000), 0, "0.4 half-cycles → 0");
        // 60 Hz: 8 333 µs half-cycles; 240 of them in 2 s
        assert_eq!(window_on_ms(0.25, 2000, 8_333), 60 * 8_333 / 1000);
    }
}
