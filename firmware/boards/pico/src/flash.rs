//! The fault log's flash on the Pico: the last two 4 KiB sectors of the 2 MiB QSPI flash, kept
//! out of the image by `memory.x`, read through the uncached XIP window and written through the
//! boot ROM's flash routines (rp2040-flash), from RAM with interrupts off. Nothing outside
//! those two sectors can be erased or programmed through it.

use core::ptr::read_volatile;

use embedded_storage::nor_flash::{
    ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash,
};

/// The Pico's flash, bytes.
pub const FLASH_BYTES: usize = 2 * 1024 * 1024;
/// One erase sector, bytes.
const SECTOR_BYTES: usize = 4096;
/// Where the log's two sectors start, as an offset into the flash.
pub const LOG_BASE: u32 = (FLASH_BYTES - 2 * SECTOR_BYTES) as u32;
/// The flash seen through XIP with neither cache lookup nor allocation, so a read after a
/// write sees the write.
const XIP_NOCACHE_NOALLOC: u32 = 0x1300_0000;

/// The two sectors at [`LOG_BASE`].
pub struct LogFlash;

/// An access outside the log's sectors or the flash.
#[derive(Debug, Clone, Copy, PartialEq, Eq, defmt::Format)]
pub struct OutsideLog;

impl NorFlashError for OutsideLog {
    fn kind(&self) -> NorFlashErrorKind {
        NorFlashErrorKind::OutOfBounds
    }
}

impl ErrorType for LogFlash {
    type Error = OutsideLog;
}

fn in_log(offset: u32, len: usize) -> Result<(), OutsideLog> {
    let end = offset as usize + len;
    if offset >= LOG_BASE && end <= FLASH_BYTES {
        Ok(())
    } else {
        Err(OutsideLog)
    }
}

impl ReadNorFlash for LogFlash {
    const READ_SIZE: usize = 1;

    fn read(&mut self, offset: u32, bytes: &mut [u8]) -> Result<(), OutsideLog> {
        if offset as usize + bytes.len() > FLASH_BYTES {
            return Err(OutsideLog);
        }
        for (i, b) in bytes.iter_mut().enumerate() {
            // SAFETY: a read of the memory-mapped flash, inside it (checked above).
            *b = unsafe { read_volatile((XIP_NOCACHE_NOALLOC + offset + i as u32) as *const u8) };
        }
        Ok(())
    }

    fn capacity(&self) -> usize {
        FLASH_BYTES
    }
}

impl NorFlash for LogFlash {
    const WRITE_SIZE: usize = 256;
    const ERASE_SIZE: usize = SECTOR_BYTES;

    fn erase(&mut self, from: u32, to: u32) -> Result<(), OutsideLog> {
        in_log(from, to.saturating_sub(from) as usize)?;
        // SAFETY: inside the log's sectors, sector-aligned (the log's own calls); interrupts
        // are off and the only core runs the routine from RAM, so nothing reads the flash
        // meanwhile; boot2 restores fast XIP after.
        cortex_m::interrupt::free(|_| unsafe {
            rp2040_flash::flash::flash_range_erase(from, to - from, true)
        });
        Ok(())
    }

    fn write(&mut self, offset: u32, bytes: &[u8]) -> Result<(), OutsideLog> {
        in_log(offset, bytes.len())?;
        // SAFETY: as for `erase`; page-aligned whole pages (the log writes 256-byte slots).
        cortex_m::interrupt::free(|_| unsafe {
            rp2040_flash::flash::flash_range_program(offset, bytes, true)
        });
        Ok(())
    }
}
