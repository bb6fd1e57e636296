//! The measurement physics of a Remanent bench, used the same way by the rig model (forward:
//! what a sensor outputs for a true value) and by the host (inverse: the true value from a
//! sensor's output), so the two can never drift apart.
//!
//! Owns ITS-90 Type K and the converter's linear approximation, the on-axis field of simple
//! magnet shapes, the Hall sensor, the thermistor divider, the probe's standoff gap, ADC code
//! scaling and the firmware's tenth-of-a-degree wire values, the referral of a reading to 20 °C, the load line's knee limit; and for calibration the fields of
//! reference coils and the boiling point of water at a pressure. `no_std`, no allocation.
#![no_std]
#![forbid(unsafe_code)]

pub mod adc;
pub mod boiling;
pub mod coil;
pub mod field;
pub mod hall;
pub mod load_line;
pub mod ntc;
pub mod reversible;
pub mod shape;
pub mod standoff;
pub mod type_k;
pub mod wire;

pub use hall::HallSensor;
pub use ntc::Thermistor;
pub use shape::Shape;
pub use standoff::Standoff;
