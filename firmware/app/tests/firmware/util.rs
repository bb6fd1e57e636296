//! A fake fixture: a first-order thermal plant behind fake ADC, thermocouple, PWM and pin.

use std::cell::RefCell;
use std::convert::Infallible;
use std::rc::Rc;

use embedded_hal::digital::{ErrorType as PinErrorType, OutputPin};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};
use remanent_firmware::device::{BoardInfo, Device};
use remanent_firmware::heater::Heater;
use remanent_firmware::{Adc, AdcInput, FirmwareConfig, Thermocouple};
use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::*;

/// The plant's state, shared by the fakes.
#[derive(Debug, Default)]
pub struct Plant {
    pub temp_c: f64,
    pub duty: f64,
    pub enabled: bool,
    pub heater_attached: bool,
    pub tc_fault: Option<ThermoFault>,
    pub frozen_word: Option<ThermoWord>,
    pub external_heat_w: f64,
    pub ticks: u64,
    /// The converter is absent: its data line reads all zeros.
    pub converter_absent: bool,
    /// The thermocouple's own reading is stuck at these counts; the cold junction lives on.
    pub stuck_tc_counts: Option<i16>,
    /// The SPI bus fails.
    pub bus_error: bool,
    /// The junction slipped off the block at this temperature and tick; it reads air
    /// warming at 1.5 °C/min from there.
    pub detached_at: Option<(f64, u64)>,
    /// The switch failed on: full power whatever the duty and the enable pin.
    pub switch_stuck_on: bool,
    /// Setting a non-zero duty fails (the PWM peripheral is broken).
    pub pwm_fails: bool,
}

/// Heater power of the fake fixture at full duty, W (the bench's plant model says so too).
pub const HEATER_W: f64 = 150.0;
/// Its heat capacity, J/K, and loss, W/K.
pub const HEAT_CAPACITY_J_PER_K: f64 = 150.0;
pub const LOSS_W_PER_K: f64 = 0.5;

/// The firmware's settings for the fake fixture: the reference ones with its plant model.
pub fn bench_config() -> FirmwareConfig {
    let mut cfg = FirmwareConfig::REFERENCE;
    cfg.plant.heater_w = HEATER_W as f32;
    cfg.plant.heat_capacity_j_per_k = HEAT_CAPACITY_J_PER_K as f32;
    cfg.plant.loss_w_per_k = LOSS_W_PER_K as f32;
    cfg
}

pub type Shared = Rc<RefCell<Plant>>;

/// The fake converter's full scale on the Hall input, µV: not the ADS1115's, so a hello that
/// carries it shows the device asks its converter rather than naming a chip.
pub const FAKE_HALL_FULL_SCALE_UV: u32 = 1_024_000;

pub struct FakeAdc;
impl Adc for FakeAdc {
    type Error = Infallible;
    fn convert(&mut self, input: AdcInput) -> Result<i16, Infallible> {
        Ok(match input {
            AdcInput::Hall => 12_000,
            AdcInput::ProbeThermistor => 16_000,
        })
    }
    fn full_scale_uv(&self, input: AdcInput) -> u32 {
        match input {
            AdcInput::Hall => FAKE_HALL_FULL_SCALE_UV,
            AdcInput::ProbeThermistor => 4_096_000,
        }
    }
}

/// A bus or peripheral failure of the fakes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Broken;

impl embedded_hal::pwm::Error for Broken {
    fn kind(&self) -> embedded_hal::pwm::ErrorKind {
        embedded_hal::pwm::ErrorKind::Other
    }
}

pub struct FakeTc(pub Shared);
impl Thermocouple for FakeTc {
    type Error = Broken;
    fn kind(&self) -> remanent_protocol::ThermoKind {
        remanent_protocol::ThermoKind::TypeKLinear
    }
    fn read_word(&mut self) -> Result<ThermoWord, Broken> {
        let p = self.0.borrow();
        if p.bus_error {
            return Err(Broken);
        }
        if p.converter_absent {
            return Ok(ThermoWord(0));
        }
        if let Some(w) = p.frozen_word {
            return Ok(w);
        }
        // the cold junction dithers by one count, as a real one does
        let cj = 25 * 16 + (p.ticks % 2) as i16;
        let reading_c = match p.detached_at {
            Some((t0, tick0)) => t0 + 1.5 / 60.0 * (p.ticks - tick0) as f64 * 0.1,
            None => p.temp_c,
        };
        let counts = p
            .stuck_tc_counts
            .unwrap_or((reading_c * 4.0).round() as i16);
        Ok(ThermoWord::from_parts(counts, cj, p.tc_fault))
    }
}

pub struct FakePwm(pub Shared);
impl PwmErrorType for FakePwm {
    type Error = Broken;
}
impl SetDutyCycle for FakePwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Broken> {
        let mut p = self.0.borrow_mut();
        if p.pwm_fails && duty > 0 {
            return Err(Broken);
        }
        p.duty = f64::from(duty) / 1000.0;
        Ok(())
    }
}

pub struct FakePin(pub Shared);
impl PinErrorType for FakePin {
    type Error = Infallible;
}
impl OutputPin for FakePin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().enabled = false;
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().enabled = true;
        Ok(())
    }
}

pub type FakeDevice = Device<FakeAdc, FakeTc, FakePwm, FakePin>;

/// The device on the fake fixture, with a clock, a host-side decoder and what arrived.
pub struct Bench {
    pub plant: Shared,
    pub device: FakeDevice,
    pub now_ms: u32,
    pub heartbeat: bool,
    /// Every step, a burst of commands arrives before the link is drained.
    pub flood: bool,
    /// The host's side of the link.
    pub link: crate::link::Link,
}

pub const STEP_MS: u32 = 100;

impl Bench {
    pub fn new() -> Bench {
        Bench::with(
            bench_config(),
            BootReport::POWER_ON,
            HeaterDrive::Pwm { frequency_hz: 500 },
        )
    }

    /// A bench with settings, a boot record and a heater drive of the test's choosing.
    pub fn with(cfg: FirmwareConfig, boot: BootReport, drive: HeaterDrive) -> Bench {
        let plant: Shared = Rc::new(RefCell::new(Plant {
            temp_c: 22.0,
            heater_attached: true,
            ..Plant::default()
        }));
        let board = BoardInfo {
            name: "bench-test",
            supply_mv: 3300,
            ntc_series_ohm: 10_000,
            conversion_us: 1_500,
            drills: false,
        };
        let heater = Heater::new(FakePwm(plant.clone()), FakePin(plant.clone()), 85, drive);
        let device = Device::new(cfg, board, FakeAdc, FakeTc(plant.clone()), heater, 0, boot);
        let mut bench = Bench {
            plant,
            device,
            now_ms: 0,
            heartbeat: true,
            flood: false,
            link: Default::default(),
        };
        bench.send(Command::Hello(VERSION));
        bench.run_for(200);
        bench
    }

    pub fn send(&mut self, command: Command) -> u16 {
        self.link.send(&mut self.device, self.now_ms, command)
    }

    /// Advance the plant and the device by one step.
    pub fn step(&mut self) {
        self.now_ms += STEP_MS;
        {
            let mut p = self.plant.borrow_mut();
            let power_w = if p.switch_stuck_on {
                HEATER_W
            } else if p.enabled && p.heater_attached {
                p.duty * HEATER_W
            } else {
                0.0
            };
            let dt = f64::from(STEP_MS) / 1000.0;
            let loss_w = LOSS_W_PER_K * (p.temp_c - 22.0);
            p.temp_c += (power_w + p.external_heat_w - loss_w) / HEAT_CAPACITY_J_PER_K * dt;
            p.ticks += 1;
        }
        if self.flood {
            for _ in 0..40 {
                let (_, frame) = self.link.frame(Command::Stop);
                self.device.receive(self.now_ms, &frame);
            }
        }
        if self.heartbeat && self.now_ms.is_multiple_of(500) {
            self.send(Command::Heartbeat);
        }
        self.device.poll(self.now_ms);
        self.link.drain(&mut self.device);
    }

    pub fn run_for(&mut self, ms: u32) {
        for _ in 0..ms / STEP_MS {
            self.step();
        }
    }

    /// Step until `cond` holds; returns the time it took, or panics after `limit_ms`.
    pub fn run_until(&mut self, limit_ms: u32, mut cond: impl FnMut(&Bench) -> bool) -> u32 {
        let start = self.now_ms;
        while !cond(self) {
            assert!(
                self.now_ms - start <= limit_ms,
                "condition not reached within {limit_ms} ms"
            );
            self.step();
        }
        self.now_ms - start
    }

    pub fn heater_off(&self) -> bool {
        let p = self.plant.borrow();
        !p.enabled && p.duty == 0.0
    }

    pub fn faults(&self) -> Vec<Fault> {
        self.link.faults()
    }

    pub fn reply_to(&self, id: u16) -> Option<Result<(), RefuseReason>> {
        self.link.reply_to(id)
    }

    pub fn start_manual(&mut self, setpoint_c: f64, limit_c: f64) -> u16 {
        self.send(Command::Manual {
            setpoint_tenth_c: (setpoint_c * 10.0) as i16,
            limit_tenth_c: (limit_c * 10.0) as i16,
        })
    }
}

pub fn profile(limit_c: f64, segments: &[(f64, f64, u32)]) -> Profile {
    let mut segs = Segments::default();
    for &(target, rate, hold) in segments {
        segs.0
            .push(Segment {
                target_tenth_c: (target * 10.0) as i16,
                ramp_tenth_c_per_min: (rate * 10.0) as u16,
                hold_s: hold,
            })
            .unwrap();
    }
    Profile {
        limit_tenth_c: (limit_c * 10.0) as i16,
        segments: segs,
    }
}
