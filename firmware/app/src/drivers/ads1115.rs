//! Driver for the common four-channel 16-bit delta-sigma ADC on I2C (ADS1115 register map).
//!
//! The Hall sensor sits on AIN0 against a mid-supply reference on AIN1 (differential); the
//! probe thermistor divider on AIN2 (single-ended). Each conversion is single-shot: write the
//! config register with the start bit, wait one conversion time, confirm the ready bit, read
//! the conversion register.

use embedded_hal::delay::DelayNs;
use embedded_hal::i2c::I2c;

use crate::traits::{Adc, AdcInput};

/// Conversion result register.
pub const REG_CONVERSION: u8 = 0x00;
/// Configuration register.
pub const REG_CONFIG: u8 = 0x01;

/// Config: start a single conversion (write) / conversion finished (read).
pub const OS_START: u16 = 1 << 15;
/// Config: multiplexer AIN0 − AIN1.
pub const MUX_AIN0_AIN1: u16 = 0b000 << 12;
/// Config: multiplexer AIN2 − GND.
pub const MUX_AIN2_GND: u16 = 0b110 << 12;
/// Config: full scale ±4.096 V.
pub const PGA_4_096V: u16 = 0b001 << 9;
/// Config: full scale ±2.048 V.
pub const PGA_2_048V: u16 = 0b010 << 9;
/// Config: single-shot mode.
pub const MODE_SINGLE: u16 = 1 << 8;
/// Config: 860 samples per second.
pub const DR_860SPS: u16 = 0b111 << 5;
/// Config: comparator disabled (ALERT pin high impedance).
pub const COMP_DISABLE: u16 = 0b11;

/// Default 7-bit address (ADDR pin to GND).
pub const DEFAULT_ADDRESS: u8 = 0x48;
/// One conversion at 860 SPS takes 1.163 ms; wait a little longer.
pub const CONVERSION_WAIT_US: u32 = 1_250;
/// Ready-bit polls before giving up.
pub const READY_POLLS: u8 = 3;

/// Full-scale input of the Hall channel, µV.
pub const HALL_FULL_SCALE_UV: u32 = 2_048_000;
/// Full-scale input of the thermistor channel, µV.
pub const PROBE_FULL_SCALE_UV: u32 = 4_096_000;

/// Driver error.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Error<E> {
    /// The I2C transaction failed.
    Bus(E),
    /// The converter never reported a finished conversion.
    NotReady,
}

/// The ADC on its bus, with a delay source for conversion waits.
pub struct Ads1115<I2C, D> {
    i2c: I2C,
    delay: D,
    address: u8,
}

/// The config word that starts one conversion of `input`.
pub fn config_word(input: AdcInput) -> u16 {
    let (mux, pga) = match input {
        AdcInput::Hall => (MUX_AIN0_AIN1, PGA_2_048V),
        AdcInput::ProbeThermistor => (MUX_AIN2_GND, PGA_4_096V),
    };
    OS_START | mux | pga | MODE_SINGLE | DR_860SPS | COMP_DISABLE
}

impl<I2C: I2c, D: DelayNs> Ads1115<I2C, D> {
    /// A driver at `address`.
    pub fn new(i2c: I2C, delay: D, address: u8) -> Self {
        Ads1115 {
            i2c,
            delay,
            address,
        }
    }

    /// Hand the bus and the delay back.
    pub fn release(self) -> (I2C, D) {
        (self.i2c, self.delay)
    }

    fn read_register(&mut self, reg: u8) -> Result<u16, Error<I2C::Error>> {
        let mut buf = [0u8; 2];
        self.i2c
            .write_read(self.address, &[reg], &mut buf)
            .map_err(Error::Bus)?;
        Ok(u16::from_be_bytes(buf))
    }

    /// One single-shot conversion.
    pub fn convert_once(&mut self, input: AdcInput) -> Result<i16, Error<I2C::Error>> {
        let [hi, lo] = config_word(input).to_be_bytes();
        self.i2c
            .write(self.address, &[REG_CONFIG, hi, lo])
            .map_err(Error::Bus)?;
        for _ in 0..READY_POLLS {
            self.delay.delay_us(CONVERSION_WAIT_US);
            if self.read_register(REG_CONFIG)? & OS_START != 0 {
                return Ok(self.read_register(REG_CONVERSION)? as i16);
            }
        }
        Err(Error::NotReady)
    }
}

impl<I2C: I2c, D: DelayNs> Adc for Ads1115<I2C, D> {
    type Error = Error<I2C::Error>;
    fn convert(&mut self, input: AdcInput) -> Result<i16, Self::Error> {
        self.convert_once(input)
    }
    fn full_scale_uv(&self, input: AdcInput) -> u32 {
        match input {
            AdcInput::Hall => HALL_FULL_SCALE_UV,
            AdcInput::ProbeThermistor => PROBE_FULL_SCALE_UV,
        }
    }
}
