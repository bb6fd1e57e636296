//! A short ASCII label (board name) with a known maximum wire size.

use heapless::String;
use serde::{Deserialize, Serialize};

/// Longest label in bytes.
pub const LABEL_CAPACITY: usize = 16;

/// A short text such as a board name; longer input is cut at a character boundary.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Label(pub String<LABEL_CAPACITY>);

impl Label {
    /// A label from text, truncated to [`LABEL_CAPACITY`] bytes.
    pub fn new(text: &str) -> Self {
        let mut out = String::new();
        for ch in text.chars() {
            if out.push(ch).is_err() {
                break;
            }
        }
        Label(out)
    }

    /// The text.
    pub fn as_str(&self) -> &str {
        self.0.as_str()
    }
}

impl postcard::experimental::max_size::MaxSize for Label {
    // one varint length byte (capacity < 128) plus the bytes
    const POSTCARD_MAX_SIZE: usize = 1 + LABEL_CAPACITY;
}
