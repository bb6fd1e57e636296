//! The Pico's safe state, reached without the firmware's cooperation.
//!
//! - The panic and hard-fault handlers first drive the heater PWM pin (GP14) and the enable
//!   pin (GP15) low by direct writes to the SIO and IO_BANK0 registers and stop the PWM slice,
//!   then record why in the watchdog's scratch registers and trigger a full watchdog reset.
//! - The watchdog runs throughout and is fed only when a whole control period has completed;
//!   a hung loop (or a lock-up after a double fault) resets the chip, after which every GPIO
//!   is an input and the board's pull-downs hold the heater off (hardware-notes/safety.md).
//! - The record (`remanent_firmware::boot`) lives in SCRATCH0–3, which survive a watchdog
//!   reset but not a power-on (SCRATCH4–7 belong to the boot ROM); the latch and the lock also
//!   go to the fault log in flash ([`crate::flash`]) when they change, which a power-on keeps.

use core::ptr::{read_volatile, write_volatile};

use remanent_firmware::boot;
use remanent_firmware::device::Persisted;
use remanent_protocol::{BootReport, ResetCause};

/// Heater PWM output, GP14 (PWM slice 7, channel A).
pub const HEATER_PWM_PIN: u32 = 14;
/// Heater enable output, GP15.
pub const HEATER_ENABLE_PIN: u32 = 15;

const SIO_GPIO_OUT_CLR: *mut u32 = 0xd000_0018 as *mut u32;
const SIO_GPIO_OE_SET: *mut u32 = 0xd000_0024 as *mut u32;
const IO_BANK0_BASE: u32 = 0x4001_4000;
/// GPIO function "SIO" (software-controlled output).
const FUNCSEL_SIO: u32 = 5;
const PWM_CH7_CSR: *mut u32 = 0x4005_008c as *mut u32;
const PWM_CH7_CC: *mut u32 = 0x4005_0098 as *mut u32;
const WATCHDOG_CTRL: *mut u32 = 0x4005_8000 as *mut u32;
const WATCHDOG_REASON: *const u32 = 0x4005_8008 as *const u32;
const WATCHDOG_SCRATCH0: *mut u32 = 0x4005_800c as *mut u32;
const CTRL_TRIGGER: u32 = 1 << 31;
const REASON_TIMER: u32 = 1;

/// Both heater outputs low, by register, whatever state the drivers were in.
pub fn outputs_off() {
    let mask = (1 << HEATER_PWM_PIN) | (1 << HEATER_ENABLE_PIN);
    // SAFETY: writes to the RP2040's SIO, IO_BANK0 and PWM registers for the two heater pins
    // only; nothing else is touched and no Rust object is aliased.
    unsafe {
        write_volatile(SIO_GPIO_OUT_CLR, mask);
        write_volatile(SIO_GPIO_OE_SET, mask);
        for pin in [HEATER_ENABLE_PIN, HEATER_PWM_PIN] {
            write_volatile((IO_BANK0_BASE + 8 * pin + 4) as *mut u32, FUNCSEL_SIO);
        }
        write_volatile(PWM_CH7_CC, 0);
        write_volatile(PWM_CH7_CSR, 0);
    }
}

fn scratch() -> [u32; 4] {
    // SAFETY: reads of the watchdog's scratch registers.
    unsafe { core::array::from_fn(|i| read_volatile(WATCHDOG_SCRATCH0.add(i))) }
}

fn write_scratch(words: [u32; 4]) {
    for (i, w) in words.iter().enumerate() {
        // SAFETY: writes to the watchdog's scratch registers 0–3 (ours).
        unsafe { write_volatile(WATCHDOG_SCRATCH0.add(i), *w) };
    }
}

/// Why this start happened, from the reset reason, the record a reset keeps and the one a power
/// cycle keeps (`stored`, from the fault log in flash); then a fresh record.
pub fn take_boot_report(stored: Option<Persisted>) -> BootReport {
    // SAFETY: read of the watchdog's reset-reason register.
    let reason = unsafe { read_volatile(WATCHDOG_REASON) };
    let mut report = boot::on_start(scratch(), stored);
    if reason & REASON_TIMER != 0 {
        report.reset = ResetCause::Watchdog;
    }
    write_scratch(boot::record(Persisted {
        fault: None,
        locked: report.locked,
    }));
    report
}

/// Keep the latched fault and the lock for the next start.
pub fn persist(p: Persisted) {
    write_scratch(boot::record(p));
}

/// Heater off by register, the cause recorded, and a full-chip reset by the watchdog.
fn safe_reset(cause: ResetCause) -> ! {
    cortex_m::interrupt::disable();
    outputs_off();
    let words = scratch();
    write_scratch(boot::with_cause(words, cause));
    // SAFETY: setting the watchdog's trigger bit resets the chip at once.
    unsafe { write_volatile(WATCHDOG_CTRL, read_volatile(WATCHDOG_CTRL) | CTRL_TRIGGER) };
    loop {
        cortex_m::asm::nop();
    }
}

remanent_board_support::safe_state_handlers!(safe_reset);
