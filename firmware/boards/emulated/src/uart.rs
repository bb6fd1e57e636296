//! The lm3s6965's UART0 (an ARM PL011) by its registers: enough for QEMU, polled, no interrupts.

use core::ptr::{read_volatile, write_volatile};

const BASE: usize = 0x4000_C000;
const DR: usize = BASE;
const FR: usize = BASE + 0x18;
const CTL: usize = BASE + 0x30;
const FR_RXFE: u32 = 1 << 4;
const FR_TXFF: u32 = 1 << 5;
const CTL_UARTEN: u32 = 1;
const CTL_TXE: u32 = 1 << 8;
const CTL_RXE: u32 = 1 << 9;

/// UART0.
pub struct Uart0 {
    _private: (),
}

impl Uart0 {
    /// Enable the UART with transmit and receive.
    pub fn take() -> Uart0 {
        // SAFETY: fixed MMIO address of UART0 on this machine; only this type touches it.
        unsafe { write_volatile(CTL as *mut u32, CTL_UARTEN | CTL_TXE | CTL_RXE) };
        Uart0 { _private: () }
    }

    /// A received byte, if one is waiting.
    pub fn read_byte(&mut self) -> Option<u8> {
        // SAFETY: MMIO reads of UART0's flag and data registers.
        unsafe {
            if read_volatile(FR as *const u32) & FR_RXFE != 0 {
                None
            } else {
                Some(read_volatile(DR as *const u32) as u8)
            }
        }
    }

    /// Send bytes, waiting while the transmit FIFO is full.
    pub fn write_all(&mut self, bytes: &[u8]) {
        for &b in bytes {
            // SAFETY: MMIO access to UART0's flag and data registers.
            unsafe {
                while read_volatile(FR as *const u32) & FR_TXFF != 0 {}
                write_volatile(DR as *mut u32, u32::from(b));
            }
        }
    }
}
