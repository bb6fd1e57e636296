//! The fault log that survives a power cycle: the latched fault and the lockout, kept as small
//! records appended to two erase sectors of NOR flash, and read back at start-up.
//!
//! Written sparingly: a record only when what is kept changes (a latch, a clear, the lock), so a
//! sector is erased once per `slots` changes. Each record carries a sequence number and a CRC;
//! start-up takes the valid record with the highest sequence number in either sector, so a
//! write cut short by a power loss (a torn or half-programmed slot) leaves the one before it in
//! force. When a sector is full the next record goes to the first slot of the other one, erased
//! just before: the newest complete record is never erased before its successor is written.

use crc::{Crc, CRC_32_ISCSI};
use embedded_storage::nor_flash::NorFlash;

use crate::boot;
use crate::device::Persisted;

/// A record's bytes in its slot (a slot is at least this and the flash's write size).
pub const RECORD_BYTES: usize = 16;
/// The largest write size a log can use (the RP2040's flash programs 256-byte pages).
pub const MAX_SLOT_BYTES: usize = 256;
/// Marks a record ("RFL1").
const MAGIC: u32 = 0x5246_4c31;
const CRC: Crc<u32> = Crc::<u32>::new(&CRC_32_ISCSI);

/// What went wrong with the log.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Error<E> {
    /// The flash driver failed.
    Flash(E),
    /// The flash's write or erase size does not suit a log of two sectors.
    Geometry,
}

/// Where the next record goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Cursor {
    sector: u32,
    slot: u32,
}

/// The log over two erase sectors starting at `base`.
pub struct FaultLog<F> {
    flash: F,
    base: u32,
    seq: u32,
    next: Cursor,
    last: Option<Persisted>,
    erases: u32,
}

/// `x` is a whole number of `to`.
fn aligned(x: usize, to: usize) -> bool {
    x / to * to == x
}

fn encode(seq: u32, p: Persisted) -> [u8; RECORD_BYTES] {
    let mut r = [0u8; RECORD_BYTES];
    r[0..4].copy_from_slice(&seq.to_le_bytes());
    r[4] = boot::fault_code(p.fault) as u8;
    r[5] = u8::from(p.locked);
    r[8..12].copy_from_slice(&MAGIC.to_le_bytes());
    let crc = CRC.checksum(&r[..12]);
    r[12..16].copy_from_slice(&crc.to_le_bytes());
    r
}

fn decode(r: &[u8; RECORD_BYTES]) -> Option<(u32, Persisted)> {
    let word = |i: usize| u32::from_le_bytes([r[i], r[i + 1], r[i + 2], r[i + 3]]);
    if word(8) != MAGIC || word(12) != CRC.checksum(&r[..12]) || r[5] > 1 || r[6..8] != [0, 0] {
        return None;
    }
    let fault = match r[4] {
        0xff => None,
        code => Some(boot::fault_from_code(u32::from(code))?),
    };
    Some((
        word(0),
        Persisted {
            fault,
            locked: r[5] == 1,
        },
    ))
}

impl<F: NorFlash> FaultLog<F> {
    /// Bytes a record's slot takes.
    pub const SLOT_BYTES: usize = if F::WRITE_SIZE > RECORD_BYTES {
        F::WRITE_SIZE
    } else {
        RECORD_BYTES
    };

    fn slots() -> u32 {
        (F::ERASE_SIZE / Self::SLOT_BYTES) as u32
    }

    fn address(&self, c: Cursor) -> u32 {
        self.base + c.sector * F::ERASE_SIZE as u32 + c.slot * Self::SLOT_BYTES as u32
    }

    /// Open the log at `base` (erase-aligned, two sectors): find the newest valid record.
    pub fn open(mut flash: F, base: u32) -> Result<Self, Error<F::Error>> {
        let slot = Self::SLOT_BYTES;
        if slot > MAX_SLOT_BYTES
            || !aligned(F::ERASE_SIZE, slot)
            || F::ERASE_SIZE / slot < 2
            || !aligned(base as usize, F::ERASE_SIZE)
            || base as usize + 2 * F::ERASE_SIZE > flash.capacity()
            || !aligned(RECORD_BYTES, F::READ_SIZE)
        {
            return Err(Error::Geometry);
        }
        let mut newest: Option<(u32, Persisted, Cursor)> = None;
        for sector in 0..2 {
            for s in 0..Self::slots() {
                let at = Cursor { sector, slot: s };
                let addr = base + sector * F::ERASE_SIZE as u32 + s * slot as u32;
                let mut r = [0u8; RECORD_BYTES];
                flash.read(addr, &mut r).map_err(Error::Flash)?;
                if let Some((seq, p)) = decode(&r) {
                    if newest.is_none_or(|(best, _, _)| seq > best) {
                        newest = Some((seq, p, at));
                    }
                }
            }
        }
        let (seq, last, next) = match newest {
            Some((seq, p, at)) => (seq, Some(p), Self::after(at)),
            None => (0, None, Cursor { sector: 0, slot: 0 }),
        };
        Ok(FaultLog {
            flash,
            base,
            seq,
            next,
            last,
            erases: 0,
        })
    }

    fn after(c: Cursor) -> Cursor {
        if c.slot + 1 < Self::slots() {
            Cursor {
                sector: c.sector,
                slot: c.slot + 1,
            }
        } else {
            Cursor {
                sector: 1 - c.sector,
                slot: 0,
            }
        }
    }

    /// The newest record read or written: what the board kept when it last changed.
    pub fn last(&self) -> Option<Persisted> {
        self.last
    }

    /// Sectors erased since the log was opened.
    pub fn erases(&self) -> u32 {
        self.erases
    }

    /// Keep `p`; writes only when it differs from the newest record. True when written.
    pub fn store(&mut self, p: Persisted) -> Result<bool, Error<F::Error>> {
        if self.last == Some(p) || (self.last.is_none() && p == Persisted::default()) {
            return Ok(false);
        }
        // the next blank slot; a slot not blank (a write cut short) is skipped, and a sector is
        // erased only when entered, which the newest record (always behind) is never in
        loop {
            let at = self.next;
            if at.slot == 0 {
                let start = self.base + at.sector * F::ERASE_SIZE as u32;
                self.flash
                    .erase(start, start + F::ERASE_SIZE as u32)
                    .map_err(Error::Flash)?;
                self.erases += 1;
                break;
            }
            let mut r = [0u8; RECORD_BYTES];
            self.flash
                .read(self.address(at), &mut r)
                .map_err(Error::Flash)?;
            if r.iter().all(|b| *b == 0xff) {
                break;
            }
            self.next = Self::after(at);
        }
        let seq = self.seq.wrapping_add(1);
        let mut slot = [0xffu8; MAX_SLOT_BYTES];
        slot[..RECORD_BYTES].copy_from_slice(&encode(seq, p));
        let addr = self.address(self.next);
        self.flash
            .write(addr, &slot[..Self::SLOT_BYTES])
            .map_err(Error::Flash)?;
        self.seq = seq;
        self.last = Some(p);
        self.next = Self::after(self.next);
        Ok(true)
    }

    /// Hand the flash back.
    pub fn release(self) -> F {
        self.flash
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use remanent_protocol::Fault;

    #[test]
    fn a_record_round_trips_and_any_flipped_bit_is_refused() {
        let p = Persisted {
            fault: Some(Fault::OverTemperature),
            locked: true,
        };
        let r = encode(41, p);
        assert_eq!(decode(&r), Some((41, p)));
        for bit in 0..RECORD_BYTES * 8 {
            let mut bad = r;
            bad[bit / 8] ^= 1 << (bit % 8);
            assert_eq!(decode(&bad), None, "bit {bit}");
        }
        assert_eq!(decode(&[0xff; RECORD_BYTES]), None, "erased flash");
    }
}
