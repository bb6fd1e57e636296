//! The virtual rig: the real firmware library running against the physical model, behind one
//! end of a pseudo-terminal, so any program can open the other end as a serial port.
//!
//! Simulated time runs `speed` times faster than the wall clock; timestamps are device time.
//! On the virtual rig the heartbeat timeout is stretched to one wall-clock second (at most 65 s
//! of device time) when that is longer than 2 s of device time, so host scheduling jitter at
//! high speed cannot trip it; everything else runs exactly as on a board. The heartbeat
//! interlock itself is tested on the in-process [`SimulatedPort`], which keeps the 2 s.

mod bench;
mod fixture_file;
mod options;
mod port;
mod pty;

pub use bench::{heater_drive, SceneControl, SimulatedBench, SURVEY_GAP_S};
pub use fixture_file::{FixtureFile, FixtureFileError};
pub use options::{survey_set, virtual_config, RigTruth, VirtualRigOptions};
pub use port::SimulatedPort;
pub use pty::VirtualRig;
