//! Wire protocol shared by the Remanent firmware and host.
//!
//! Owns the message types for both directions, the frame format (postcard payload, CRC-16
//! trailer, COBS with a `0x00` delimiter), the streaming decoder and the version handshake.
//! `no_std`, no allocation, no FFI: the same code runs on the microcontroller and the host.
//!
//! Raw sensor codes travel exactly as measured; conversion to physical units is the host's job,
//! so a record can be re-converted later with a better calibration.
#![no_std]
#![forbid(unsafe_code)]
#![warn(missing_docs)]

pub mod decoder;
pub mod device;
pub mod examples;
pub mod fixed;
pub mod frame;
pub mod handshake;
pub mod host;
pub mod label;
pub mod schema;
pub mod thermo_word;

pub use decoder::{FrameDecoder, FrameError};
pub use device::{
    Ack, Beacon, BootReport, DeviceHello, DeviceMsg, Fault, FaultReport, HeaterDrive, Refusal,
    RefuseReason, ResetCause, RunState, SafetyLimits, Sample, SampleStatus, SensorSetup,
    StateReport, ThermoKind,
};
pub use frame::{encode, EncodeError, MAX_DEVICE_FRAME, MAX_FRAME, MAX_HOST_FRAME};
pub use handshake::{check_compatible, HandshakeError, Version, PROTOCOL_VERSION, VERSION};
pub use host::{
    Command, Drill, FixtureModel, HostMsg, Profile, SamplingConfig, Segment, Segments, MAX_SEGMENTS,
};
pub use label::Label;
pub use thermo_word::ThermoWord;
