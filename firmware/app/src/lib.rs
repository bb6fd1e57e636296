//! The Remanent firmware's logic, generic over embedded-hal 1.0 and tested on the host.
//!
//! Owns the sensor drivers, the sampler, heater control with its profile runner, the safety
//! interlocks and the device state machine that alone decides whether the heater may be on.
//! `no_std`, no allocation, no FFI; board crates supply the buses, pins and a clock.
#![no_std]
#![forbid(unsafe_code)]

pub mod boot;
pub mod config;
pub mod control;
pub mod device;
pub mod drivers;
pub mod fault_log;
pub mod heater;
pub mod log;
pub mod outbox;
pub mod profile;
pub mod safety;
pub mod sampler;
pub mod traits;

pub use config::FirmwareConfig;
pub use device::Device;
pub use traits::{Adc, AdcInput, Clock, Thermocouple};
