//! A session with a device over any byte stream: send commands, read and decode frames, and
//! the handshake. Every byte read is handed to the caller (the raw record) before decoding.

use std::io::{self, Read, Write};
use std::time::{Duration, Instant};

use remanent_protocol::decoder::DeviceDecoder;
use remanent_protocol::{
    check_compatible, encode, Command, DeviceHello, DeviceMsg, FrameError, HandshakeError, HostMsg,
    RefuseReason, MAX_HOST_FRAME, VERSION,
};

pub use super::words::describe_refusal;

/// What can go wrong on the link.
#[derive(Debug, thiserror::Error)]
pub enum LinkError {
    /// The port reported an error.
    #[error("serial link error: {0}")]
    Io(#[from] io::Error),
    /// The other end went away (cable pulled, device reset, rig stopped).
    #[error("the serial link closed: the device or cable went away")]
    Closed,
    /// Nothing arrived for too long.
    #[error("no data from the device for {0:.1} s: is it powered and running Remanent firmware?")]
    Silent(f64),
    /// The device speaks another protocol version.
    #[error("{0}")]
    Handshake(#[from] HandshakeError),
    /// The device refused a command.
    #[error("the device refused {command}: {}", describe_refusal(.reason))]
    Refused {
        /// Which command.
        command: &'static str,
        /// Why.
        reason: RefuseReason,
    },
    /// No answer to a command.
    #[error("no answer to {0} within the timeout")]
    NoAnswer(&'static str),
    /// The bench may not measure with this calibration (nothing was started).
    #[error(transparent)]
    Calibration(#[from] crate::calibration::policy::PolicyError),
}

/// What one read produced.
#[derive(Debug, Default)]
pub struct Received {
    /// The bytes, exactly as read.
    pub bytes: Vec<u8>,
    /// Decoded frames, in order.
    pub frames: Vec<Result<DeviceMsg, FrameError>>,
}

/// A session over a port.
pub struct Session<P> {
    port: P,
    decoder: DeviceDecoder,
    next_id: u16,
    buf: Vec<u8>,
}

impl<P: Read + Write> Session<P> {
    /// A session on `port` (set a short read timeout on it).
    pub fn new(port: P) -> Self {
        Session {
            port,
            decoder: DeviceDecoder::for_device_msgs(),
            next_id: 1,
            buf: vec![0; 4096],
        }
    }

    /// Send a command; returns its id.
    pub fn send(&mut self, command: Command) -> Result<u16, LinkError> {
        let id = self.next_id;
        self.next_id = self.next_id.wrapping_add(1).max(1);
        let mut frame = [0u8; MAX_HOST_FRAME];
        let bytes =
            encode(&HostMsg { id, command }, &mut frame).expect("host frames fit MAX_HOST_FRAME");
        match self.port.write_all(bytes).and_then(|_| self.port.flush()) {
            Ok(()) => Ok(id),
            Err(e) if is_closed(&e) => Err(LinkError::Closed),
            Err(e) => Err(LinkError::Io(e)),
        }
    }

    /// Read what is there (waiting up to the port's timeout) and decode it.
    pub fn read(&mut self) -> Result<Received, LinkError> {
        let mut out = Received::default();
        match self.port.read(&mut self.buf) {
            Ok(0) => return Err(LinkError::Closed),
            Ok(n) => {
                out.bytes.extend_from_slice(&self.buf[..n]);
                let frames = &mut out.frames;
                self.decoder.feed(&self.buf[..n], |r| frames.push(r));
            }
            Err(e)
                if e.kind() == io::ErrorKind::TimedOut || e.kind() == io::ErrorKind::WouldBlock => {
            }
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(e) if is_closed(&e) => return Err(LinkError::Closed),
            Err(e) => return Err(LinkError::Io(e)),
        }
        Ok(out)
    }

    /// Say hello until the device answers (a device may drop bytes sent before a reader is
    /// attached, so the hello is repeated), then check the versions. Everything read on the
    /// way is passed to `sink`.
    pub fn handshake(
        &mut self,
        timeout: Duration,
        sink: &mut dyn FnMut(&Received),
    ) -> Result<DeviceHello, LinkError> {
        let start = Instant::now();
        let mut last_hello: Option<Instant> = None;
        loop {
            if last_hello.is_none_or(|t| t.elapsed() >= Duration::from_millis(250)) {
                self.send(Command::Hello(VERSION))?;
                last_hello = Some(Instant::now());
            }
            let got = self.read()?;
            sink(&got);
            for f in &got.frames {
                match f {
                    Ok(DeviceMsg::Hello(h)) => {
                        check_compatible(VERSION, h.version)?;
                        return Ok(h.clone());
                    }
                    Ok(DeviceMsg::Refused(r)) => {
                        if let RefuseReason::VersionMismatch(device) = r.reason {
                            return Err(LinkError::Handshake(HandshakeError {
                                host: VERSION,
                                device,
                            }));
                        }
                    }
                    _ => {}
                }
            }
            if start.elapsed() > timeout {
                return Err(LinkError::Silent(timeout.as_secs_f64()));
            }
        }
    }

    /// Hand the port back.
    pub fn into_port(self) -> P {
        self.port
    }
}

fn is_closed(e: &io::Error) -> bool {
    // a pseudo-terminal whose other side closed reports EIO; USB serial that vanished, broken pipe
    matches!(
        e.kind(),
        io::ErrorKind::BrokenPipe | io::ErrorKind::UnexpectedEof | io::ErrorKind::NotConnected
    ) || e.raw_os_error() == Some(5)
        || e.raw_os_error() == Some(19)
}
