//! The emulated board's safe state: what survives a reset, the panic and hard-fault handlers,
//! and a watchdog on SysTick.
//!
//! The record lives in RAM that start-up does not initialise (`.uninit`), which QEMU keeps
//! across a system reset. The heater enable is mirrored on GPIO port F pin 0, a real register
//! the handlers drive low before anything else (the simulated heater itself lives in RAM and
//! is gone with the reset). The lm3s6965's own watchdog is not modelled by QEMU, so SysTick
//! stands in: its handler resets the board when the main loop has not fed it for
//! [`WATCHDOG_TICKS`] ticks.

use core::cell::UnsafeCell;
use core::mem::MaybeUninit;
use core::ptr::write_volatile;
use core::sync::atomic::{AtomicU32, Ordering};

use cortex_m::peripheral::syst::SystClkSource;
use cortex_m_rt::exception;
use remanent_firmware::boot;
use remanent_protocol::{BootReport, ResetCause};

/// GPIO port F: data register with the mask for pin 0, direction, digital enable.
const GPIOF_DATA_PIN0: *mut u32 = (0x4002_5000 + (0x01 << 2)) as *mut u32;
const GPIOF_DIR: *mut u32 = 0x4002_5400 as *mut u32;
const GPIOF_DEN: *mut u32 = 0x4002_551C as *mut u32;
/// SysTick reload on the core clock (50 MHz on this machine): 10 ms.
const SYSTICK_RELOAD: u32 = 500_000 - 1;
/// The main loop must feed within this many SysTick periods (≈ 300 ms).
pub const WATCHDOG_TICKS: u32 = 30;

/// Four words that survive a reset.
struct Record(UnsafeCell<MaybeUninit<[u32; 4]>>);
// SAFETY: single core; written by the main loop and by handlers that never return to it.
unsafe impl Sync for Record {}

#[link_section = ".uninit.remanent"]
static RECORD: Record = Record(UnsafeCell::new(MaybeUninit::uninit()));

static TICKS_UNFED: AtomicU32 = AtomicU32::new(0);

fn write_record(words: [u32; 4]) {
    // SAFETY: plain volatile stores into our own static.
    unsafe { write_volatile(RECORD.0.get().cast::<[u32; 4]>(), words) };
}

/// Read what the last run left, then start a fresh record.
pub fn take_boot_report() -> BootReport {
    // SAFETY: any bit pattern is a valid [u32; 4]; a power-on leaves garbage, which `read`
    // rejects by its magic word.
    let words = unsafe { core::ptr::read_volatile(RECORD.0.get().cast::<[u32; 4]>()) };
    let report = boot::read(words);
    write_record(boot::record(remanent_firmware::device::Persisted {
        fault: None,
        locked: report.locked,
    }));
    report
}

/// Keep the latched fault and the lock for the next start.
pub fn persist(p: remanent_firmware::device::Persisted) {
    write_record(boot::record(p));
}

/// Mirror the heater enable on its pin.
pub fn set_enable_pin(on: bool) {
    // SAFETY: MMIO writes to GPIO port F, pin 0 only.
    unsafe {
        write_volatile(GPIOF_DIR, 1);
        write_volatile(GPIOF_DEN, 1);
        write_volatile(GPIOF_DATA_PIN0, u32::from(on));
    }
}

/// Start the SysTick watchdog.
pub fn start_watchdog(mut syst: cortex_m::peripheral::SYST) {
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(SYSTICK_RELOAD);
    syst.clear_current();
    syst.enable_interrupt();
    syst.enable_counter();
}

/// The main loop is alive.
pub fn feed_watchdog() {
    TICKS_UNFED.store(0, Ordering::Relaxed);
}

/// Heater off by register, the cause recorded, and a system reset.
fn safe_reset(cause: ResetCause) -> ! {
    cortex_m::interrupt::disable();
    // SAFETY: MMIO write to GPIO port F, pin 0: heater enable low.
    unsafe { write_volatile(GPIOF_DATA_PIN0, 0) };
    // SAFETY: the record is ours; the main loop never runs again after this.
    let words = unsafe { core::ptr::read_volatile(RECORD.0.get().cast::<[u32; 4]>()) };
    write_record(boot::with_cause(words, cause));
    cortex_m::peripheral::SCB::sys_reset()
}

#[exception]
fn SysTick() {
    if TICKS_UNFED.fetch_add(1, Ordering::Relaxed) + 1 >= WATCHDOG_TICKS {
        safe_reset(ResetCause::Watchdog);
    }
}

remanent_board_support::safe_state_handlers!(safe_reset);
