//! The fault record that survives a reset: what a board keeps in memory a reset does not clear
//! (the RP2040's watchdog scratch registers, uninitialised RAM on the emulated board), packed
//! as four words, and the [`BootReport`] read back from it at start-up.
//!
//! The main loop stores the latched fault and the lock every pass; the panic and hard-fault
//! handlers and the watchdog path store why they reset. A power-on leaves no valid record.

use remanent_protocol::{BootReport, Fault, ResetCause};

use crate::device::Persisted;

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

fn fault_code(fault: Option<Fault>) -> u32 {
    fault
        .and_then(|f| FAULTS.iter().position(|g| *g == f))
        .map_or(NO_FAULT, |i| i as u32)
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
    if words[0] != MAGIC {
        return BootReport::POWER_ON;
    }
    let reset = CAUSES.get(words[1] as usize).copied();
    let last_fault = FAULTS.get(words[2] as usize).copied();
    match (reset, words[3]) {
        (Some(reset), locked @ (0 | 1)) => BootReport {
            reset,
            last_fault,
            locked: locked == 1,
        },
        _ => BootReport::POWER_ON,
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
}
