//! The zoo's plant behind fake sensors and switch, with the firmware on it: a block with a
//! loss to ambient, a heater whose power goes with the square of the mains voltage (through
//! the switch, which may fail shorted, and the enable line's contactor in series), and a
//! thermocouple that follows the block through its own lag, read in 0.25 °C counts.

use std::cell::RefCell;
use std::convert::Infallible;
use std::rc::Rc;

use embedded_hal::digital::{ErrorType as PinErrorType, OutputPin};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};
use remanent_firmware::device::{BoardInfo, Device, Mode};
use remanent_firmware::heater::Heater;
use remanent_firmware::Thermocouple;
use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::*;

use crate::util::FakeAdc;
use crate::zoo::{Fixture, AMBIENT_C};

/// What can go wrong with the plant.
#[derive(Debug, Default, Clone, Copy)]
pub struct Faults {
    pub tc_detached: bool,
    pub tc_open: bool,
    pub heater_open: bool,
    pub relay_shorted: bool,
    pub converter_absent: bool,
}

#[derive(Debug, Default)]
pub struct Plant {
    pub block_c: f64,
    pub tc_c: f64,
    pub detached_c: f64,
    pub output_on: bool,
    pub duty: f64,
    pub enabled: bool,
    pub faults: Faults,
    pub reads: u64,
}

type Shared = Rc<RefCell<Plant>>;

pub struct Tc(Shared);
impl Thermocouple for Tc {
    type Error = Infallible;
    fn kind(&self) -> remanent_protocol::ThermoKind {
        remanent_protocol::ThermoKind::TypeKLinear
    }
    fn read_word(&mut self) -> Result<ThermoWord, Infallible> {
        self.0.borrow_mut().reads += 1;
        let p = self.0.borrow();
        if p.faults.converter_absent {
            return Ok(ThermoWord(0));
        }
        let reading = if p.faults.tc_detached {
            p.detached_c
        } else {
            p.tc_c
        };
        let fault = p.faults.tc_open.then_some(ThermoFault::Open);
        // the cold junction flickers in its last bit, as a live chip's does
        let cj = (AMBIENT_C * 16.0) as i16 + i16::from(p.reads % 2 == 1);
        Ok(ThermoWord::from_parts(
            (reading * 4.0).round() as i16,
            cj,
            fault,
        ))
    }
}

pub struct Pwm(Shared);
impl PwmErrorType for Pwm {
    type Error = Infallible;
}
impl SetDutyCycle for Pwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        let mut p = self.0.borrow_mut();
        p.duty = f64::from(duty) / 1000.0;
        p.output_on = duty > 0;
        Ok(())
    }
}

pub struct Pin(Shared);
impl PinErrorType for Pin {
    type Error = Infallible;
}
impl OutputPin for Pin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().enabled = false;
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.0.borrow_mut().enabled = true;
        Ok(())
    }
}

/// A fixture of the zoo with the firmware on it.
pub struct Rig {
    pub fixture: Fixture,
    pub plant: Shared,
    pub device: Device<FakeAdc, Tc, Pwm, Pin>,
    pub now_ms: u32,
    step_ms: u32,
    /// The host's side of the link.
    pub link: crate::link::Link,
    /// The host sends a heartbeat every half second.
    pub heartbeat: bool,
}

impl Rig {
    pub fn new(fixture: Fixture) -> Rig {
        Rig::booted(fixture, BootReport::POWER_ON)
    }

    pub fn booted(fixture: Fixture, boot: BootReport) -> Rig {
        let plant: Shared = Rc::new(RefCell::new(Plant {
            block_c: AMBIENT_C,
            tc_c: AMBIENT_C,
            ..Plant::default()
        }));
        let cfg = fixture.config();
        let board = BoardInfo {
            name: "zoo",
            supply_mv: 3300,
            ntc_series_ohm: 10_000,
            conversion_us: 1_500,
            drills: false,
        };
        let heater = Heater::new(
            Pwm(plant.clone()),
            Pin(plant.clone()),
            cfg.limits.duty_cap_pct,
            fixture.drive(),
        );
        let device = Device::new(cfg, board, FakeAdc, Tc(plant.clone()), heater, 0, boot);
        let mut rig = Rig {
            fixture,
            plant,
            device,
            now_ms: 0,
            // time-proportioning switches whole half-cycles: poll often enough to see them
            step_ms: if fixture.mains_hz == 0 { 100 } else { 20 },
            link: Default::default(),
            heartbeat: true,
        };
        rig.send(Command::Hello(VERSION));
        rig
    }

    pub fn send(&mut self, command: Command) -> u16 {
        self.link.send(&mut self.device, self.now_ms, command)
    }

    /// Advance the plant and the device by one step.
    pub fn step(&mut self) {
        self.now_ms += self.step_ms;
        {
            let f = self.fixture;
            let mut p = self.plant.borrow_mut();
            // the switch (an SSR) may fail shorted; the enable line's contactor in series
            // still cuts the power (hardware-notes/safety.md)
            let on_fraction = if !p.enabled || p.faults.heater_open {
                0.0
            } else if p.faults.relay_shorted {
                1.0
            } else if f.mains_hz == 0 {
                p.duty
            } else {
                f64::from(u8::from(p.output_on))
            };
            let dt = f64::from(self.step_ms) / 1000.0;
            let power =
                on_fraction * f.true_w_at(p.block_c) - f.loss_w_per_k * (p.block_c - AMBIENT_C);
            p.block_c += power / f.c_j_per_k * dt;
            p.tc_c = if f.tc_lag_s > 0.0 {
                p.tc_c + (p.block_c - p.tc_c) * dt / (f.tc_lag_s + dt)
            } else {
                p.block_c
            };
            // a detached junction cools toward the air by the fixture, which warms slowly
            let air = AMBIENT_C + 10.0 + 1.5 / 60.0 * f64::from(self.now_ms) / 1000.0;
            p.detached_c += (air - p.detached_c) * dt / 20.0;
            if !p.faults.tc_detached {
                p.detached_c = p.tc_c;
            }
        }
        if self.heartbeat && self.now_ms.is_multiple_of(500) {
            self.send(Command::Heartbeat);
        }
        self.device.poll(self.now_ms);
        self.link.drain(&mut self.device);
    }

    pub fn run_for(&mut self, ms: u32) {
        let end = self.now_ms + ms;
        while self.now_ms < end {
            self.step();
        }
    }

    pub fn faults(&self) -> Vec<Fault> {
        self.link.faults()
    }

    pub fn reply_to(&self, id: u16) -> Option<Result<(), RefuseReason>> {
        self.link.reply_to(id)
    }

    pub fn latched(&self) -> Option<Fault> {
        match self.device.mode() {
            Mode::Faulted(f) => Some(*f),
            _ => None,
        }
    }

    pub fn heater_off(&self) -> bool {
        let p = self.plant.borrow();
        !p.enabled && (p.duty == 0.0 || !p.output_on)
    }
}
