//! The device state machine: commands in, samples and reports out, and the one place that
//! decides, every control period, whether the heater may be on.
//!
//! A board calls [`Device::receive`] with bytes from the host, [`Device::poll`] as often as it
//! can with the clock's time, and [`Device::next_frame`] to get bytes to send. Nothing here
//! blocks on the link: samples wait in a bounded queue that drops the oldest.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use heapless::Deque;
use remanent_protocol::decoder::HostDecoder;
use remanent_protocol::{
    encode, Ack, Command, DeviceHello, DeviceMsg, Fault, FaultReport, HostMsg, Label, Profile,
    Refusal, RefuseReason, RunState, SamplingConfig, SensorSetup, StateReport, ThermoKind,
    ThermoWord, MAX_DEVICE_FRAME, VERSION,
};

use crate::config::FirmwareConfig;
use crate::control::Pi;
use crate::drivers::ads1115::{HALL_FULL_SCALE_UV, PROBE_FULL_SCALE_UV};
use crate::heater::Heater;
use crate::profile::ProfileRunner;
use crate::safety::{Interlocks, Reading};
use crate::sampler::{Sampler, OVERSAMPLE_RANGE, PERIOD_RANGE_MS};
use crate::traits::{Adc, Thermocouple};

/// Firmware version reported in the hello.
pub const FIRMWARE_VERSION: [u8; 3] = [0, 1, 0];
/// Control messages held for the link.
pub const OUTBOX_LEN: usize = 8;
/// A beacon goes out this often, ms.
pub const BEACON_INTERVAL_MS: u32 = 1000;

/// What the heater is doing, and why.
#[derive(Debug, Clone)]
pub enum Mode {
    /// Heater off.
    Idle,
    /// Following a profile.
    Profile(ProfileRunner),
    /// Holding a setpoint, 0.1 °C.
    Manual(i16),
    /// Heater off until the fault is cleared.
    Faulted(Fault),
}

impl Mode {
    fn state(&self) -> RunState {
        match self {
            Mode::Idle => RunState::Idle,
            Mode::Profile(_) => RunState::Profile,
            Mode::Manual(_) => RunState::Manual,
            Mode::Faulted(_) => RunState::Faulted,
        }
    }
}

/// Board wiring constants reported to the host.
#[derive(Debug, Clone, Copy)]
pub struct BoardInfo {
    /// Board name.
    pub name: &'static str,
    /// Supply of the Hall sensor and thermistor divider, mV.
    pub supply_mv: u16,
    /// Thermistor divider's fixed resistor, Ω.
    pub ntc_series_ohm: u32,
}

/// The whole device.
pub struct Device<A, T, P, O> {
    cfg: FirmwareConfig,
    board: BoardInfo,
    adc: A,
    tc: T,
    heater: Heater<P, O>,
    interlocks: Interlocks,
    pi: Pi,
    sampler: Sampler,
    decoder: HostDecoder,
    outbox: Deque<DeviceMsg, OUTBOX_LEN>,
    mode: Mode,
    setpoint_tenth_c: Option<i16>,
    handshaken: bool,
    last_beacon_ms: u32,
    rx_errors: u32,
    outbox_dropped: u32,
}

impl<A, T, P, O> Device<A, T, P, O>
where
    A: Adc,
    T: Thermocouple,
    P: SetDutyCycle,
    O: OutputPin,
{
    /// A device with the heater off, waiting for the host's hello.
    pub fn new(
        cfg: FirmwareConfig,
        board: BoardInfo,
        adc: A,
        tc: T,
        heater: Heater<P, O>,
        now_ms: u32,
    ) -> Self {
        let mut heater = heater;
        let _ = heater.off();
        Device {
            cfg,
            board,
            adc,
            tc,
            heater,
            interlocks: Interlocks::new(cfg, now_ms),
            pi: Pi::new(cfg.kp_per_c, cfg.ki_per_c_s),
            sampler: Sampler::new(now_ms, cfg.period_ms, cfg.oversample),
            decoder: HostDecoder::for_host_msgs(),
            outbox: Deque::new(),
            mode: Mode::Idle,
            setpoint_tenth_c: None,
            handshaken: false,
            last_beacon_ms: now_ms,
            rx_errors: 0,
            outbox_dropped: 0,
        }
    }

    /// Current mode.
    pub fn mode(&self) -> &Mode {
        &self.mode
    }

    /// Heater duty now applied, 0..=1.
    pub fn heater_duty(&self) -> f32 {
        self.heater.duty()
    }

    /// Host frames that failed to decode.
    pub fn rx_errors(&self) -> u32 {
        self.rx_errors
    }

    /// Samples dropped on the device.
    pub fn samples_dropped(&self) -> u32 {
        self.sampler.dropped()
    }

    /// Whether the host has completed the handshake.
    pub fn handshaken(&self) -> bool {
        self.handshaken
    }

    /// Take the peripherals back (tests check that every bus transaction was consumed).
    pub fn release(self) -> (A, T, Heater<P, O>) {
        (self.adc, self.tc, self.heater)
    }

    /// Bytes from the host.
    pub fn receive(&mut self, now_ms: u32, bytes: &[u8]) {
        for &b in bytes {
            match self.decoder.push(b) {
                None => {}
                Some(Ok(msg)) => self.handle(now_ms, msg),
                Some(Err(_)) => self.rx_errors = self.rx_errors.wrapping_add(1),
            }
        }
    }

    /// Run whatever is due at `now_ms`: a sample and control period, a beacon.
    pub fn poll(&mut self, now_ms: u32) {
        while let Some((seq, late)) = self.sampler.take_due(now_ms) {
            self.control_period(now_ms, seq, late);
        }
        if self.handshaken && now_ms.wrapping_sub(self.last_beacon_ms) >= BEACON_INTERVAL_MS {
            self.last_beacon_ms = now_ms;
            self.send_beacon();
        }
    }

    /// The next frame to send, encoded into `buf`: control messages first, then samples.
    pub fn next_frame<'b>(&mut self, buf: &'b mut [u8; MAX_DEVICE_FRAME]) -> Option<&'b [u8]> {
        let msg = match self.outbox.pop_front() {
            Some(m) => m,
            None => DeviceMsg::Sample(self.sampler.dequeue()?),
        };
        // cannot fail: the buffer holds the largest device frame
        encode(&msg, buf).ok()
    }

    fn control_period(&mut self, now_ms: u32, seq: u32, late_ms: u32) {
        let acq = self.sampler.acquire(&mut self.adc, &mut self.tc);
        let reading = match (acq.thermo, acq.adc_failed) {
            (Some(w), false) => Reading::Word(w),
            _ => Reading::BusError,
        };
        let temp_now = match reading {
            Reading::Word(w) if w.fault().is_none() => Some(w.tc_tenth_c()),
            _ => None,
        };
        // what the state machine wants
        let mut finished = false;
        self.setpoint_tenth_c = match &mut self.mode {
            Mode::Profile(run) => {
                let sp = temp_now.and_then(|t| run.update(now_ms, t));
                finished = sp.is_none() && temp_now.is_some();
                sp
            }
            Mode::Manual(sp) => Some(*sp),
            Mode::Idle | Mode::Faulted(_) => None,
        };
        if finished {
            self.enter(now_ms, Mode::Idle);
        }
        let applied = self.heater.duty();
        let cap = self.heater.duty_cap();
        let wanted = self.setpoint_tenth_c.is_some();
        match self.interlocks.check(now_ms, reading, applied, cap, wanted) {
            Err(fault) => self.trip(now_ms, fault),
            Ok(Some(permit)) => {
                let sp = f32::from(self.setpoint_tenth_c.unwrap_or(0)) / 10.0;
                let t = f32::from(temp_now.unwrap_or(0)) / 10.0;
                let dt = f32::from(self.sampler.period_ms()) / 1000.0;
                let duty = self.pi.update(sp, t, dt, cap);
                if self.heater.drive(permit, duty).is_err() {
                    self.trip(now_ms, Fault::SensorBus);
                }
            }
            Ok(None) => {
                let _ = self.heater.off();
                self.pi.reset();
            }
        }
        if !self.handshaken {
            return; // nobody to send to; the schedule still advances
        }
        match (acq.thermo, acq.adc_failed) {
            (Some(word), false) => {
                let faulted = matches!(self.mode, Mode::Faulted(_));
                let sample = Sampler::sample(
                    seq,
                    late_ms,
                    &acq,
                    word,
                    self.heater.duty(),
                    self.heater.duty() > 0.0,
                    faulted,
                );
                self.sampler.enqueue(sample);
            }
            _ => self.sampler.skip(),
        }
    }

    fn trip(&mut self, now_ms: u32, fault: Fault) {
        let _ = self.heater.off();
        self.pi.reset();
        self.setpoint_tenth_c = None;
        let already = matches!(self.mode, Mode::Faulted(_));
        if !already {
            self.mode = Mode::Faulted(fault);
            let temp_tenth_c = self.interlocks.last_temp_tenth_c().unwrap_or(0);
            self.push(DeviceMsg::Fault(FaultReport {
                time_ms: now_ms,
                fault,
                temp_tenth_c,
            }));
            self.report_state(now_ms);
        }
    }

    fn enter(&mut self, now_ms: u32, mode: Mode) {
        if matches!(mode, Mode::Idle | Mode::Faulted(_)) {
            let _ = self.heater.off();
            self.pi.reset();
            self.setpoint_tenth_c = None;
        }
        self.mode = mode;
        self.report_state(now_ms);
    }

    fn report_state(&mut self, now_ms: u32) {
        let segment = match &self.mode {
            Mode::Profile(run) => run.segment_index() as u8,
            _ => 0,
        };
        self.push(DeviceMsg::State(StateReport {
            time_ms: now_ms,
            state: self.mode.state(),
            segment,
        }));
    }

    fn push(&mut self, msg: DeviceMsg) {
        if self.outbox.is_full() {
            self.outbox.pop_front();
            self.outbox_dropped = self.outbox_dropped.wrapping_add(1);
        }
        let _ = self.outbox.push_back(msg);
    }

    fn send_beacon(&mut self) {
        let sp = self.setpoint_tenth_c.unwrap_or(0);
        let beacon = self.sampler.beacon(self.mode.state(), sp);
        self.push(DeviceMsg::Beacon(beacon));
    }

    fn hello(&self) -> DeviceHello {
        DeviceHello {
            version: VERSION,
            firmware: FIRMWARE_VERSION,
            board: Label::new(self.board.name),
            sensors: SensorSetup {
                hall_full_scale_uv: HALL_FULL_SCALE_UV,
                probe_full_scale_uv: PROBE_FULL_SCALE_UV,
                supply_mv: self.board.supply_mv,
                ntc_series_ohm: self.board.ntc_series_ohm,
                thermo: ThermoKind::TypeKLinear,
                period_ms: self.sampler.period_ms(),
                oversample: self.sampler.oversample(),
            },
            limits: SafetyLimits::from(self.cfg),
        }
    }

    fn handle(&mut self, now_ms: u32, msg: HostMsg) {
        let id = msg.id;
        if let Command::Hello(version) = msg.command {
            if version != VERSION {
                self.refuse(id, RefuseReason::VersionMismatch(VERSION));
                return;
            }
            if !self.handshaken {
                // the host's record starts here: first slot one period from now
                let (period, oversample) = (self.sampler.period_ms(), self.sampler.oversample());
                self.sampler.reconfigure(
                    now_ms.wrapping_add(u32::from(period)),
                    period,
                    oversample,
                );
            }
            self.handshaken = true;
            self.interlocks.host_seen(now_ms);
            let hello = self.hello();
            self.push(DeviceMsg::Hello(hello));
            self.ack(id);
            self.send_beacon();
            return;
        }
        if !self.handshaken {
            self.refuse(id, RefuseReason::HandshakeRequired);
            return;
        }
        self.interlocks.host_seen(now_ms);
        let result = match msg.command {
            Command::Hello(_) => Ok(()),
            Command::Heartbeat => Ok(()),
            Command::Start(profile) => self.start_profile(now_ms, profile),
            Command::Manual {
                setpoint_tenth_c,
                limit_tenth_c,
            } => self.start_manual(now_ms, setpoint_tenth_c, limit_tenth_c),
            Command::Stop => {
                if !matches!(self.mode, Mode::Faulted(_)) {
                    self.enter(now_ms, Mode::Idle);
                }
                let _ = self.heater.off();
                Ok(())
            }
            Command::Configure(cfg) => self.configure(now_ms, cfg),
            Command::ClearFault => self.clear_fault(now_ms),
            Command::InjectFault => {
                self.trip(now_ms, Fault::Injected);
                Ok(())
            }
        };
        match result {
            Ok(()) => self.ack(id),
            Err(reason) => self.refuse(id, reason),
        }
    }

    fn ack(&mut self, id: u16) {
        self.push(DeviceMsg::Ack(Ack { id }));
    }

    fn refuse(&mut self, id: u16, reason: RefuseReason) {
        self.push(DeviceMsg::Refused(Refusal { id, reason }));
    }

    fn check_limit(&self, limit_tenth_c: i16) -> Result<(), RefuseReason> {
        let ceiling_tenth_c = self.cfg.ceiling_tenth_c();
        if limit_tenth_c > ceiling_tenth_c {
            return Err(RefuseReason::AboveCeiling { ceiling_tenth_c });
        }
        Ok(())
    }

    fn ready_for_run(&self) -> Result<(), RefuseReason> {
        match self.mode {
            Mode::Faulted(f) => Err(RefuseReason::FaultLatched(f)),
            Mode::Profile(_) => Err(RefuseReason::Busy),
            Mode::Idle | Mode::Manual(_) => Ok(()),
        }
    }

    fn start_profile(&mut self, now_ms: u32, profile: Profile) -> Result<(), RefuseReason> {
        self.ready_for_run()?;
        self.check_limit(profile.limit_tenth_c)?;
        if profile.segments.0.is_empty() {
            return Err(RefuseReason::Invalid);
        }
        for seg in profile.segments.0.iter() {
            self.check_limit(seg.target_tenth_c)?;
            if seg.target_tenth_c > profile.limit_tenth_c {
                return Err(RefuseReason::AboveRunLimit {
                    limit_tenth_c: profile.limit_tenth_c,
                });
            }
        }
        // the profile starts from the temperature now
        let temp = match self.tc.read_word() {
            Ok(w) => match w.fault() {
                None => w.tc_tenth_c(),
                Some(f) => return Err(RefuseReason::FaultLatched(crate::safety::thermo_fault(f))),
            },
            Err(_) => return Err(RefuseReason::FaultLatched(Fault::SensorBus)),
        };
        self.interlocks.set_run_limit(profile.limit_tenth_c);
        self.interlocks.restart_detectors();
        self.pi.reset();
        let run = ProfileRunner::start(
            profile,
            now_ms,
            temp,
            self.cfg.soak_band_tenth_c,
            self.cfg.soak_wait_max_ms,
        );
        self.enter(now_ms, Mode::Profile(run));
        Ok(())
    }

    fn start_manual(
        &mut self,
        now_ms: u32,
        setpoint_tenth_c: i16,
        limit_tenth_c: i16,
    ) -> Result<(), RefuseReason> {
        self.ready_for_run()?;
        self.check_limit(limit_tenth_c)?;
        self.check_limit(setpoint_tenth_c)?;
        if setpoint_tenth_c > limit_tenth_c {
            return Err(RefuseReason::AboveRunLimit { limit_tenth_c });
        }
        self.interlocks.set_run_limit(limit_tenth_c);
        if !matches!(self.mode, Mode::Manual(_)) {
            self.interlocks.restart_detectors();
            self.pi.reset();
        }
        self.enter(now_ms, Mode::Manual(setpoint_tenth_c));
        Ok(())
    }

    fn configure(&mut self, now_ms: u32, cfg: SamplingConfig) -> Result<(), RefuseReason> {
        if !matches!(self.mode, Mode::Idle) {
            return Err(RefuseReason::Busy);
        }
        if !PERIOD_RANGE_MS.contains(&cfg.period_ms) || !OVERSAMPLE_RANGE.contains(&cfg.oversample)
        {
            return Err(RefuseReason::Invalid);
        }
        self.sampler
            .reconfigure(now_ms, cfg.period_ms, cfg.oversample);
        self.send_beacon();
        Ok(())
    }

    fn clear_fault(&mut self, now_ms: u32) -> Result<(), RefuseReason> {
        let fault = match self.mode {
            Mode::Faulted(f) => f,
            _ => return Err(RefuseReason::NoFaultLatched),
        };
        let word_ok = self
            .tc
            .read_word()
            .ok()
            .filter(|w: &ThermoWord| w.fault().is_none());
        match fault {
            Fault::OverTemperature => {
                let limit = self.interlocks.run_limit_tenth_c();
                let below_tenth_c = limit - self.cfg.limits.reset_margin_tenth_c;
                let temp_tenth_c = word_ok
                    .ok_or(RefuseReason::FaultLatched(fault))?
                    .tc_tenth_c();
                if temp_tenth_c >= below_tenth_c {
                    return Err(RefuseReason::TooHotToClear {
                        temp_tenth_c,
                        below_tenth_c,
                    });
                }
            }
            Fault::ThermocoupleOpen
            | Fault::ThermocoupleShortGnd
            | Fault::ThermocoupleShortVcc
            | Fault::SensorBus => {
                word_ok.ok_or(RefuseReason::FaultLatched(fault))?;
            }
            _ => {}
        }
        self.interlocks.restart_detectors();
        self.interlocks.set_run_limit(self.cfg.ceiling_tenth_c());
        self.enter(now_ms, Mode::Idle);
        Ok(())
    }
}

use remanent_protocol::SafetyLimits;

impl From<FirmwareConfig> for SafetyLimits {
    fn from(cfg: FirmwareConfig) -> Self {
        SafetyLimits {
            ceiling_tenth_c: cfg.ceiling_tenth_c(),
            ..cfg.limits
        }
    }
}
