//! The serial link to a device: framing both ways, the handshake, commands with their
//! acknowledgements, and rebuilding full sequence numbers and device times from the beacons.

pub mod acquisition;
pub mod port;
pub mod session;
pub mod timeline;
pub mod words;

pub use session::{LinkError, Session};
pub use timeline::{PlacedSample, Resampled, Timeline};
