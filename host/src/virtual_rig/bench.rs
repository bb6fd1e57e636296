//! The firmware on the model, advanced in simulated time by its owner.

use std::cell::RefCell;
use std::rc::Rc;

use remanent_firmware::device::{BoardInfo, Device};
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::heater::Heater;
use remanent_firmware::FirmwareConfig;
use remanent_protocol::{BootReport, HeaterDrive, MAX_DEVICE_FRAME};
use remanent_rig_model::peripherals::{
    SimAdcBus, SimDelay, SimHeaterEnable, SimHeaterPwm, SimThermoSpi,
};
use remanent_rig_model::rng::Rng;
use remanent_rig_model::{HeaterSwitch, Magnet, Rig, RigParams};

use super::options::{RigTruth, VirtualRigOptions, STEP_S};

use remanent_rig_model::Scene;

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

/// Every sample the device sent, numbered from the undamaged stream (a test's truth).
#[derive(Default)]
pub struct SentLog {
    decoder: Option<remanent_protocol::decoder::DeviceDecoder>,
    timeline: crate::link::Timeline,
    /// Samples by full sequence number.
    pub samples: std::collections::BTreeMap<u32, remanent_protocol::Sample>,
}

impl SentLog {
    fn feed(&mut self, bytes: &[u8]) {
        let dec = self
            .decoder
            .get_or_insert_with(remanent_protocol::decoder::DeviceDecoder::for_device_msgs);
        let mut msgs = Vec::new();
        dec.feed(bytes, |m| msgs.push(m));
        for m in msgs.into_iter().flatten() {
            match m {
                remanent_protocol::DeviceMsg::Sample(s) => self.timeline.hold(s),
                remanent_protocol::DeviceMsg::Beacon(b) => {
                    for p in self.timeline.beacon(b) {
                        self.samples.insert(p.seq, p.sample);
                    }
                }
                _ => {}
            }
        }
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
    outage_s: Option<(f64, f64)>,
    sent: Option<SentLog>,
    damaged: u64,
    survey: Vec<(Magnet, f64)>,
    survey_dwell_s: f64,
    survey_slot: Option<usize>,
    survey_t0: Option<f64>,
}

/// A hand on the virtual rig's set-up: what surrounds its sensors (for calibration steps) and
/// which magnet is in the fixture.
pub struct SceneControl(Handle);

impl SceneControl {
    /// Move the sensors into `scene`.
    pub fn set(&self, scene: Scene) {
        self.0.borrow_mut().scene = scene;
    }

    /// Put `magnet` in the fixture.
    pub fn place(&self, magnet: Magnet) {
        self.0.borrow_mut().swap(Some((magnet, 0.0)));
    }

    /// Ambient now, °C.
    pub fn ambient_c(&self) -> f64 {
        self.0.borrow().ambient_c()
    }

    /// Let the probe cool back to the fixture's temperature (a person waits before the next
    /// step).
    pub fn cool_probe(&self) {
        let mut rig = self.0.borrow_mut();
        rig.thermal.probe_c = rig.thermal.plate_c;
    }
}

/// Empty fixture between survey magnets, s.
pub const SURVEY_GAP_S: f64 = 8.0;

impl SimulatedBench {
    /// A bench with `opts`' magnet and faults, running firmware configured by `cfg`.
    pub fn new(opts: VirtualRigOptions, cfg: FirmwareConfig) -> Self {
        let cfg = FirmwareConfig {
            identified: cfg.identified && opts.identified,
            ..cfg
        };
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
            survey_t0: None,
            rig,
            device,
            noise: Rng::new(opts.seed ^ 0x005e_ed11),
            flip: opts.link_flip_probability,
            drop: opts.link_drop_probability,
            outage_s: opts.link_outage_s,
            sent: opts.keep_sent.then(SentLog::default),
            damaged: 0,
        }
    }

    /// A hand on the rig's set-up.
    pub fn scene_control(&self) -> SceneControl {
        SceneControl(self.rig.clone())
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
        if let Some(log) = &mut self.sent {
            log.feed(&clean);
        }
        let now_s = self.time_s();
        if self.outage_s.is_some_and(|(a, b)| (a..b).contains(&now_s)) {
            self.damaged += clean.len() as u64;
            return Vec::new();
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
        // an operator starts placing magnets once the host is there to read them
        let now = self.time_s();
        if !self.device.handshaken() {
            return;
        }
        let t0 = *self.survey_t0.get_or_insert(now);
        let period = SURVEY_GAP_S + self.survey_dwell_s;
        let t = now - t0;
        let index = (t / period) as usize;
        let placed = t - index as f64 * period >= SURVEY_GAP_S && index < self.survey.len();
        let want = placed.then_some(index);
        if want != self.survey_slot {
            self.survey_slot = want;
            self.rig.borrow_mut().swap(want.map(|i| self.survey[i]));
        }
    }

    /// Every sample the device sent so far (with [`VirtualRigOptions::keep_sent`]).
    pub fn sent_samples(
        &self,
    ) -> Option<&std::collections::BTreeMap<u32, remanent_protocol::Sample>> {
        self.sent.as_ref().map(|l| &l.samples)
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
