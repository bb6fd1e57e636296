//! Latches that mean it: which fault may be cleared when, and the lock after repeated trips.
//!
//! A sensor fault clears once the converter sends a valid, plausible word again; a heating
//! fault (and a reset by the watchdog or after a crash) only once that word shows the fixture
//! back near ambient — and where the thermocouple itself is suspect (no heating response, a
//! stuck reading) only once the heater has also been off for
//! as long as the identified block needs to cool from the run limit, evidence the suspect
//! sensor does not provide; a fault the host caused clears at once. The worst fault is kept
//! latched ([`severity`]). Trips within the lockout window are counted: reaching the
//! configured number locks heating. The lock survives resets and power cycles (the board keeps
//! it in flash, [`crate::fault_log`]); only after a power cycle may an explicit clear release
//! it, and then under the strictest heating rule ([`may_unlock`]).

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

/// How bad a latched fault is: the worse of two is kept. Heating going wrong beats a sensor
/// that cannot be trusted, which beats the host's doing; among heating faults, heat that was
/// not asked for (over-temperature, heating while off, a rise too fast) comes first.
pub fn severity(fault: Fault) -> u8 {
    match (class(fault), fault) {
        (_, Fault::OverTemperature | Fault::HeatingWhileOff | Fault::RiseTooFast) => 4,
        (FaultClass::Heating, _) => 3,
        (FaultClass::Sensor, _) => 2,
        (FaultClass::Host, _) => 1,
    }
}

/// Faults after which the thermocouple's own word cannot show the fixture has cooled.
fn thermocouple_suspect(fault: Fault) -> bool {
    matches!(fault, Fault::NoHeatingResponse | Fault::StuckReading)
}

/// How long the heater must have been off before a suspect thermocouple's fault may clear,
/// ms: the identified block's cooling from `limit_tenth_c` to within the ambient band,
/// τ·ln((limit − ambient) / band), with the logarithm taken at the next whole power of two
/// (never shorter than the true time).
pub fn cooling_wait_ms(cfg: &FirmwareConfig, limit_tenth_c: i16, ambient_tenth_c: i16) -> u32 {
    let excess = i32::from(limit_tenth_c) - i32::from(ambient_tenth_c);
    let band = i32::from(cfg.ambient_band_tenth_c.max(1));
    if excess <= band {
        return 0;
    }
    let ratio = (excess as u32).div_ceil(band as u32);
    let log2 = 32 - (ratio - 1).leading_zeros(); // ⌈log₂ ratio⌉
    let ln = log2 as f32 * core::f32::consts::LN_2;
    (cfg.plant.cooling_tau_s() * ln * 1000.0) as u32
}

/// May `fault` be cleared, given a fresh word from the converter (`None`: its bus failed),
/// the time the heater has been off (`heater_off_ms`) and the run limit it ran under?
pub fn may_clear(
    cfg: &FirmwareConfig,
    fault: Fault,
    word: Option<ThermoWord>,
    heater_off_ms: u32,
    limit_tenth_c: i16,
) -> Result<(), RefuseReason> {
    let cls = class(fault);
    if cls == FaultClass::Host {
        return Ok(());
    }
    let good = word.filter(|w| w.fault().is_none() && word_plausible(&cfg.plausible, *w));
    let w = good.ok_or(RefuseReason::FaultLatched(fault))?;
    if cls == FaultClass::Heating {
        // ambient from the cold junction
        let ambient_tenth_c = w.cj_tenth_c();
        let below_tenth_c = ambient_tenth_c.saturating_add(cfg.ambient_band_tenth_c);
        let temp_tenth_c = w.tc_tenth_c();
        if temp_tenth_c >= below_tenth_c {
            return Err(RefuseReason::TooHotToClear {
                temp_tenth_c,
                below_tenth_c,
            });
        }
        if thermocouple_suspect(fault)
            && heater_off_ms < cooling_wait_ms(cfg, limit_tenth_c, ambient_tenth_c)
        {
            // the reading may be of air: wait out the block's own cooling
            return Err(RefuseReason::FaultLatched(fault));
        }
    }
    Ok(())
}

/// May a lock be released (after a power cycle, on an explicit clear)? Under the strictest
/// heating rule: the fixture near ambient by a plausible word, and the heater off for the
/// identified block's cooling time from the run limit, as after a suspect thermocouple.
pub fn may_unlock(
    cfg: &FirmwareConfig,
    word: Option<ThermoWord>,
    heater_off_ms: u32,
    limit_tenth_c: i16,
    trips: u8,
) -> Result<(), RefuseReason> {
    match may_clear(
        cfg,
        Fault::NoHeatingResponse,
        word,
        heater_off_ms,
        limit_tenth_c,
    ) {
        Err(RefuseReason::FaultLatched(_)) => Err(RefuseReason::LockedOut { trips }),
        other => other,
    }
}

/// Most trips remembered (the lockout count is at most this).
const TRIP_MEMORY: usize = 8;

/// Recent trips and the lock they may have set.
#[derive(Debug, Clone, Default)]
pub struct TripLog {
    times_ms: heapless::Deque<u32, TRIP_MEMORY>,
    locked: bool,
    /// The lock came through a power cycle: an explicit clear may release it.
    releasable: bool,
}

impl TripLog {
    /// A log that starts locked (the lock survived a reset); `power_cycled`: it came through
    /// a power cycle, so an explicit clear may release it.
    pub fn locked(power_cycled: bool) -> Self {
        TripLog {
            locked: true,
            releasable: power_cycled,
            ..TripLog::default()
        }
    }

    /// May an explicit clear release the lock (it came through a power cycle)?
    pub fn releasable(&self) -> bool {
        self.locked && self.releasable
    }

    /// Release the lock and forget the trips (an explicit clear after a power cycle).
    pub fn release(&mut self) {
        *self = TripLog::default();
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

    /// Heating is locked.
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
            may_clear(&CFG, Fault::OverTemperature, Some(hot), 0, 3500),
            Err(RefuseReason::TooHotToClear {
                temp_tenth_c: 600,
                below_tenth_c: 400
            })
        );
        assert_eq!(
            may_clear(&CFG, Fault::OverTemperature, Some(cool), 0, 3500),
            Ok(())
        );
        // a suspect thermocouple reading cool is not enough: the block's own cooling time
        // from 350 °C, τ = 150/1.2 = 125 s times ln of ⌈325/15⌉ = 22 at the next power of two
        // (32: 5·ln 2 = 3.47), 433 s
        let wait = cooling_wait_ms(&CFG, 3500, 250);
        assert_eq!(wait, 433_216, "{wait}");
        assert_eq!(
            may_clear(&CFG, Fault::StuckReading, Some(cool), wait - 1, 3500),
            Err(RefuseReason::FaultLatched(Fault::StuckReading))
        );
        assert_eq!(
            may_clear(&CFG, Fault::StuckReading, Some(cool), wait, 3500),
            Ok(())
        );
        assert_eq!(
            may_clear(
                &CFG,
                Fault::ConverterImplausible,
                Some(ThermoWord(0)),
                0,
                3500
            ),
            Err(RefuseReason::FaultLatched(Fault::ConverterImplausible))
        );
        assert_eq!(
            may_clear(&CFG, Fault::SensorBus, Some(hot), 0, 3500),
            Ok(())
        );
        assert_eq!(may_clear(&CFG, Fault::HeartbeatLost, None, 0, 3500), Ok(()));
    }

    #[test]
    fn the_worse_fault_is_kept() {
        assert!(severity(Fault::OverTemperature) > severity(Fault::NoHeatingResponse));
        assert!(severity(Fault::NoHeatingResponse) > severity(Fault::ThermocoupleOpen));
        assert!(severity(Fault::ThermocoupleOpen) > severity(Fault::HeartbeatLost));
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
