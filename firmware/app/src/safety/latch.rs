//! Latches that mean it: which fault may be cleared when, and the lock after repeated trips.
//!
//! A sensor fault clears once the converter sends a valid, plausible word again; a heating
//! fault (and a reset by the watchdog or after a crash) only once that word shows the fixture
//! back near ambient; a fault the host caused clears at once. Trips within the lockout window
//! are counted: reaching the configured number locks heating until the power is cycled.

use remanent_protocol::{Fault, RefuseReason, ThermoWord};

use crate::config::FirmwareConfig;
use crate::safety::plausibility::word_plausible;

/// What a fault says about the fixture.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FaultClass {
    /// The temperature cannot be trusted: clear when the converter reads well again.
    Sensor,
    /// Heating went wrong: clear when the fixture is back near ambient.
    Heating,
    /// The host's doing (lost heartbeat, a drill): clear at once.
    Host,
}

/// The class of `fault`.
pub fn class(fault: Fault) -> FaultClass {
    match fault {
        Fault::ThermocoupleOpen
        | Fault::ThermocoupleShortGnd
        | Fault::ThermocoupleShortVcc
        | Fault::SensorBus
        | Fault::ConverterImplausible => FaultClass::Sensor,
        Fault::OverTemperature
        | Fault::RiseTooFast
        | Fault::StuckReading
        | Fault::NoHeatingResponse
        | Fault::HeatingWhileOff
        | Fault::HeaterDrive
        | Fault::Watchdog
        | Fault::Crashed => FaultClass::Heating,
        Fault::HeartbeatLost | Fault::Injected => FaultClass::Host,
    }
}

/// May `fault` be cleared, given a fresh word from the converter (`None`: its bus failed)?
pub fn may_clear(
    cfg: &FirmwareConfig,
    fault: Fault,
    word: Option<ThermoWord>,
) -> Result<(), RefuseReason> {
    let cls = class(fault);
    if cls == FaultClass::Host {
        return Ok(());
    }
    let good = word.filter(|w| w.fault().is_none() && word_plausible(&cfg.plausible, *w));
    let w = good.ok_or(RefuseReason::FaultLatched(fault))?;
    if cls == FaultClass::Heating {
        // ambient from the cold junction (0.0625 °C counts → 0.1 °C)
        let ambient_tenth_c = (i32::from(w.cj_counts()) * 5 / 8) as i16;
        let below_tenth_c = ambient_tenth_c.saturating_add(cfg.ambient_band_tenth_c);
        let temp_tenth_c = w.tc_tenth_c();
        if temp_tenth_c >= below_tenth_c {
            return Err(RefuseReason::TooHotToClear {
                temp_tenth_c,
                below_tenth_c,
            });
        }
    }
    Ok(())
}

/// Most trips remembered (the lockout count is at most this).
const TRIP_MEMORY: usize = 8;

/// Recent trips and the lock they may have set.
#[derive(Debug, Clone, Default)]
pub struct TripLog {
    times_ms: heapless::Deque<u32, TRIP_MEMORY>,
    locked: bool,
}

impl TripLog {
    /// A log that starts locked (the lock survived a reset).
    pub fn locked() -> Self {
        TripLog {
            locked: true,
            ..TripLog::default()
        }
    }

    /// Count a trip of `fault` at `now_ms`; true if heating is now locked.
    pub fn record(&mut self, cfg: &FirmwareConfig, now_ms: u32, fault: Fault) -> bool {
        if class(fault) == FaultClass::Host {
            return self.locked;
        }
        while let Some(&t) = self.times_ms.front() {
            if now_ms.wrapping_sub(t) > cfg.lockout_window_ms {
                self.times_ms.pop_front();
            } else {
                break;
            }
        }
        if self.times_ms.is_full() {
            self.times_ms.pop_front();
        }
        let _ = self.times_ms.push_back(now_ms);
        if self.times_ms.len() >= usize::from(cfg.lockout_trips.max(1)) {
            self.locked = true;
        }
        self.locked
    }

    /// Heating is locked until the power is cycled.
    pub fn is_locked(&self) -> bool {
        self.locked
    }

    /// Trips within the window (for the refusal).
    pub fn trips(&self) -> u8 {
        self.times_ms.len().max(usize::from(self.locked)) as u8
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const CFG: FirmwareConfig = FirmwareConfig::REFERENCE;

    #[test]
    fn heating_faults_clear_only_near_ambient_and_sensor_faults_only_with_a_good_word() {
        let hot = ThermoWord::from_parts(4 * 60, 25 * 16, None); // 60 °C, 25 °C ambient
        let cool = ThermoWord::from_parts(4 * 30, 25 * 16, None);
        assert_eq!(
            may_clear(&CFG, Fault::StuckReading, Some(hot)),
            Err(RefuseReason::TooHotToClear {
                temp_tenth_c: 600,
                below_tenth_c: 400
            })
        );
        assert_eq!(may_clear(&CFG, Fault::StuckReading, Some(cool)), Ok(()));
        assert_eq!(
            may_clear(&CFG, Fault::ConverterImplausible, Some(ThermoWord(0))),
            Err(RefuseReason::FaultLatched(Fault::ConverterImplausible))
        );
        assert_eq!(may_clear(&CFG, Fault::SensorBus, Some(hot)), Ok(()));
        assert_eq!(may_clear(&CFG, Fault::HeartbeatLost, None), Ok(()));
    }

    #[test]
    fn the_third_trip_within_an_hour_locks_and_old_trips_are_forgotten() {
        let mut log = TripLog::default();
        assert!(!log.record(&CFG, 0, Fault::StuckReading));
        assert!(
            !log.record(&CFG, 1_000, Fault::HeartbeatLost),
            "host faults do not count"
        );
        assert!(!log.record(&CFG, 2_000_000, Fault::NoHeatingResponse));
        // the first trip has aged out by now
        assert!(!log.record(&CFG, 3_700_000, Fault::OverTemperature));
        assert!(log.record(&CFG, 3_800_000, Fault::OverTemperature));
        assert!(log.is_locked());
        assert_eq!(log.trips(), 3);
    }
}
