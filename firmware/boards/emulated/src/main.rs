//! The Remanent firmware on an emulated Cortex-M3 board (QEMU lm3s6965evb).
//!
//! The real firmware library — drivers, sampler, control, interlocks, state machine — runs
//! unchanged against the rig model's simulated peripherals, the same model the host's virtual
//! rig uses. The host talks to it over UART0, which QEMU puts on a pseudo-terminal.
//!
//! Simulated time advances 10 ms per loop pass, in lockstep with the host: at most one second
//! of device time beyond the host's latest valid frame (bytes lost in the UART's small FIFO do
//! not count), so the emulation never outruns a host that is still reading. (The heartbeat interlock is exercised by the host-side tests and the virtual
//! rig, where time runs on its own.) A panic, a hard fault (a stack overflow hits the MPU
//! guard) or a hung loop resets the board through [`safe`]; it comes back latched and says why
//! in its hello. This board carries out the host's fault drills.
#![no_std]
#![no_main]

mod safe;
mod uart;

use core::cell::RefCell;

use cortex_m_rt::entry;
use remanent_firmware::device::Device;
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::heater::Heater;
use remanent_firmware::{Clock, FirmwareConfig};
use remanent_protocol::HeaterDrive;
use remanent_rig_model::catalogue;
use remanent_rig_model::peripherals::{
    SimAdcBus, SimClock, SimDelay, SimHeaterEnable, SimHeaterPwm, SimThermoSpi,
};
use remanent_rig_model::{Rig, RigParams};

/// Device time the emulation may run ahead of the host's latest frame, ms.
const LOCKSTEP_MS: u32 = 1000;
/// Simulated time per loop pass, s.
const STEP_S: f64 = 0.01;

#[entry]
fn main() -> ! {
    let boot = safe::take_boot_report();
    safe::set_enable_pin(false);
    let _ = remanent_board_support::guard_stack();
    let mut uart = uart::Uart0::take();
    let part = catalogue::find("RM-N42SH-D10x5").unwrap_or(&catalogue::PARTS[0]);
    let rig = RefCell::new(Rig::new(RigParams::REFERENCE, part.magnet, 1));
    let cfg = FirmwareConfig::REFERENCE;
    let board = remanent_board_support::front_end::board_info("qemu-lm3s6965", true);
    let adc = ads1115::Ads1115::new(SimAdcBus::new(&rig), SimDelay, ads1115::DEFAULT_ADDRESS);
    let tc = max31855::Max31855::new(SimThermoSpi::new(&rig));
    let drive = HeaterDrive::Pwm { frequency_hz: 500 };
    let heater = Heater::new(
        SimHeaterPwm(&rig),
        SimHeaterEnable(&rig),
        cfg.limits.duty_cap_pct,
        drive,
    );
    let mut device = Device::new(cfg, board, adc, tc, heater, 0, boot);
    let mut clock = SimClock(&rig);
    if let Some(core) = cortex_m::Peripherals::take() {
        safe::start_watchdog(core.SYST);
    }
    loop {
        while let Some(b) = uart.read_byte() {
            let now = clock.now_ms();
            device.receive(now, &[b]);
        }
        let holding = !device.handshaken()
            || clock.now_ms().wrapping_sub(device.host_last_seen_ms()) >= LOCKSTEP_MS;
        let completed = remanent_board_support::main_loop::pass(&mut device, !holding, || {
            rig.borrow_mut().advance(STEP_S);
            clock.now_ms()
        });
        // fed only when a whole control period completed, or while time is held for the host
        if holding || completed {
            safe::feed_watchdog();
        }
        safe::set_enable_pin(rig.borrow().enabled);
        safe::persist(device.persisted());
        remanent_board_support::main_loop::frames_out(&mut device, usize::MAX, |f| {
            uart.write_all(f)
        });
    }
}
