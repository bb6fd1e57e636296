//! A fake fixture: a first-order thermal plant behind fake ADC, thermocouple, PWM and pin.

use std::cell::RefCell;
use std::convert::Infallible;
use std::rc::Rc;

use embedded_hal::digital::{ErrorType as PinErrorType, OutputPin};
use embedded_hal::pwm::{ErrorType as PwmErrorType, SetDutyCycle};
use remanent_firmware::device::{BoardInfo, Device};
use remanent_firmware::heater::Heater;
use remanent_firmware::{Adc, AdcInput, FirmwareConfig, Thermocouple};
use remanent_protocol::decoder::DeviceDecoder;
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
}

pub type Shared = Rc<RefCell<Plant>>;

pub struct FakeAdc;
impl Adc for FakeAdc {
    type Error = Infallible;
    fn convert(&mut self, input: AdcInput) -> Result<i16, Infallible> {
        Ok(match input {
            AdcInput::Hall => 12_000,
            AdcInput::ProbeThermistor => 16_000,
        })
    }
}

pub struct FakeTc(pub Shared);
impl Thermocouple for FakeTc {
    type Error = Infallible;
    fn read_word(&mut self) -> Result<ThermoWord, Infallible> {
        let p = self.0.borrow();
        if let Some(w) = p.frozen_word {
            return Ok(w);
        }
        // the cold junction dithers by one count, as a real one does
        let cj = 25 * 16 + (p.ticks % 2) as i16;
        Ok(ThermoWord::from_parts(
            (p.temp_c * 4.0).round() as i16,
            cj,
            p.tc_fault,
        ))
    }
}

pub struct FakePwm(pub Shared);
impl PwmErrorType for FakePwm {
    type Error = Infallible;
}
impl SetDutyCycle for FakePwm {
    fn max_duty_cycle(&self) -> u16 {
        1000
    }
    fn set_duty_cycle(&mut self, duty: u16) -> Result<(), Infallible> {
        self.0.borrow_mut().duty = f64::from(duty) / 1000.0;
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
    pub next_id: u16,
    pub heartbeat: bool,
    decoder: DeviceDecoder,
    pub received: Vec<DeviceMsg>,
}

pub const STEP_MS: u32 = 100;

impl Bench {
    pub fn new() -> Bench {
        let plant: Shared = Rc::new(RefCell::new(Plant {
            temp_c: 22.0,
            heater_attached: true,
            ..Plant::default()
        }));
        let board = BoardInfo {
            name: "bench-test",
            supply_mv: 3300,
            ntc_series_ohm: 10_000,
        };
        let heater = Heater::new(FakePwm(plant.clone()), FakePin(plant.clone()), 85);
        let device = Device::new(
            FirmwareConfig::REFERENCE,
            board,
            FakeAdc,
            FakeTc(plant.clone()),
            heater,
            0,
        );
        let mut bench = Bench {
            plant,
            device,
            now_ms: 0,
            next_id: 1,
            heartbeat: true,
            decoder: DeviceDecoder::for_device_msgs(),
            received: Vec::new(),
        };
        bench.send(Command::Hello(VERSION));
        bench.run_for(200);
        bench
    }

    pub fn send(&mut self, command: Command) -> u16 {
        let id = self.next_id;
        self.next_id += 1;
        let mut buf = [0u8; MAX_HOST_FRAME];
        let frame = encode(&HostMsg { id, command }, &mut buf).unwrap().to_vec();
        self.device.receive(self.now_ms, &frame);
        self.drain();
        id
    }

    fn drain(&mut self) {
        let mut buf = [0u8; MAX_DEVICE_FRAME];
        while let Some(frame) = self.device.next_frame(&mut buf) {
            let frame = frame.to_vec();
            let received = &mut self.received;
            self.decoder
                .feed(&frame, |r| received.push(r.expect("device frames decode")));
        }
    }

    /// Advance the plant and the device by one step.
    pub fn step(&mut self) {
        self.now_ms += STEP_MS;
        {
            let mut p = self.plant.borrow_mut();
            let power_w = if p.enabled && p.heater_attached {
                p.duty * 150.0
            } else {
                0.0
            };
            let dt = f64::from(STEP_MS) / 1000.0;
            p.temp_c += (power_w + p.external_heat_w - 0.5 * (p.temp_c - 22.0)) / 150.0 * dt;
            p.ticks += 1;
        }
        if self.heartbeat && self.now_ms.is_multiple_of(500) {
            self.send(Command::Heartbeat);
        }
        self.device.poll(self.now_ms);
        self.drain();
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
        self.received
            .iter()
            .filter_map(|m| match m {
                DeviceMsg::Fault(f) => Some(f.fault),
                _ => None,
            })
            .collect()
    }

    pub fn reply_to(&self, id: u16) -> Option<Result<(), RefuseReason>> {
        self.received.iter().find_map(|m| match m {
            DeviceMsg::Ack(a) if a.id == id => Some(Ok(())),
            DeviceMsg::Refused(r) if r.id == id => Some(Err(r.reason)),
            _ => None,
        })
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
