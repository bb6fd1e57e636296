//! The heater output: PWM duty through `SetDutyCycle` and an enable pin as a second path.
//!
//! Energising needs a [`Permit`], which only the interlocks can issue (`safety` module), so no
//! code path can switch the heater on without every interlock having passed this period.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;

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

/// PWM output plus enable pin.
pub struct Heater<P, O> {
    pwm: P,
    enable: O,
    duty_cap: f32,
    duty: f32,
}

/// Resolution of duty commands given to the PWM (parts per this).
const DUTY_STEPS: u16 = 1000;

impl<P: SetDutyCycle, O: OutputPin> Heater<P, O> {
    /// A heater driver; call [`Heater::off`] before anything else.
    pub fn new(pwm: P, enable: O, duty_cap_pct: u8) -> Self {
        Heater {
            pwm,
            enable,
            duty_cap: f32::from(duty_cap_pct.min(100)) / 100.0,
            duty: 0.0,
        }
    }

    /// Both paths off: enable low first, then zero duty. Tries both even if one fails.
    pub fn off(&mut self) -> Result<(), Error<P::Error, O::Error>> {
        self.duty = 0.0;
        let pin = self.enable.set_low().map_err(Error::Pin);
        let pwm = self.pwm.set_duty_cycle_fully_off().map_err(Error::Pwm);
        pin.and(pwm)
    }

    /// Drive at `fraction` of full power (capped), with the enable pin high.
    pub fn drive(
        &mut self,
        _permit: Permit,
        fraction: f32,
    ) -> Result<(), Error<P::Error, O::Error>> {
        let duty = fraction.clamp(0.0, self.duty_cap);
        let steps = (duty * f32::from(DUTY_STEPS)) as u16;
        self.pwm
            .set_duty_cycle_fraction(steps, DUTY_STEPS)
            .map_err(Error::Pwm)?;
        self.enable.set_high().map_err(Error::Pin)?;
        self.duty = duty;
        Ok(())
    }

    /// The duty now applied, 0..=1.
    pub fn duty(&self) -> f32 {
        self.duty
    }

    /// The duty cap, 0..=1.
    pub fn duty_cap(&self) -> f32 {
        self.duty_cap
    }

    /// Hand the PWM channel and the pin back.
    pub fn release(self) -> (P, O) {
        (self.pwm, self.enable)
    }
}
