//! Version handshake: both sides send their protocol version and schema fingerprint.

use postcard::experimental::max_size::MaxSize;
use serde::{Deserialize, Serialize};

/// A protocol version and the fingerprint of the message schema.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Version {
    /// Protocol version number.
    pub protocol: u16,
    /// FNV-1a fingerprint of the schema description (see [`crate::schema`]).
    pub schema: u32,
}

impl core::fmt::Display for Version {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "protocol {} (schema {:08x})", self.protocol, self.schema)
    }
}

/// The two sides cannot talk.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HandshakeError {
    /// The host's version.
    pub host: Version,
    /// The device's version.
    pub device: Version,
}

impl core::fmt::Display for HandshakeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        let what = if self.host.protocol != self.device.protocol {
            "protocol versions differ"
        } else {
            "same protocol version but different message schemas"
        };
        write!(
            f,
            "{what}: host speaks {}, device speaks {}; update the older side",
            self.host, self.device
        )
    }
}

/// Both the protocol number and the schema fingerprint must match.
pub fn check_compatible(host: Version, device: Version) -> Result<(), HandshakeError> {
    if host == device {
        Ok(())
    } else {
        Err(HandshakeError { host, device })
    }
}

impl core::error::Error for HandshakeError {}

/// Protocol version: bump on any change a peer of the previous version could not read.
pub const PROTOCOL_VERSION: u16 = 4;

/// This build's version pair, sent in both hellos.
pub const VERSION: Version = Version {
    protocol: PROTOCOL_VERSION,
    schema: crate::schema::SCHEMA_FINGERPRINT,
};
