//! Frame encoding: postcard payload, CRC-16 trailer, COBS, `0x00` delimiter.
//!
//! CRC-16/IBM-3740 (polynomial 0x1021, initial value 0xFFFF) rather than CRC-32: frames are
//! short (a sample is 12 payload bytes), where this polynomial keeps Hamming distance 4 — every
//! 1-, 2- and 3-bit error and every burst up to 16 bits is caught — and the two bytes saved
//! keep a sample frame at 16 bytes, 720 samples/s at 115200 baud. The non-zero initial value
//! also catches frames that gained or lost leading zero bytes.

use crc::{Crc, CRC_16_IBM_3740};
use postcard::experimental::max_size::MaxSize;
use postcard::ser_flavors::{crc::CrcModifier, Cobs, Slice};
use serde::Serialize;

use crate::device::DeviceMsg;
use crate::host::HostMsg;

/// The frame check.
pub const FRAME_CRC: Crc<u16> = Crc::<u16>::new(&CRC_16_IBM_3740);

/// Bytes of CRC after the payload.
pub const CRC_LEN: usize = 2;

/// COBS output length for `n` input bytes, without the delimiter.
pub const fn cobs_max_len(n: usize) -> usize {
    n + n / 254 + 1
}

/// Longest encoded device frame, delimiter included.
pub const MAX_DEVICE_FRAME: usize = cobs_max_len(DeviceMsg::POSTCARD_MAX_SIZE + CRC_LEN) + 1;
/// Longest encoded host frame, delimiter included.
pub const MAX_HOST_FRAME: usize = cobs_max_len(HostMsg::POSTCARD_MAX_SIZE + CRC_LEN) + 1;
/// Longest frame in either direction, delimiter included.
pub const MAX_FRAME: usize = if MAX_DEVICE_FRAME > MAX_HOST_FRAME {
    MAX_DEVICE_FRAME
} else {
    MAX_HOST_FRAME
};

/// The caller's buffer was too small for the frame.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EncodeError {
    /// Size of the buffer given.
    pub buffer_len: usize,
}

impl core::fmt::Display for EncodeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        write!(f, "frame does not fit a {}-byte buffer", self.buffer_len)
    }
}

impl core::error::Error for EncodeError {}

// a frame must fit the decoder's one-byte-length world and a small MCU buffer
const _: () = assert!(MAX_FRAME < 256);

/// Encode `msg` as one complete frame (ending in `0x00`) into `buf`; returns the frame.
pub fn encode<'a, T: Serialize>(msg: &T, buf: &'a mut [u8]) -> Result<&'a [u8], EncodeError> {
    let buffer_len = buf.len();
    let err = |_| EncodeError { buffer_len };
    let cobs = Cobs::try_new(Slice::new(buf)).map_err(err)?;
    let frame = postcard::serialize_with_flavor(msg, CrcModifier::new(cobs, FRAME_CRC.digest()))
        .map_err(err)?;
    Ok(frame)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crc_matches_the_catalogue_check_value() {
        // Catalogue check value of CRC-16/IBM-3740 over ASCII "123456789" is 0x29B1
        // (Greg Cook's CRC catalogue, reveng).
        assert_eq!(FRAME_CRC.checksum(b"123456789"), 0x29B1);
    }
}
