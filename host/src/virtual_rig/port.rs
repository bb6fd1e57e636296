//! The virtual rig as an in-process byte stream.

use std::io::{self, Read, Write};

use remanent_firmware::FirmwareConfig;

use super::bench::SimulatedBench;
use super::options::VirtualRigOptions;

/// The virtual rig as an in-process byte stream, driven by its reader: every read advances
/// simulated time by one sample period (no wall clock, no pseudo-terminal), so a whole cycle
/// runs as fast as the machine allows. For tests and benchmarks.
pub struct SimulatedPort {
    bench: SimulatedBench,
    pending: Vec<u8>,
    read_step_s: f64,
    /// Stop answering after this much simulated time (a pulled cable), s.
    pub cut_at_s: Option<f64>,
}

impl SimulatedPort {
    /// A port onto a new simulated bench with the reference firmware settings.
    pub fn new(opts: VirtualRigOptions) -> Self {
        SimulatedPort {
            bench: SimulatedBench::new(opts, FirmwareConfig::REFERENCE),
            pending: Vec::new(),
            read_step_s: 0.1,
            cut_at_s: None,
        }
    }

    /// The bench behind the port.
    pub fn bench(&self) -> &SimulatedBench {
        &self.bench
    }
}

/// Simulated time a read waits for bytes before it times out, s.
const READ_TIMEOUT_S: f64 = 0.2;

impl Read for SimulatedPort {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if self.cut_at_s.is_some_and(|t| self.bench.time_s() >= t) {
            return Err(io::Error::from(io::ErrorKind::BrokenPipe));
        }
        // like a port's read timeout: give up after a little simulated time with nothing
        let mut waited = 0.0;
        while self.pending.is_empty() {
            if waited >= READ_TIMEOUT_S {
                return Err(io::Error::from(io::ErrorKind::TimedOut));
            }
            self.pending = self.bench.advance(self.read_step_s);
            waited += self.read_step_s;
        }
        let n = self.pending.len().min(buf.len());
        buf[..n].copy_from_slice(&self.pending[..n]);
        self.pending.drain(..n);
        Ok(n)
    }
}

impl Write for SimulatedPort {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.bench.receive(buf);
        Ok(buf.len())
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}
