//! Fixed-width serde helpers.
//!
//! postcard writes integers wider than a byte as varints. Raw converter codes are spread
//! over their whole range, where a varint costs more than the plain bytes, so the sample
//! frame carries them as little-endian byte arrays through these `#[serde(with)]` modules.

/// An `i16` as two little-endian bytes.
pub mod i16_le {
    use serde::{Deserialize, Deserializer, Serialize, Serializer};

    /// Serialize as `[u8; 2]`.
    pub fn serialize<S: Serializer>(value: &i16, serializer: S) -> Result<S::Ok, S::Error> {
        value.to_le_bytes().serialize(serializer)
    }

    /// Deserialize from `[u8; 2]`.
    pub fn deserialize<'de, D: Deserializer<'de>>(deserializer: D) -> Result<i16, D::Error> {
        <[u8; 2]>::deserialize(deserializer).map(i16::from_le_bytes)
    }
}
