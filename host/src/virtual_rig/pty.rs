//! The virtual rig on a pseudo-terminal: a thread runs the simulated bench in step with the
//! wall clock (times `speed`) and moves bytes between it and the master side.

use std::io::{self, Read, Write};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use serialport::{SerialPort, TTYPort};

use super::bench::SimulatedBench;
use super::options::{virtual_config, RigTruth, VirtualRigOptions, STEP_S};

/// A running virtual rig.
pub struct VirtualRig {
    path: String,
    stop: Arc<AtomicBool>,
    truth: Arc<Mutex<RigTruth>>,
    host_bytes: Arc<AtomicU64>,
    thread: Option<JoinHandle<io::Result<()>>>,
    _slave: TTYPort,
}

impl VirtualRig {
    /// Start a rig on a new pseudo-terminal.
    pub fn start(opts: VirtualRigOptions) -> io::Result<VirtualRig> {
        let (mut master, slave) = TTYPort::pair().map_err(io::Error::other)?;
        let path = slave
            .name()
            .ok_or_else(|| io::Error::other("pseudo-terminal has no path"))?;
        master
            .set_timeout(Duration::from_millis(2))
            .map_err(io::Error::other)?;
        let stop = Arc::new(AtomicBool::new(false));
        let truth = Arc::new(Mutex::new(RigTruth::default()));
        let host_bytes = Arc::new(AtomicU64::new(0));
        let (s, t, h) = (stop.clone(), truth.clone(), host_bytes.clone());
        let thread = std::thread::Builder::new()
            .name("virtual-rig".into())
            .spawn(move || run(master, opts, s, t, h))?;
        Ok(VirtualRig {
            path,
            stop,
            truth,
            host_bytes,
            thread: Some(thread),
            _slave: slave,
        })
    }

    /// The port path to open.
    pub fn path(&self) -> &str {
        &self.path
    }

    /// The model's true state now.
    pub fn truth(&self) -> RigTruth {
        *self.truth.lock().expect("truth lock")
    }

    /// Bytes received from the host so far.
    pub fn bytes_from_host(&self) -> u64 {
        self.host_bytes.load(Ordering::Relaxed)
    }

    /// Stop the rig (as if unplugged): the host sees the link close.
    pub fn stop(mut self) -> io::Result<RigTruth> {
        self.shutdown()
    }

    fn shutdown(&mut self) -> io::Result<RigTruth> {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(t) = self.thread.take() {
            t.join()
                .map_err(|_| io::Error::other("virtual rig thread panicked"))??;
        }
        Ok(self.truth())
    }
}

impl Drop for VirtualRig {
    fn drop(&mut self) {
        let _ = self.shutdown();
    }
}

fn run(
    mut master: TTYPort,
    opts: VirtualRigOptions,
    stop: Arc<AtomicBool>,
    truth: Arc<Mutex<RigTruth>>,
    host_bytes: Arc<AtomicU64>,
) -> io::Result<()> {
    let speed = opts.speed;
    let mut bench = SimulatedBench::new(opts, virtual_config(speed));
    let mut rx = [0u8; 512];
    let wall0 = Instant::now();
    while !stop.load(Ordering::Relaxed) {
        match master.read(&mut rx) {
            Ok(n) if n > 0 => {
                host_bytes.fetch_add(n as u64, Ordering::Relaxed);
                bench.receive(&rx[..n]);
            }
            Ok(_) => {}
            Err(e)
                if e.kind() == io::ErrorKind::TimedOut || e.kind() == io::ErrorKind::WouldBlock => {
            }
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(_) => {} // nobody has the port open yet
        }
        let target_s = speed * wall0.elapsed().as_secs_f64();
        let behind_s = (target_s - bench.time_s()).clamp(0.0, 20.0);
        let out = bench.advance(behind_s);
        if !out.is_empty() {
            // like a UART with nobody listening: what cannot be written is lost
            let _ = master.write_all(&out);
        }
        *truth.lock().expect("truth lock") = bench.truth();
        if behind_s < STEP_S {
            std::thread::sleep(Duration::from_millis(1));
        }
    }
    Ok(())
}
