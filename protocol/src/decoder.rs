//! Streaming frame decoder: arbitrary byte chunks in, messages or typed failures out.
//!
//! Bytes gather in a fixed buffer until a `0x00` delimiter. Anything wrong with a frame is
//! reported once, as one [`FrameError`], and decoding resumes at the next delimiter, so one
//! corrupted frame never takes its neighbours with it. No allocation, no panics.

use serde::de::DeserializeOwned;

use crate::frame::{CRC_LEN, FRAME_CRC, MAX_FRAME};

/// Why a frame was rejected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FrameError {
    /// More bytes arrived before a delimiter than any valid frame can hold.
    Overlong {
        /// Bytes seen before the delimiter.
        len: usize,
    },
    /// The bytes are not valid COBS.
    BadCobs,
    /// Too short to hold a message and its CRC.
    TooShort {
        /// Decoded length.
        len: usize,
    },
    /// The CRC does not match the payload.
    BadCrc {
        /// CRC computed over the payload.
        computed: u16,
        /// CRC carried in the frame.
        received: u16,
    },
    /// The CRC matched but the message tag is not one this build knows (a newer peer?).
    UnknownMessage {
        /// The tag.
        tag: u8,
    },
    /// The CRC matched but the body does not decode as the tagged message.
    Malformed,
}

impl core::fmt::Display for FrameError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            FrameError::Overlong { len } => write!(f, "overlong frame ({len} bytes, no delimiter)"),
            FrameError::BadCobs => write!(f, "invalid COBS encoding"),
            FrameError::TooShort { len } => write!(f, "frame too short ({len} bytes)"),
            FrameError::BadCrc { computed, received } => {
                write!(
                    f,
                    "CRC mismatch (computed {computed:#06x}, received {received:#06x})"
                )
            }
            FrameError::UnknownMessage { tag } => write!(f, "unknown message tag {tag}"),
            FrameError::Malformed => write!(f, "message body does not decode"),
        }
    }
}

/// A streaming decoder for messages of type `T` whose tags run `0..variants`.
pub struct FrameDecoder<T> {
    buf: [u8; MAX_FRAME],
    len: usize,
    overflowed: usize,
    variants: Option<u8>,
    _msg: core::marker::PhantomData<fn() -> T>,
}

impl<T: DeserializeOwned> FrameDecoder<T> {
    /// A decoder; with `Some(n)`, the message is an enum of `n` variants whose tag is the
    /// first payload byte, and a larger tag is reported as [`FrameError::UnknownMessage`].
    pub const fn new(variants: Option<u8>) -> Self {
        FrameDecoder {
            buf: [0; MAX_FRAME],
            len: 0,
            overflowed: 0,
            variants,
            _msg: core::marker::PhantomData,
        }
    }

    /// Feed a chunk; `on_frame` is called once per delimited frame, in order.
    pub fn feed(&mut self, chunk: &[u8], mut on_frame: impl FnMut(Result<T, FrameError>)) {
        for &byte in chunk {
            if let Some(result) = self.push(byte) {
                on_frame(result);
            }
        }
    }

    /// Feed one byte; a delimiter completes a frame.
    #[inline]
    pub fn push(&mut self, byte: u8) -> Option<Result<T, FrameError>> {
        if byte != 0 {
            if self.len < self.buf.len() {
                self.buf[self.len] = byte;
                self.len += 1;
            } else {
                self.overflowed += 1;
            }
            return None;
        }
        if self.len == 0 {
            // back-to-back delimiters are idle fill, not frames
            return None;
        }
        let result = if self.overflowed > 0 {
            Err(FrameError::Overlong {
                len: self.len + self.overflowed,
            })
        } else {
            self.decode_buffered()
        };
        self.len = 0;
        self.overflowed = 0;
        Some(result)
    }

    /// Bytes waiting for a delimiter.
    pub fn pending(&self) -> usize {
        self.len + self.overflowed
    }

    fn decode_buffered(&mut self) -> Result<T, FrameError> {
        let raw = &mut self.buf[..self.len];
        let n = cobs::decode_in_place(raw).map_err(|_| FrameError::BadCobs)?;
        if n < 1 + CRC_LEN {
            return Err(FrameError::TooShort { len: n });
        }
        let (payload, crc_bytes) = raw[..n].split_at(n - CRC_LEN);
        let received = u16::from_le_bytes([crc_bytes[0], crc_bytes[1]]);
        let computed = FRAME_CRC.checksum(payload);
        if computed != received {
            return Err(FrameError::BadCrc { computed, received });
        }
        // every tag in use is below 128, so it is the varint's only byte
        if let Some(variants) = self.variants {
            let tag = payload[0];
            if tag >= variants {
                return Err(FrameError::UnknownMessage { tag });
            }
        }
        match postcard::from_bytes::<T>(payload) {
            Ok(msg) => Ok(msg),
            Err(_) => Err(FrameError::Malformed),
        }
    }
}

/// Decoder for what the device sends (used by the host).
pub type DeviceDecoder = FrameDecoder<crate::device::DeviceMsg>;
/// Decoder for what the host sends (used by the device).
pub type HostDecoder = FrameDecoder<crate::host::HostMsg>;

impl DeviceDecoder {
    /// A decoder for device messages.
    pub const fn for_device_msgs() -> Self {
        Self::new(Some(crate::device::DEVICE_MSG_VARIANTS))
    }
}

impl HostDecoder {
    /// A decoder for host messages. A host message starts with its varint id, not a tag,
    /// so an unknown command shows as [`FrameError::Malformed`].
    pub const fn for_host_msgs() -> Self {
        Self::new(None)
    }
}

impl core::error::Error for FrameError {}
