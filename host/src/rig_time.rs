//! Fixture time: how long a magnet occupies a rig with a profile (the rest before heating,
//! the profile at its nominal rates, and the handling between magnets), and what a lot of
//! n magnets costs in rig-hours and in hours on several rigs.

use crate::profiles::ProfileSpec;

/// Where a profile starts, for its nominal duration, °C.
const ROOM_C: f64 = 22.0;

/// One magnet's fixture time, s, by part.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PerMagnet {
    /// The rest before heating (the room-temperature reference), s.
    pub rest_s: f64,
    /// The profile at its nominal rates, s (an upper bound when the record may end itself).
    pub profile_s: f64,
    /// Unclamping, clamping the next magnet and the fixture's return toward room temperature, s.
    pub handling_s: f64,
}

impl PerMagnet {
    /// For `profile` with the recorder's rest and a handling allowance.
    pub fn new(profile: &ProfileSpec, rest_s: f64, handling_s: f64) -> PerMagnet {
        PerMagnet {
            rest_s,
            profile_s: profile.nominal_duration_s(ROOM_C),
            handling_s,
        }
    }

    /// All of it, s.
    pub fn total_s(&self) -> f64 {
        self.rest_s + self.profile_s + self.handling_s
    }
}

/// A lot's fixture time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LotTime {
    /// Rig-hours: every magnet's time added up.
    pub rig_hours: f64,
    /// Rounds of magnets when `rigs` run side by side.
    pub rounds: u64,
    /// Hours on the clock with that many rigs.
    pub hours: f64,
}

/// The time `n` magnets take at `per` each on `rigs` rigs.
pub fn lot_time(n: u64, per: &PerMagnet, rigs: u64) -> LotTime {
    let rigs = rigs.max(1);
    let rounds = n.div_ceil(rigs);
    LotTime {
        rig_hours: n as f64 * per.total_s() / 3600.0,
        rounds,
        hours: rounds as f64 * per.total_s() / 3600.0,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_lot_costs_n_times_a_magnet_and_rigs_share_it_in_rounds() {
        // quick-alpha: 300 s at 25 °C, 25 → 100 °C at 5 °C/min (900 s) + 240 s, back (900 s)
        // + 300 s; from 22 °C the first segment has no ramp: 2640 s = 44 min, by hand
        let q = crate::profiles::builtin("quick-alpha").unwrap();
        let per = PerMagnet::new(&q, 0.0, 0.0);
        assert!((per.profile_s - 2640.0).abs() < 1e-9);
        // 110 magnets (a lot's sample, n = 110) at 44 min: 80.7 rig-hours
        let t = lot_time(110, &per, 1);
        assert!((t.rig_hours - 110.0 * 44.0 / 60.0).abs() < 1e-9);
        let t3 = lot_time(110, &per, 3);
        assert_eq!(t3.rounds, 37);
        assert!((t3.hours - 37.0 * 44.0 / 60.0).abs() < 1e-9);
    }
}
