//! The host's side of the link in a firmware test: command ids, the decoder, and every message
//! the device sent, with the look-ups the tests make of them.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use remanent_firmware::device::Device;
use remanent_firmware::{Adc, Thermocouple};
use remanent_protocol::decoder::DeviceDecoder;
use remanent_protocol::*;

/// What the host side holds.
pub struct Link {
    /// The next command's id.
    pub next_id: u16,
    decoder: DeviceDecoder,
    /// Every message the device sent, in order.
    pub received: Vec<DeviceMsg>,
}

impl Default for Link {
    fn default() -> Self {
        Link {
            next_id: 1,
            decoder: DeviceDecoder::for_device_msgs(),
            received: Vec::new(),
        }
    }
}

impl Link {
    /// `command` framed with the next id; the id and the frame.
    pub fn frame(&mut self, command: Command) -> (u16, Vec<u8>) {
        let id = self.next_id;
        self.next_id = self.next_id.wrapping_add(1);
        let mut buf = [0u8; MAX_HOST_FRAME];
        (
            id,
            encode(&HostMsg { id, command }, &mut buf).unwrap().to_vec(),
        )
    }

    /// Send `command` to `device` at `now_ms` and take what it answers; the command's id.
    pub fn send<A, T, P, O>(
        &mut self,
        device: &mut Device<A, T, P, O>,
        now_ms: u32,
        command: Command,
    ) -> u16
    where
        A: Adc,
        T: Thermocouple,
        P: SetDutyCycle,
        O: OutputPin,
    {
        let (id, frame) = self.frame(command);
        device.receive(now_ms, &frame);
        self.drain(device);
        id
    }

    /// Take every frame the device has to send.
    pub fn drain<A, T, P, O>(&mut self, device: &mut Device<A, T, P, O>)
    where
        A: Adc,
        T: Thermocouple,
        P: SetDutyCycle,
        O: OutputPin,
    {
        let mut buf = [0u8; MAX_DEVICE_FRAME];
        while let Some(frame) = device.next_frame(&mut buf) {
            let frame = frame.to_vec();
            let received = &mut self.received;
            self.decoder
                .feed(&frame, |r| received.push(r.expect("device frames decode")));
        }
    }

    /// The faults reported, in order.
    pub fn faults(&self) -> Vec<Fault> {
        self.received
            .iter()
            .filter_map(|m| match m {
                DeviceMsg::Fault(f) => Some(f.fault),
                _ => None,
            })
            .collect()
    }

    /// The answer to command `id`, if it came.
    pub fn reply_to(&self, id: u16) -> Option<Result<(), RefuseReason>> {
        self.received.iter().find_map(|m| match m {
            DeviceMsg::Ack(a) if a.id == id => Some(Ok(())),
            DeviceMsg::Refused(r) if r.id == id => Some(Err(r.reason)),
            _ => None,
        })
    }

    /// The device's hello, if it came.
    pub fn hello(&self) -> Option<DeviceHello> {
        self.received.iter().find_map(|m| match m {
            DeviceMsg::Hello(h) => Some(h.clone()),
            _ => None,
        })
    }
}
