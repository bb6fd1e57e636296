//! Board support shared by the Remanent board crates: the front end every board carries
//! ([`front_end`]), one pass of the main loop and the frames out ([`main_loop`]), the stack guard
//! and the fault drills.
//!
//! The stack grows down from the top of RAM toward the statics. Without a guard an overflow
//! silently overwrites them — the interlock state among them. [`guard_stack`] puts a no-access
//! MPU region between the two, so an overflow is a fault that the board's hard-fault handler
//! turns into the safe state and a reset. The MPU stays off for the hard-fault handler itself
//! (`HFNMIENA` = 0), so that handler can still stack its frame and run.
#![no_std]

pub mod front_end;
pub mod main_loop;

use core::ptr::{read_volatile, write_volatile};

const MPU_TYPE: *const u32 = 0xE000_ED90 as *const u32;
const MPU_CTRL: *mut u32 = 0xE000_ED94 as *mut u32;
const MPU_RNR: *mut u32 = 0xE000_ED98 as *mut u32;
const MPU_RBAR: *mut u32 = 0xE000_ED9C as *mut u32;
const MPU_RASR: *mut u32 = 0xE000_EDA0 as *mut u32;
/// MPU_CTRL: enable, with the default memory map for privileged code elsewhere.
const CTRL_ENABLE_PRIVDEF: u32 = 0b101;
/// Guard size: 256 bytes, the smallest region both ARMv6-M and ARMv7-M MPUs allow.
pub const GUARD_BYTES: u32 = 256;
/// MPU_RASR: enabled, size 2^(7+1) = 256 bytes, no access (AP = 000), never execute.
const RASR_GUARD: u32 = 1 | (7 << 1) | (1 << 28);

extern "C" {
    /// End of the statics (start of the unused RAM), from cortex-m-rt's linker script.
    static __sheap: u32;
}

/// Put a no-access guard just above the statics. Returns the guard's address, or `None` when
/// the processor has no MPU (nothing is changed then).
pub fn guard_stack() -> Option<u32> {
    // SAFETY: reads and writes of the architecturally defined MPU registers; `__sheap` is a
    // linker symbol whose address only is taken.
    unsafe {
        let regions = (read_volatile(MPU_TYPE) >> 8) & 0xff;
        if regions == 0 {
            return None;
        }
        let end = core::ptr::addr_of!(__sheap) as u32;
        let guard = (end + GUARD_BYTES - 1) & !(GUARD_BYTES - 1);
        cortex_m::asm::dsb();
        write_volatile(MPU_RNR, 0);
        write_volatile(MPU_RBAR, guard);
        write_volatile(MPU_RASR, RASR_GUARD);
        write_volatile(MPU_CTRL, CTRL_ENABLE_PRIVDEF);
        cortex_m::asm::dsb();
        cortex_m::asm::isb();
        Some(guard)
    }
}

/// Recurse without end (the stack-overflow drill): each frame keeps a live buffer so the
/// compiler cannot fold the recursion away. Returns only if the guard never fires.
#[inline(never)]
pub fn recurse(depth: u32) -> u32 {
    let frame = core::hint::black_box([depth; 16]);
    if depth == u32::MAX {
        return frame[0];
    }
    recurse(depth + 1).wrapping_add(core::hint::black_box(frame[15]))
}

/// Carry out a drill the host asked for on a test build: fail as a bug would, so the board's
/// safe-state path is proven. Returns only when there is none.
pub fn carry_out(drill: Option<remanent_protocol::Drill>) {
    use remanent_protocol::Drill;
    match drill {
        Some(Drill::Panic) => panic!("fault drill"),
        Some(Drill::Hang) => loop {
            cortex_m::asm::nop();
        },
        Some(Drill::StackOverflow) => {
            let depth = recurse(0);
            panic!("the stack guard did not fire (depth {})", depth)
        }
        None => {}
    }
}

/// Define the board's panic and hard-fault handlers: both call `$reset` (the board's own path
/// to its safe state: outputs off by register, cause recorded, chip reset) with the cause.
#[macro_export]
macro_rules! safe_state_handlers {
    ($reset:path) => {
        #[cortex_m_rt::exception]
        unsafe fn HardFault(_frame: &cortex_m_rt::ExceptionFrame) -> ! {
            $reset(remanent_protocol::ResetCause::HardFault)
        }

        #[panic_handler]
        fn panic(_info: &core::panic::PanicInfo) -> ! {
            $reset(remanent_protocol::ResetCause::Panic)
        }
    };
}
