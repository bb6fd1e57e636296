//! Physical model of the Remanent fixture, shared by the host's virtual rig and the emulated
//! board: heater and fixture thermal network, the magnet (reversible and irreversible change,
//! collapse toward the Curie point, field at the probe from its shape), the Hall probe and its
//! thermistor, the converter chips, and simulated peripherals implementing the buses the real
//! firmware drivers use. `no_std`, deterministic for a given seed.
#![no_std]
#![forbid(unsafe_code)]

pub mod catalogue;
pub mod magnet;
pub mod peripherals;
pub mod probe;
pub mod rig;
pub mod rng;
pub mod scene;
pub mod thermal;

pub use magnet::{Magnet, Shape};
/// The measurement physics the model shares with the host.
pub use remanent_physics as physics;
pub use rig::{HeaterSwitch, Rig, RigFaults, RigParams};
pub use scene::Scene;
