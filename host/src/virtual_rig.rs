//! The virtual rig: the real firmware library running against the physical model, behind one
//! end of a pseudo-terminal, so any program can open the other end as a serial port.
//!
//! Simulated time runs `speed` times faster than the wall clock; timestamps are device time.
//! On the virtual rig the heartbeat timeout is stretched to a quarter of a wall-clock second
//! when that is longer than 2 s of device time, so host scheduling jitter at high speed cannot
//! trip it; everything else runs exactly as on a board.

use std::cell::RefCell;
use std::io::{self, Read, Write};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use remanent_firmware::device::{BoardInfo, Device};
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::heater::Heater;
use remanent_firmware::FirmwareConfig;
use remanent_protocol::MAX_DEVICE_FRAME;
use remanent_rig_model::peripherals::{
    SimAdcBus, SimDelay, SimHeaterEnable, SimHeaterPwm, SimThermoSpi,
};
use remanent_rig_model::rng::Rng;
use remanent_rig_model::{Magnet, Rig, RigFaults, RigParams};
use serialport::{SerialPort, TTYPort};

/// Simulated time per step, s.
const STEP_S: f64 = 0.01;

/// How to run a virtual rig.
#[derive(Debug, Clone)]
pub struct VirtualRigOptions {
    /// The magnet in the fixture.
    pub magnet: Magnet,
    /// Rig parameters.
    pub params: RigParams,
    /// Noise seed.
    pub seed: u64,
    /// Simulated seconds per wall-clock second.
    pub speed: f64,
    /// Injected faults (times in simulated seconds).
    pub faults: RigFaults,
    /// Probability that a byte sent to the host has one bit flipped.
    pub link_flip_probability: f64,
    /// Probability that a byte sent to the host is lost.
    pub link_drop_probability: f64,
}

impl VirtualRigOptions {
    /// Defaults for `magnet`: reference rig, 60× speed, no faults.
    pub fn new(magnet: Magnet) -> Self {
        VirtualRigOptions {
            magnet,
            params: RigParams::REFERENCE,
            seed: 1,
            speed: 60.0,
            faults: RigFaults::default(),
            link_flip_probability: 0.0,
            link_drop_probability: 0.0,
        }
    }
}

/// What the rig knows that the host can only estimate (for tests and the demo's summary).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct RigTruth {
    /// Simulated time, s.
    pub time_s: f64,
    /// Magnet temperature, °C.
    pub magnet_c: f64,
    /// Plate temperature, °C.
    pub plate_c: f64,
    /// Highest magnet temperature so far, °C.
    pub max_magnet_c: f64,
    /// Irreversible loss so far, fraction.
    pub irreversible: f64,
    /// Heater power, W.
    pub heater_w: f64,
    /// Bytes corrupted or dropped on the way to the host.
    pub bytes_damaged: u64,
}

/// A running virtual rig.
pub struct VirtualRig {
    path: String,
    stop: Arc<AtomicBool>,
    truth: Arc<Mutex<RigTruth>>,
    host_bytes: Arc<AtomicU64>,
    thread: Option<JoinHandle<io::Result<()>>>,
    _slave: TTYPort,
}

/// The firmware settings the virtual board runs with.
pub fn virtual_config(speed: f64) -> FirmwareConfig {
    let mut cfg = FirmwareConfig::REFERENCE;
    let stretched = (250.0 * speed).clamp(2000.0, 65_000.0) as u16;
    cfg.limits.heartbeat_timeout_ms = cfg.limits.heartbeat_timeout_ms.max(stretched);
    cfg
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
    let rig = RefCell::new(Rig::new(opts.params, opts.magnet, opts.seed));
    rig.borrow_mut().faults = opts.faults;
    let cfg = virtual_config(opts.speed);
    let board = BoardInfo {
        name: "virtual",
        supply_mv: opts.params.ntc.supply_mv as u16,
        ntc_series_ohm: opts.params.ntc.series_ohm as u32,
    };
    let adc = ads1115::Ads1115::new(SimAdcBus::new(&rig), SimDelay, ads1115::DEFAULT_ADDRESS);
    let tc = max31855::Max31855::new(SimThermoSpi::new(&rig));
    let heater = Heater::new(
        SimHeaterPwm(&rig),
        SimHeaterEnable(&rig),
        cfg.limits.duty_cap_pct,
    );
    let mut device = Device::new(cfg, board, adc, tc, heater, 0);
    let mut noise = Rng::new(opts.seed ^ 0x005e_ed11);
    let mut rx = [0u8; 512];
    let mut out = Vec::with_capacity(4096);
    let mut frame = [0u8; MAX_DEVICE_FRAME];
    let mut damaged = 0u64;
    let wall0 = Instant::now();
    while !stop.load(Ordering::Relaxed) {
        match master.read(&mut rx) {
            Ok(n) if n > 0 => {
                host_bytes.fetch_add(n as u64, Ordering::Relaxed);
                let now = rig.borrow().time_ms();
                device.receive(now, &rx[..n]);
            }
            Ok(_) => {}
            Err(e)
                if e.kind() == io::ErrorKind::TimedOut || e.kind() == io::ErrorKind::WouldBlock => {
            }
            Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
            Err(_) => {} // nobody has the port open yet
        }
        let target_s = opts.speed * wall0.elapsed().as_secs_f64();
        let mut steps = 0;
        while rig.borrow().time_s() < target_s && steps < 2000 {
            rig.borrow_mut().advance(STEP_S);
            let now = rig.borrow().time_ms();
            device.poll(now);
            steps += 1;
            // drain as we go, like a UART emptying its buffer between samples
            while let Some(f) = device.next_frame(&mut frame) {
                out.extend_from_slice(f);
            }
        }
        for b in std::mem::take(&mut out) {
            if opts.link_drop_probability > 0.0 && noise.uniform() < opts.link_drop_probability {
                damaged += 1;
                continue;
            }
            if opts.link_flip_probability > 0.0 && noise.uniform() < opts.link_flip_probability {
                damaged += 1;
                out.push(b ^ (1 << (noise.next_u64() % 8)));
            } else {
                out.push(b);
            }
        }
        while let Some(f) = device.next_frame(&mut frame) {
            for &b in f {
                if opts.link_drop_probability > 0.0 && noise.uniform() < opts.link_drop_probability
                {
                    damaged += 1;
                    continue;
                }
                if opts.link_flip_probability > 0.0 && noise.uniform() < opts.link_flip_probability
                {
                    damaged += 1;
                    out.push(b ^ (1 << (noise.next_u64() % 8)));
                } else {
                    out.push(b);
                }
            }
        }
        if !out.is_empty() {
            // like a UART with nobody listening: what cannot be written is lost
            let _ = master.write_all(&out);
            out.clear();
        }
        {
            let r = rig.borrow();
            let mut t = truth.lock().expect("truth lock");
            *t = RigTruth {
                time_s: r.time_s(),
                magnet_c: r.thermal.magnet_c,
                plate_c: r.thermal.plate_c,
                max_magnet_c: r.magnet_state.max_c,
                irreversible: r.magnet_state.irreversible,
                heater_w: r.heater_power_w(),
                bytes_damaged: damaged,
            };
        }
        if steps == 0 {
            std::thread::sleep(Duration::from_millis(1));
        }
    }
    Ok(())
}
