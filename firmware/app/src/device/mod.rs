//! The device state machine: commands in, samples and reports out, and the one place that
//! decides, every control period, whether the heater may be on.
//!
//! A board calls [`Device::receive`] with bytes from the host, [`Device::poll`] as often as it
//! can (at least every few milliseconds: time-proportioning switches from there) with the
//! clock's time, and [`Device::next_frame`] to get bytes to send. Nothing here blocks on the
//! link: samples wait in a bounded queue that drops the oldest, reports in an outbox that a
//! flood of replies cannot empty. Commands are handled in [`commands`].

mod commands;
mod period;

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use remanent_protocol::decoder::HostDecoder;
use remanent_protocol::{
    encode, BootReport, DeviceMsg, Drill, Fault, ResetCause, RunState, SafetyLimits, StateReport,
    MAX_DEVICE_FRAME,
};

use crate::config::FirmwareConfig;
use crate::control::Pi;
use crate::heater::Heater;
use crate::log::fw_info;
use crate::outbox::Outbox;
use crate::profile::ProfileRunner;
use crate::safety::latch::{self, TripLog};
use crate::safety::Interlocks;
use crate::sampler::Sampler;
use crate::traits::{Adc, Thermocouple};

/// Firmware version reported in the hello.
pub const FIRMWARE_VERSION: [u8; 3] = [0, 2, 0];
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
    /// A fixed duty (0..=1) under a run limit, 0.1 °C: an identification's step.
    Duty(f32, i16),
    /// Heater off until the fault is cleared.
    Faulted(Fault),
}

impl Mode {
    fn state(&self) -> RunState {
        match self {
            Mode::Idle => RunState::Idle,
            Mode::Profile(_) => RunState::Profile,
            Mode::Manual(_) | Mode::Duty(..) => RunState::Manual,
            Mode::Faulted(_) => RunState::Faulted,
        }
    }
}

/// Board wiring constants reported to the host, and what the board can do.
#[derive(Debug, Clone, Copy)]
pub struct BoardInfo {
    /// Board name.
    pub name: &'static str,
    /// Supply of the Hall sensor and thermistor divider, mV.
    pub supply_mv: u16,
    /// Thermistor divider's fixed resistor, Ω.
    pub ntc_series_ohm: u32,
    /// Time one ADC conversion takes on this board, µs (sets the fastest sampling).
    pub conversion_us: u32,
    /// The board carries out fault drills (test builds only).
    pub drills: bool,
}

/// What the board keeps across a reset (watchdog scratch registers, uninitialised RAM) and a
/// power cycle (flash, [`crate::fault_log`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Persisted {
    /// The fault latched now.
    pub fault: Option<Fault>,
    /// Heating is locked (released only by an explicit clear after a power cycle).
    pub locked: bool,
}

/// The whole device.
pub struct Device<A, T, P, O> {
    cfg: FirmwareConfig,
    board: BoardInfo,
    boot: BootReport,
    adc: A,
    tc: T,
    heater: Heater<P, O>,
    interlocks: Interlocks,
    trips: TripLog,
    pi: Pi,
    sampler: Sampler,
    decoder: HostDecoder,
    outbox: Outbox,
    mode: Mode,
    setpoint_tenth_c: Option<i16>,
    handshaken: bool,
    last_beacon_ms: u32,
    rx_errors: u32,
    periods: u32,
    drill: Option<Drill>,
    /// When the heater last had a duty, ms (boot counts: the heater is off from reset).
    last_heat_ms: u32,
    /// Faults already reported while the present latch holds (bit per fault).
    reported: u32,
}

/// A fault's bit in the reported set.
fn fault_bit(fault: Fault) -> u32 {
    1 << (fault as u32 & 31)
}

/// The fault a reset leaves latched: the reset's own, or one that was latched when the board
/// went down (a latch the host caused is forgotten; no other is).
fn boot_fault(boot: &BootReport) -> Option<Fault> {
    match boot.reset {
        ResetCause::PowerOn => boot
            .last_fault
            .filter(|f| latch::class(*f) != latch::FaultClass::Host),
        ResetCause::Watchdog => Some(Fault::Watchdog),
        ResetCause::Panic | ResetCause::HardFault => Some(Fault::Crashed),
    }
}

impl<A, T, P, O> Device<A, T, P, O>
where
    A: Adc,
    T: Thermocouple,
    P: SetDutyCycle,
    O: OutputPin,
{
    /// A device with the heater off, waiting for the host's hello. After a reset by the
    /// watchdog or a crash it comes up latched until the host clears it.
    pub fn new(
        cfg: FirmwareConfig,
        board: BoardInfo,
        adc: A,
        tc: T,
        heater: Heater<P, O>,
        now_ms: u32,
        boot: BootReport,
    ) -> Self {
        let mut heater = heater;
        let _ = heater.off();
        let mode = match boot_fault(&boot) {
            Some(f) => Mode::Faulted(f),
            None => Mode::Idle,
        };
        let mut trips = if boot.locked {
            TripLog::locked(boot.reset == ResetCause::PowerOn)
        } else {
            TripLog::default()
        };
        // a reset by the watchdog or after a crash is a trip like any other
        if boot.reset != ResetCause::PowerOn {
            if let Some(f) = boot_fault(&boot) {
                trips.record(&cfg, now_ms, f);
            }
        }
        fw_info!("boot: {} (last fault {})", boot.reset, boot.last_fault);
        Device {
            cfg,
            board,
            boot,
            adc,
            tc,
            heater,
            interlocks: Interlocks::new(cfg, now_ms),
            trips,
            pi: Pi::new(cfg.kp_per_c, cfg.ki_per_c_s),
            sampler: Sampler::new(now_ms, cfg.period_ms, cfg.oversample),
            decoder: HostDecoder::for_host_msgs(),
            outbox: Outbox::default(),
            mode,
            setpoint_tenth_c: None,
            handshaken: false,
            last_beacon_ms: now_ms,
            rx_errors: 0,
            periods: 0,
            drill: None,
            last_heat_ms: now_ms,
            reported: boot_fault(&boot).map_or(0, fault_bit),
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

    /// Control periods completed so far: a board feeds its watchdog only when this moves.
    pub fn periods_completed(&self) -> u32 {
        self.periods
    }

    /// When the host's last valid frame arrived, ms (a board in lockstep with its host waits
    /// on this: bytes that do not make a frame are not the host keeping up).
    pub fn host_last_seen_ms(&self) -> u32 {
        self.interlocks.host_last_seen_ms()
    }

    /// Whether the host has completed the handshake.
    pub fn handshaken(&self) -> bool {
        self.handshaken
    }

    /// What the board should keep across a reset.
    pub fn persisted(&self) -> Persisted {
        Persisted {
            fault: match self.mode {
                Mode::Faulted(f) => Some(f),
                _ => None,
            },
            locked: self.trips.is_locked(),
        }
    }

    /// A drill the host asked for (boards with drills enabled carry it out).
    pub fn take_drill(&mut self) -> Option<Drill> {
        self.drill.take()
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

    /// Run whatever is due at `now_ms`: a sample and control period, the heater's switching,
    /// a beacon.
    pub fn poll(&mut self, now_ms: u32) {
        // switching first, at the time the board just read: the control period below blocks
        // on the sensors, and an edge timed after it would be late by that much
        if self.heater.tick(now_ms).is_err() {
            self.trip(now_ms, Fault::HeaterDrive);
        }
        while let Some((seq, late)) = self.sampler.take_due(now_ms) {
            self.control_period(now_ms, seq, late);
            self.periods = self.periods.wrapping_add(1);
        }
        if self.handshaken && now_ms.wrapping_sub(self.last_beacon_ms) >= BEACON_INTERVAL_MS {
            self.last_beacon_ms = now_ms;
            self.send_beacon();
        }
    }

    /// The next frame to send, encoded into `buf`: reports first, then replies, then samples.
    pub fn next_frame<'b>(&mut self, buf: &'b mut [u8; MAX_DEVICE_FRAME]) -> Option<&'b [u8]> {
        let msg = match self.outbox.pop() {
            Some(m) => m,
            None => DeviceMsg::Sample(self.sampler.dequeue()?),
        };
        // cannot fail: the buffer holds the largest device frame
        encode(&msg, buf).ok()
    }

    fn enter(&mut self, now_ms: u32, mode: Mode) {
        if matches!(mode, Mode::Idle | Mode::Faulted(_)) {
            let _ = self.heater.off();
            self.pi.reset();
            self.setpoint_tenth_c = None;
        }
        self.mode = mode;
        fw_info!("state: {}", self.mode.state());
        self.report_state(now_ms);
    }

    fn report_state(&mut self, now_ms: u32) {
        let segment = match &self.mode {
            Mode::Profile(run) => run.segment_index() as u8,
            _ => 0,
        };
        self.outbox.report(DeviceMsg::State(StateReport {
            time_ms: now_ms,
            state: self.mode.state(),
            segment,
        }));
    }

    fn send_beacon(&mut self) {
        let sp = self.setpoint_tenth_c.unwrap_or(0);
        let beacon = self.sampler.beacon(self.mode.state(), sp);
        self.outbox.reply(DeviceMsg::Beacon(beacon));
    }
}

impl From<FirmwareConfig> for SafetyLimits {
    fn from(cfg: FirmwareConfig) -> Self {
        SafetyLimits {
            ceiling_tenth_c: cfg.ceiling_tenth_c(),
            duty_cap_pct: (cfg.duty_cap() * 100.0 + 0.5) as u8,
            ..cfg.limits
        }
    }
}
