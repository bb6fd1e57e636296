//! Sensor drivers, each generic over an embedded-hal bus trait, each with its own error type
//! wrapping the bus error and a `release()` that hands the bus back.

pub mod ads1115;
pub mod max31855;
