//! Simulated peripherals: the rig behind the same bus traits the real drivers use, so the
//! firmware's own drivers, sampler and interlocks run unchanged against the model.
//!
//! Each peripheral holds a handle to the shared rig: `&RefCell<Rig>` on a microcontroller,
//! `Rc<RefCell<Rig>>` on the host — anything that dereferences to the `RefCell`.

use core::cell::RefCell;
use core::convert::Infallible;
use core::ops::Deref;

use embedded_hal::delay::DelayNs;
use embedded_hal::digital::{ErrorType as PinErrorType, OutputPin};
use embedded_hal::i2c::{ErrorType as I2cErrorType, I2c, Operation as I2cOp, SevenBitAddress};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};
use embedded_hal::spi::{ErrorType as SpiErrorType, Operation as SpiOp, SpiDevice};
use remanent_firmware::drivers::ads1115::{
    MUX_AIN0_AIN1, MUX_AIN2_GND, OS_START, REG_CONFIG, REG_CONVERSION,
};
use remanent_firmware::Clock;

use crate::rig::Rig;

/// The four-channel ADC's registers, answering from the rig.
pub struct SimAdcBus<H> {
    rig: H,
    config: u16,
    conversion: u16,
    pointer: u8,
}

impl<H: Deref<Target = RefCell<Rig>>> SimAdcBus<H> {
    /// The ADC bus of `rig`.
    pub fn new(rig: H) -> Self {
        SimAdcBus {
            rig,
            config: 0x8583,
            conversion: 0,
            pointer: 0,
        }
    }
}

impl<H> I2cErrorType for SimAdcBus<H> {
    type Error = Infallible;
}

impl<H: Deref<Target = RefCell<Rig>>> I2c<SevenBitAddress> for SimAdcBus<H> {
    fn transaction(
        &mut self,
        _address: u8,
        operations: &mut [I2cOp<'_>],
    ) -> Result<(), Infallible> {
        for op in operations {
            match op {
                I2cOp::Write(bytes) => {
                    if let Some(&reg) = bytes.first() {
                        self.pointer = reg;
                    }
                    if bytes.len() == 3 && bytes[0] == REG_CONFIG {
                        let cfg = u16::from_be_bytes([bytes[1], bytes[2]]);
                        self.config = cfg | OS_START; // conversion completes at once
                        let mux = cfg & (0b111 << 12);
                        let mut rig = self.rig.borrow_mut();
                        let code = if mux == MUX_AIN0_AIN1 {
                            rig.hall_code()
                        } else if mux == MUX_AIN2_GND {
                            rig.probe_code()
                        } else {
                            0
                        };
                        self.conversion = code as u16;
                    }
                }
                I2cOp::Read(buf) => {
                    let value = match self.pointer {
                        REG_CONVERSION => self.conversion,
                        _ => self.config,
                    };
                    let bytes = value.to_be_bytes();
                    for (i, b) in buf.iter_mut().enumerate() {
                        *b = bytes.get(i).copied().unwrap_or(0);
                    }
                }
            }
        }
        Ok(())
    }
}

/// The thermocouple converter on SPI, answering from the rig.
pub struct SimThermoSpi<H> {
    rig: H,
}

impl<H: Deref<Target = RefCell<Rig>>> SimThermoSpi<H> {
    /// The converter of `rig`.
    pub fn new(rig: H) -> Self {
        SimThermoSpi { rig }
    }
}

impl<H> SpiErrorType for SimThermoSpi<H> {
    type Error = Infallible;
}

impl<H: Deref<Target = RefCell<Rig>>> SpiDevice for SimThermoSpi<H> {
    fn transaction(&mut self, operations: &mut [SpiOp<'_, u8>]) -> Result<(), Infallible> {
        let word = self.rig.borrow_mut().thermo_word().0.to_be_bytes();
        for op in operations {
            if let SpiOp::Read(buf) | SpiOp::Transfer(buf, _) = op {
                for (i, b) in buf.iter_mut().enumerate() {
                    *b = word.get(i).copied().unwrap_or(0);
                }
            }
        }
        Ok(())
    }
}

/// The heater's PWM channel.
pub struct SimHeaterPwm<H>(pub H);

impl<H> PwmErrorType for SimHeaterPwm<H> {
    type Error = Infallible;
}

impl<H: Deref<Target = RefCell<Rig>>> SetDutyCycle for SimHeaterPwm<H> {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0.borrow_mut().duty = f64::from(duty) / 1000.0;
        Ok(())
    }
}

/// The heater's enable pin.
pub struct SimHeaterEnable<H>(pub H);

impl<H> PinErrorType for SimHeaterEnable<H> {
    type Error = Infallible;
}

impl<H: Deref<Target = RefCell<Rig>>> OutputPin for SimHeaterEnable<H> {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().enabled = false;
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().enabled = true;
        Ok(())
    }
}

/// Conversion waits cost no simulated time (the rig converts instantly).
pub struct SimDelay;

impl DelayNs for SimDelay {
    fn delay_ns(&mut self, _ns: u32) {}
}

/// The device clock: the rig's simulated time.
pub struct SimClock<H>(pub H);

impl<H: Deref<Target = RefCell<Rig>>> Clock for SimClock<H> {
    fn now_ms(&mut self) -> u32 {
        self.0.borrow().time_ms()
    }
}
