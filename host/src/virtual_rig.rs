//! The virtual rig: the real firmware library running against the physical model, behind one
//! end of a pseudo-terminal, so any program can open the other end as a serial port.
//!
//! Simulated time runs `speed` times faster than the wall clock; timestamps are device time.
//! On the virtual rig the heartbeat timeout is stretched to one wall-clock second (at most 65 s
//! of device time) when that is longer than 2 s of device time, so host scheduling jitter at
//! high speed cannot trip it; everything else runs exactly as on a board. The heartbeat
//! interlock itself is tested on the in-process [`SimulatedPort`], which keeps the 2 s.

use std::cell::RefCell;
use std::io::{self, Read, Write};
use std::rc::Rc;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use crate::calibration::{
    Calibration, GapCalibration, HallCalibration, NtcCalibration, ThermocoupleCalibration,
};
use remanent_firmware::device::{BoardInfo, Device};
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::heater::Heater;
use remanent_firmware::FirmwareConfig;
use remanent_protocol::{BootReport, HeaterDrive, MAX_DEVICE_FRAME};
use remanent_rig_model::peripherals::{
    SimAdcBus, SimDelay, SimHeaterEnable, SimHeaterPwm, SimThermoSpi,
};
use remanent_rig_model::rng::Rng;
use remanent_rig_model::{HeaterSwitch, Magnet, Rig, RigFaults, RigParams};
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
    /// A room-temperature survey: magnets (with an earlier irreversible loss, a fraction)
    /// placed in the fixture one after another, as a user would.
    pub survey: Vec<(Magnet, f64)>,
    /// How long each survey magnet stays in the fixture, s (an empty fixture for 8 s between).
    pub survey_dwell_s: f64,
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
            survey: Vec::new(),
            survey_dwell_s: 20.0,
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

/// A set of `n` copies of `magnet` with a realistic ±0.3 % spread in Br, where the 1-based
/// indices in `damaged` have lost `loss` (a fraction) of their flux.
pub fn survey_set(
    magnet: Magnet,
    n: usize,
    damaged: &[usize],
    loss: f64,
    seed: u64,
) -> Vec<(Magnet, f64)> {
    let mut rng = Rng::new(seed ^ 0xa5a5);
    (1..=n)
        .map(|i| {
            let mut m = magnet;
            m.br_20_t *= 1.0 + 0.003 * rng.gauss();
            (m, if damaged.contains(&i) { loss } else { 0.0 })
        })
        .collect()
}

/// The firmware settings the virtual board runs with.
pub fn virtual_config(speed: f64) -> FirmwareConfig {
    let mut cfg = FirmwareConfig::REFERENCE;
    let stretched = (1000.0 * speed).clamp(2000.0, 65_000.0) as u16;
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

type Handle = Rc<RefCell<Rig>>;
type SimDevice = Device<
    ads1115::Ads1115<SimAdcBus<Handle>, SimDelay>,
    max31855::Max31855<SimThermoSpi<Handle>>,
    SimHeaterPwm<Handle>,
    SimHeaterEnable<Handle>,
>;

/// The drive the virtual board uses for the modelled switch.
pub fn heater_drive(params: &RigParams) -> HeaterDrive {
    match params.switch {
        HeaterSwitch::Dc => HeaterDrive::Pwm { frequency_hz: 500 },
        HeaterSwitch::ZeroCross { half_cycle_s } => HeaterDrive::TimeProportioning {
            window_ms: 2000,
            half_cycle_us: (half_cycle_s * 1e6).round() as u16,
        },
    }
}

/// The firmware on the model, advanced in simulated time by its owner: the engine behind the
/// pseudo-terminal rig and the in-process [`SimulatedPort`].
pub struct SimulatedBench {
    rig: Handle,
    device: SimDevice,
    noise: Rng,
    flip: f64,
    drop: f64,
    damaged: u64,
    survey: Vec<(Magnet, f64)>,
    survey_dwell_s: f64,
    survey_slot: Option<usize>,
}

/// Empty fixture between survey magnets, s.
pub const SURVEY_GAP_S: f64 = 8.0;

impl SimulatedBench {
    /// A bench with `opts`' magnet and faults, running firmware configured by `cfg`.
    pub fn new(opts: VirtualRigOptions, cfg: FirmwareConfig) -> Self {
        let rig: Handle = Rc::new(RefCell::new(Rig::new(opts.params, opts.magnet, opts.seed)));
        rig.borrow_mut().faults = opts.faults;
        let board = BoardInfo {
            name: "virtual",
            supply_mv: opts.params.ntc.supply_mv as u16,
            ntc_series_ohm: opts.params.ntc.series_ohm as u32,
            conversion_us: 1_500,
            drills: false,
        };
        let adc = ads1115::Ads1115::new(
            SimAdcBus::new(rig.clone()),
            SimDelay,
            ads1115::DEFAULT_ADDRESS,
        );
        let tc = max31855::Max31855::new(SimThermoSpi::new(rig.clone()));
        let heater = Heater::new(
            SimHeaterPwm(rig.clone()),
            SimHeaterEnable(rig.clone()),
            cfg.limits.duty_cap_pct,
            heater_drive(&opts.params),
        );
        let device = Device::new(cfg, board, adc, tc, heater, 0, BootReport::POWER_ON);
        if !opts.survey.is_empty() {
            rig.borrow_mut().swap(None);
        }
        SimulatedBench {
            survey: opts.survey,
            survey_dwell_s: opts.survey_dwell_s,
            survey_slot: None,
            rig,
            device,
            noise: Rng::new(opts.seed ^ 0x005e_ed11),
            flip: opts.link_flip_probability,
            drop: opts.link_drop_probability,
            damaged: 0,
        }
    }

    /// Simulated time, s.
    pub fn time_s(&self) -> f64 {
        self.rig.borrow().time_s()
    }

    /// Bytes from the host.
    pub fn receive(&mut self, bytes: &[u8]) {
        let now = self.rig.borrow().time_ms();
        self.device.receive(now, bytes);
    }

    /// Advance by `dt_s` in 10 ms steps; returns what the device sent meanwhile (with the
    /// configured link damage applied).
    pub fn advance(&mut self, dt_s: f64) -> Vec<u8> {
        let mut clean = Vec::new();
        let mut frame = [0u8; MAX_DEVICE_FRAME];
        let end = self.time_s() + dt_s;
        loop {
            // drain as we go, like a UART emptying its buffer between samples
            while let Some(f) = self.device.next_frame(&mut frame) {
                clean.extend_from_slice(f);
            }
            if self.time_s() + STEP_S * 0.5 > end {
                break;
            }
            self.rig.borrow_mut().advance(STEP_S);
            self.survey_step();
            let now = self.rig.borrow().time_ms();
            self.device.poll(now);
        }
        if self.flip == 0.0 && self.drop == 0.0 {
            return clean;
        }
        let mut out = Vec::with_capacity(clean.len());
        for b in clean {
            if self.drop > 0.0 && self.noise.uniform() < self.drop {
                self.damaged += 1;
            } else if self.flip > 0.0 && self.noise.uniform() < self.flip {
                self.damaged += 1;
                out.push(b ^ (1 << (self.noise.next_u64() % 8)));
            } else {
                out.push(b);
            }
        }
        out
    }

    fn survey_step(&mut self) {
        if self.survey.is_empty() {
            return;
        }
        let period = SURVEY_GAP_S + self.survey_dwell_s;
        let t = self.time_s();
        let index = (t / period) as usize;
        let placed = t - index as f64 * period >= SURVEY_GAP_S && index < self.survey.len();
        let want = placed.then_some(index);
        if want != self.survey_slot {
            self.survey_slot = want;
            self.rig.borrow_mut().swap(want.map(|i| self.survey[i]));
        }
    }

    /// The model's truth now.
    pub fn truth(&self) -> RigTruth {
        let r = self.rig.borrow();
        RigTruth {
            time_s: r.time_s(),
            magnet_c: r.thermal.magnet_c,
            plate_c: r.thermal.plate_c,
            max_magnet_c: r.magnet_state.max_c,
            irreversible: r.magnet_state.irreversible,
            heater_w: r.heater_power_w(),
            bytes_damaged: self.damaged,
        }
    }
}

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

impl Read for SimulatedPort {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if self.cut_at_s.is_some_and(|t| self.bench.time_s() >= t) {
            return Err(io::Error::from(io::ErrorKind::BrokenPipe));
        }
        let mut waited = 0.0;
        while self.pending.is_empty() {
            if waited >= 5.0 {
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

impl Calibration {
    /// The calibration of the built-in virtual rig: its model's true constants, with the
    /// uncertainties a careful calibration of a real rig would reach.
    pub fn virtual_rig(params: &RigParams) -> Calibration {
        Calibration {
            hall: HallCalibration {
                sensor: params.hall.sensor,
                sensitivity_tc_u_pct_per_c: 0.002,
                offset_tc_u_mv_per_c: 0.001,
                full_scale_mv: params.hall_full_scale_mv,
            },
            gap: GapCalibration {
                standoff: params.hall.standoff,
                gap_u_mm: 0.05,
                standoff_cte_u_per_k: 1.0e-6,
            },
            ntc: NtcCalibration {
                thermistor: params.ntc,
                full_scale_mv: params.probe_full_scale_mv,
            },
            thermocouple: ThermocoupleCalibration {
                offset_c: 0.0,
                gain_tolerance_pct: 0.4,
            },
        }
    }
}
