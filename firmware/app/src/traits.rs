//! Hardware traits of our own where embedded-hal 1.0 has none: an ADC and a millisecond clock,
//! and the thermocouple converter seen as a source of raw words.

use remanent_protocol::{ThermoKind, ThermoWord};

/// Which input of the front end to convert.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AdcInput {
    /// The Hall sensor's output, measured differentially against its reference.
    Hall,
    /// The thermistor divider beside the probe, single-ended.
    ProbeThermistor,
}

/// A converter that returns a signed raw code for an input.
pub trait Adc {
    /// The driver's error.
    type Error: core::fmt::Debug;
    /// One conversion of `input`.
    fn convert(&mut self, input: AdcInput) -> Result<i16, Self::Error>;
    /// The input voltage a full-scale code of `input` stands for, µV (the host scales codes
    /// by it).
    fn full_scale_uv(&self, input: AdcInput) -> u32;
}

/// A thermocouple converter that returns its raw output word.
pub trait Thermocouple {
    /// The driver's error.
    type Error: core::fmt::Debug;
    /// Read the latest conversion word (thermocouple, cold junction, fault bits).
    fn read_word(&mut self) -> Result<ThermoWord, Self::Error>;
    /// How the converter turns the junction's voltage into its temperature word (the host
    /// undoes it).
    fn kind(&self) -> ThermoKind;
}

/// A monotonic millisecond clock (wraps after 49 days; all arithmetic is wrapping).
pub trait Clock {
    /// Milliseconds since some fixed start.
    fn now_ms(&mut self) -> u32;
}
