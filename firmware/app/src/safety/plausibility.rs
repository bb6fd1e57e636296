//! Is the converter's word one a working chip could have sent? An absent or unpowered
//! converter reads all zeros (data line pulled low) or all ones (pulled up), and its cold
//! junction is then impossible or never moves: each is a fault, never a reading.

use remanent_protocol::ThermoWord;

use crate::config::Plausible;

/// Bits a working converter always reads as zero (bits 17 and 3).
const RESERVED_BITS: u32 = (1 << 17) | (1 << 3);

/// Tracks the cold junction to see it move.
#[derive(Debug, Clone, Default)]
pub struct Plausibility {
    cj_unchanged_since: Option<(u32, i16)>,
}

impl Plausibility {
    /// Judge one word; `heating` arms the frozen-cold-junction check. `false` is a fault.
    pub fn check(&mut self, cfg: &Plausible, now_ms: u32, word: ThermoWord, heating: bool) -> bool {
        if !word_plausible(cfg, word) {
            return false;
        }
        let cj = word.cj_counts();
        match self.cj_unchanged_since {
            Some((since, last)) if last == cj => {
                if heating && now_ms.wrapping_sub(since) >= cfg.cj_frozen_ms {
                    return false;
                }
            }
            _ => self.cj_unchanged_since = Some((now_ms, cj)),
        }
        if !heating {
            // only a heating period's silence counts
            self.cj_unchanged_since = Some((now_ms, cj));
        }
        true
    }
}

/// The checks that need only the word itself.
pub fn word_plausible(cfg: &Plausible, word: ThermoWord) -> bool {
    if word.0 == 0 || word.0 == u32::MAX || word.0 & RESERVED_BITS != 0 {
        return false;
    }
    (cfg.cj_min_tenth_c..=cfg.cj_max_tenth_c).contains(&word.cj_tenth_c())
}

#[cfg(test)]
mod tests {
    use super::*;
    use remanent_protocol::thermo_word::ThermoFault;

    const CFG: Plausible = Plausible::REFERENCE;

    #[test]
    fn absent_converters_and_impossible_cold_junctions_are_not_readings() {
        assert!(!word_plausible(&CFG, ThermoWord(0)), "data line low");
        assert!(
            !word_plausible(&CFG, ThermoWord(u32::MAX)),
            "data line high"
        );
        // a cold junction of 127.9 °C on a bench board
        assert!(!word_plausible(
            &CFG,
            ThermoWord::from_parts(100, 2047, None)
        ));
        assert!(!word_plausible(
            &CFG,
            ThermoWord(ThermoWord::from_parts(100, 392, None).0 | 8)
        ));
        assert!(word_plausible(&CFG, ThermoWord::from_parts(100, 392, None)));
        // a real open-circuit word is plausible: its fault bits speak for it
        assert!(word_plausible(
            &CFG,
            ThermoWord::from_parts(0, 392, Some(ThermoFault::Open))
        ));
    }

    #[test]
    fn a_cold_junction_frozen_while_heating_is_a_fault() {
        let mut p = Plausibility::default();
        let w = ThermoWord::from_parts(400, 392, None);
        // idle: never judged
        for t in 0..1000u32 {
            assert!(p.check(&CFG, t * 1000, w, false));
        }
        let start = 1_000_000;
        let mut t = start;
        while p.check(&CFG, t, w, true) {
            t += 100;
            assert!(t - start <= CFG.cj_frozen_ms + 100, "never tripped");
        }
        assert!(
            t - start + 1_000 >= CFG.cj_frozen_ms,
            "the last idle reading starts the clock"
        );
        // a flickering one never trips
        let mut p = Plausibility::default();
        for k in 0..10_000u32 {
            let w = ThermoWord::from_parts(400, 392 + (k % 2) as i16, None);
            assert!(p.check(&CFG, k * 100, w, true));
        }
    }
}
