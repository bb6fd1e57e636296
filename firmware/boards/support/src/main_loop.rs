//! What every board's main loop does after it has handed the device the host's bytes: the drill
//! the host asked for carried out, the control period polled, and the frames moved out while
//! whole frames fit where they go. The board keeps its own input, clock, watchdog and lights.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use remanent_firmware::device::Device;
use remanent_firmware::{Adc, Thermocouple};
use remanent_protocol::MAX_DEVICE_FRAME;

/// One pass: carry out a drill (a test build's deliberate failure), then, when `run`, poll the
/// device at the time `now_ms` gives (a board whose time is simulated advances it there).
/// Returns whether a whole control period completed: only that may feed the watchdog.
pub fn pass<A, T, P, O>(
    device: &mut Device<A, T, P, O>,
    run: bool,
    now_ms: impl FnOnce() -> u32,
) -> bool
where
    A: Adc,
    T: Thermocouple,
    P: SetDutyCycle,
    O: OutputPin,
{
    crate::carry_out(device.take_drill());
    if !run {
        return false;
    }
    let periods = device.periods_completed();
    device.poll(now_ms());
    device.periods_completed() != periods
}

/// Move the device's frames to `send` while a whole frame still fits in `room` bytes (a board
/// that never blocks on the host gives what its buffer has free); returns the bytes moved.
pub fn frames_out<A, T, P, O>(
    device: &mut Device<A, T, P, O>,
    mut room: usize,
    mut send: impl FnMut(&[u8]),
) -> usize
where
    A: Adc,
    T: Thermocouple,
    P: SetDutyCycle,
    O: OutputPin,
{
    let mut frame = [0u8; MAX_DEVICE_FRAME];
    let mut moved = 0;
    while room >= MAX_DEVICE_FRAME {
        let Some(f) = device.next_frame(&mut frame) else {
            break;
        };
        send(f);
        room -= f.len();
        moved += f.len();
    }
    moved
}
