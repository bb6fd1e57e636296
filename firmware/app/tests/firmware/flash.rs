//! The fault log on a NOR flash that behaves like one: programming only clears bits, an erase
//! sets a whole sector to 0xff, and the power can go at any byte of a write or between an
//! erase and the write that follows it.

use embedded_storage::nor_flash::{
    ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash,
};
use remanent_firmware::device::Persisted;
use remanent_firmware::fault_log::{Error, FaultLog};
use remanent_protocol::Fault;

/// Sector size of the RP2040's flash (and of most serial NOR flash).
pub const SECTOR: usize = 4096;

/// The power went: the operation stopped part-way.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PowerLost;

impl NorFlashError for PowerLost {
    fn kind(&self) -> NorFlashErrorKind {
        NorFlashErrorKind::Other
    }
}

/// Three sectors of NOR flash written `W` bytes at a time.
#[derive(Debug, Clone)]
pub struct MockFlash<const W: usize> {
    pub bytes: Vec<u8>,
    /// Erases per sector.
    pub erases: Vec<u32>,
    /// Bytes that may still be programmed before the power goes (`None`: it never does).
    pub bytes_left: Option<usize>,
    /// Fail the next erase after doing it (the power goes before the write that follows).
    pub lose_power_after_erase: bool,
}

impl<const W: usize> MockFlash<W> {
    pub fn new() -> Self {
        MockFlash {
            bytes: vec![0xff; 3 * SECTOR],
            erases: vec![0; 3],
            bytes_left: None,
            lose_power_after_erase: false,
        }
    }
}

impl<const W: usize> ErrorType for MockFlash<W> {
    type Error = PowerLost;
}

impl<const W: usize> ReadNorFlash for MockFlash<W> {
    const READ_SIZE: usize = 1;
    fn read(&mut self, offset: u32, out: &mut [u8]) -> Result<(), PowerLost> {
        let at = offset as usize;
        out.copy_from_slice(&self.bytes[at..at + out.len()]);
        Ok(())
    }
    fn capacity(&self) -> usize {
        self.bytes.len()
    }
}

impl<const W: usize> NorFlash for MockFlash<W> {
    const WRITE_SIZE: usize = W;
    const ERASE_SIZE: usize = SECTOR;
    fn erase(&mut self, from: u32, to: u32) -> Result<(), PowerLost> {
        assert_eq!(from as usize % SECTOR, 0, "erase aligned");
        assert_eq!(to as usize % SECTOR, 0, "erase aligned");
        for s in from as usize / SECTOR..to as usize / SECTOR {
            self.bytes[s * SECTOR..(s + 1) * SECTOR].fill(0xff);
            self.erases[s] += 1;
        }
        if std::mem::take(&mut self.lose_power_after_erase) {
            return Err(PowerLost);
        }
        Ok(())
    }
    fn write(&mut self, offset: u32, data: &[u8]) -> Result<(), PowerLost> {
        assert_eq!(offset as usize % W, 0, "write aligned");
        assert_eq!(data.len() % W, 0, "whole write units");
        for (i, b) in data.iter().enumerate() {
            if let Some(left) = self.bytes_left.as_mut() {
                if *left == 0 {
                    return Err(PowerLost);
                }
                *left -= 1;
            }
            // NOR programming clears bits; it never sets one
            self.bytes[offset as usize + i] &= b;
        }
        Ok(())
    }
}

const BASE: u32 = SECTOR as u32;

fn state(i: u32) -> Persisted {
    const FAULTS: [Fault; 4] = [
        Fault::OverTemperature,
        Fault::NoHeatingResponse,
        Fault::ThermocoupleOpen,
        Fault::Watchdog,
    ];
    Persisted {
        fault: (i % 5 != 4).then(|| FAULTS[i as usize % 4]),
        locked: i.is_multiple_of(3),
    }
}

fn wear<const W: usize>() {
    let mut log = FaultLog::open(MockFlash::<W>::new(), BASE).expect("opens");
    assert_eq!(log.last(), None, "blank flash holds nothing");
    assert!(!log.store(Persisted::default()).unwrap(), "nothing to keep");
    for i in 0..1000 {
        assert!(log.store(state(i)).unwrap(), "a change is written");
        assert!(!log.store(state(i)).unwrap(), "no change, no write");
        // every record is what a power cycle brings back
        let flash = log.release();
        log = FaultLog::open(flash, BASE).expect("reopens");
        assert_eq!(log.last(), Some(state(i)), "after {i} changes");
    }
    let flash = log.release();
    let slots = SECTOR / FaultLog::<MockFlash<W>>::SLOT_BYTES;
    let erases: u32 = flash.erases.iter().sum();
    println!(
        "write size {W}: 1000 changes, {slots} records a sector, {erases} erases {:?}",
        flash.erases
    );
    assert_eq!(flash.erases[0], 0, "nothing outside the log is touched");
    assert_eq!(flash.erases[1] + flash.erases[2], erases);
    assert!(
        erases as usize <= 1000 / slots + 1,
        "a sector is erased once per {slots} records: {erases}"
    );
    assert!(flash.erases[1].abs_diff(flash.erases[2]) <= 1, "even wear");
}

#[test]
fn the_log_writes_only_changes_and_erases_a_sector_once_per_sectorful() {
    wear::<256>(); // the RP2040's page
    wear::<4>();
}

#[test]
fn a_power_loss_at_any_byte_of_a_write_leaves_the_record_before_or_the_new_one() {
    let before = state(0);
    let next = state(1);
    // 16 records in a sector at 256 bytes a record: cover a sector change too
    for changes in [3u32, 15, 16] {
        for cut in 0..=256 {
            let mut log = FaultLog::open(MockFlash::<256>::new(), BASE).unwrap();
            for i in 0..changes {
                log.store(state(i + 2)).unwrap();
            }
            log.store(before).unwrap();
            let mut flash = log.release();
            flash.bytes_left = Some(cut);
            let mut log = FaultLog::open(flash, BASE).unwrap();
            let wrote = log.store(next);
            let mut flash = log.release();
            flash.bytes_left = None;
            let log = FaultLog::open(flash, BASE).unwrap();
            let got = log.last();
            assert_eq!(wrote.is_ok(), cut == 256, "cut at {cut} of 256");
            if cut >= 16 {
                // the record is in the slot's first 16 bytes; the rest programs 0xff
                assert_eq!(got, Some(next), "cut at {cut} of 256");
            } else {
                assert_eq!(wrote, Err(Error::Flash(PowerLost)));
                assert_eq!(got, Some(before), "cut at {cut}: the one before");
            }
            // and the log goes on: the torn slot is skipped
            let mut log = log;
            log.store(state(7)).unwrap();
            let log = FaultLog::open(log.release(), BASE).unwrap();
            assert_eq!(log.last(), Some(state(7)));
        }
    }
}

#[test]
fn a_power_loss_between_an_erase_and_its_write_keeps_the_newest_record() {
    let mut log = FaultLog::open(MockFlash::<256>::new(), BASE).unwrap();
    // fill the first sector: the next record erases the second
    for i in 0..16 {
        log.store(state(i)).unwrap();
    }
    let mut flash = log.release();
    flash.lose_power_after_erase = true;
    let mut log = FaultLog::open(flash, BASE).unwrap();
    assert_eq!(log.store(state(16)), Err(Error::Flash(PowerLost)));
    let log = FaultLog::open(log.release(), BASE).unwrap();
    assert_eq!(log.last(), Some(state(15)), "the newest survives");
}

#[test]
fn a_log_that_does_not_fit_its_flash_is_refused() {
    let small = MockFlash::<256> {
        bytes: vec![0xff; SECTOR],
        ..MockFlash::new()
    };
    assert!(matches!(FaultLog::open(small, 0), Err(Error::Geometry)));
    assert!(matches!(
        FaultLog::open(MockFlash::<256>::new(), 100),
        Err(Error::Geometry)
    ));
}
