//! The fault record that survives a reset: what a board keeps in memory a reset does not clear
//! (the RP2040's watchdog scratch registers, uninitialised RAM on the emulated board), packed
//! as four words, and the [`BootReport`] read back from it at start-up.
//!
//! The main loop stores the latched fault and the lock every pass; the panic and hard-fault
//! handlers and the watchdog path store why they reset. A power-on leaves no valid record.

use remanent_protocol::{BootReport, Fault, ResetCause};

use crate::device::Persisted;
use crate::safety::latch;

/// Marks a valid record ("REM1").
pub const MAGIC: u32 = 0x5245_4d31;

/// Every fault, by its code in the record (append only).
const FAULTS: [Fault; 15] = [
    Fault::ThermocoupleOpen,
    Fault::ThermocoupleShortGnd,
    Fault::ThermocoupleShortVcc,
    Fault::OverTemperature,
    Fault::RiseTooFast,
    Fault::StuckReading,
    Fault::NoHeatingResponse,
    Fault::HeartbeatLost,
    Fault::SensorBus,
    Fault::Injected,
    Fault::ConverterImplausible,
    Fault::HeatingWhileOff,
    Fault::HeaterDrive,
    Fault::Watchdog,
    Fault::Crashed,
];

/// Code of "no fault".
const NO_FAULT: u32 = 0xff;

/// Reset causes by their code in the record.
const CAUSES: [ResetCause; 4] = [
    ResetCause::PowerOn,
    ResetCause::Watchdog,
    ResetCause::Panic,
    ResetCause::HardFault,
];

/// Word 1 of the record: why the next start happens.
pub fn cause_code(cause: ResetCause) -> u32 {
    CAUSES.iter().position(|c| *c == cause).unwrap_or(0) as u32
}

/// A fault's code in a record (`0xff`: none).
pub(crate) fn fault_code(fault: Option<Fault>) -> u32 {
    fault
        .and_then(|f| FAULTS.iter().position(|g| *g == f))
        .map_or(NO_FAULT, |i| i as u32)
}

/// The fault of `code`, if it is one.
pub(crate) fn fault_from_code(code: u32) -> Option<Fault> {
    FAULTS.get(code as usize).copied()
}

/// The record for the running firmware: a plain start next time unless a reset path says
/// otherwise, with the latched fault and the lock.
pub fn record(persisted: Persisted) -> [u32; 4] {
    [
        MAGIC,
        cause_code(ResetCause::PowerOn),
        fault_code(persisted.fault),
        u32::from(persisted.locked),
    ]
}

/// The record as a reset path leaves it: `words` (or a fresh record if they hold none) with
/// the cause of the coming reset.
pub fn with_cause(words: [u32; 4], cause: ResetCause) -> [u32; 4] {
    let mut w = if words[0] == MAGIC {
        words
    } else {
        record(Persisted::default())
    };
    w[1] = cause_code(cause);
    w
}

/// Read a record back at start-up; anything malformed is a power-on.
pub fn read(words: [u32; 4]) -> BootReport {
    read_valid(words).unwrap_or(BootReport::POWER_ON)
}

/// Why this start happened, from the record a reset keeps (`words`) and the one a power cycle
/// keeps (`stored`, the board's [`crate::fault_log`]): with no valid reset record this is a
/// power-on that brings back the stored latch and lock; with both, the worse fault and either
/// lock (a flash write that failed never loses a latch).
pub fn on_start(words: [u32; 4], stored: Option<Persisted>) -> BootReport {
    let stored = stored.unwrap_or_default();
    let Some(mut report) = read_valid(words) else {
        return BootReport {
            reset: ResetCause::PowerOn,
            last_fault: stored.fault,
            locked: stored.locked,
        };
    };
    report.locked |= stored.locked;
    report.last_fault = match (report.last_fault, stored.fault) {
        (Some(a), Some(b)) if latch::severity(b) > latch::severity(a) => Some(b),
        (a, b) => a.or(b),
    };
    report
}

fn read_valid(words: [u32; 4]) -> Option<BootReport> {
    if words[0] != MAGIC {
        return None;
    }
    let reset = CAUSES.get(words[1] as usize).copied();
    let last_fault = FAULTS.get(words[2] as usize).copied();
    match (reset, words[3]) {
        (Some(reset), locked @ (0 | 1)) => Some(BootReport {
            reset,
            last_fault,
            locked: locked == 1,
        }),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_record_survives_the_round_trip_and_garbage_reads_as_power_on() {
        for (i, f) in FAULTS.iter().enumerate() {
            let mut w = record(Persisted {
                fault: Some(*f),
                locked: i % 2 == 0,
            });
            w[1] = cause_code(ResetCause::Panic);
            assert_eq!(
                read(w),
                BootReport {
                    reset: ResetCause::Panic,
                    last_fault: Some(*f),
                    locked: i % 2 == 0
                }
            );
        }
        assert_eq!(read([0xdead_beef, 1, 2, 0]), BootReport::POWER_ON);
        assert_eq!(read([MAGIC, 9, 2, 0]), BootReport::POWER_ON);
        assert_eq!(read([MAGIC, 1, 2, 7]), BootReport::POWER_ON);
        let plain = read(record(Persisted::default()));
        assert_eq!(plain, BootReport::POWER_ON);
    }

    #[test]
    fn a_power_cycle_brings_back_the_stored_latch_and_lock_and_the_worse_fault_wins() {
        let stored = Persisted {
            fault: Some(Fault::OverTemperature),
            locked: true,
        };
        // power cycled: the reset record is gone, the flash's is not
        assert_eq!(
            on_start([0; 4], Some(stored)),
            BootReport {
                reset: ResetCause::PowerOn,
                last_fault: Some(Fault::OverTemperature),
                locked: true
            }
        );
        assert_eq!(on_start([0; 4], None), BootReport::POWER_ON);
        // a watchdog reset with a milder latch in its record: the worse one and the lock stay
        let mut w = record(Persisted {
            fault: Some(Fault::ThermocoupleOpen),
            locked: false,
        });
        w[1] = cause_code(ResetCause::Watchdog);
        let r = on_start(w, Some(stored));
        assert_eq!(r.reset, ResetCause::Watchdog);
        assert_eq!(r.last_fault, Some(Fault::OverTemperature));
        assert!(r.locked);
        // the flash holds nothing worse: the reset record stands
        let r = on_start(w, Some(Persisted::default()));
        assert_eq!(r.last_fault, Some(Fault::ThermocoupleOpen));
        assert!(!r.locked);
    }
}
