//! Rebuilds each sample's full sequence number and device time from the low byte it carries
//! and the latest beacon, and counts the gaps. Never invents a sample.

use remanent_protocol::{Beacon, Sample};

/// A sample with its place in the record.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlacedSample {
    /// Full sequence number.
    pub seq: u32,
    /// Device time, s.
    pub device_time_s: f64,
    /// The sample as received.
    pub sample: Sample,
}

/// Sequence and clock state.
#[derive(Debug, Default, Clone)]
pub struct Timeline {
    beacon: Option<Beacon>,
    last_seq: Option<u32>,
    rebase: bool,
    /// Samples missing between received ones.
    pub gap_samples: u64,
    /// Separate gaps.
    pub gaps: u64,
    /// Samples received before any beacon (cannot be placed; dropped and counted).
    pub unplaced: u64,
    /// Samples the device itself reported dropping (latest beacon).
    pub device_dropped: u32,
}

impl Timeline {
    /// A beacon arrived.
    pub fn beacon(&mut self, b: Beacon) {
        // a beacon far ahead of the running count means more than 128 samples were lost:
        // re-base on it so the next sample is placed correctly
        if let Some(last) = self.last_seq {
            if b.seq.wrapping_sub(last) as i32 > 128 {
                self.rebase = true;
            }
        }
        self.device_dropped = b.dropped_total;
        self.beacon = Some(b);
    }

    /// The latest beacon.
    pub fn latest_beacon(&self) -> Option<&Beacon> {
        self.beacon.as_ref()
    }

    /// Place a sample; `None` if no beacon has arrived yet, or if it is a repeat.
    pub fn place(&mut self, sample: Sample) -> Option<PlacedSample> {
        let Some(b) = self.beacon else {
            self.unplaced += 1;
            return None;
        };
        let base = if self.rebase {
            b.seq
        } else {
            self.last_seq.unwrap_or(b.seq)
        };
        self.rebase = false;
        let delta = sample.seq_lo.wrapping_sub(base as u8) as i8 as i32;
        let seq = base.wrapping_add(delta as u32);
        if let Some(last) = self.last_seq {
            let step = seq.wrapping_sub(last) as i32;
            if step <= 0 {
                return None; // a repeat or out of order: a serial link does not reorder
            }
            if step > 1 {
                self.gaps += 1;
                self.gap_samples += (step - 1) as u64;
            }
        }
        self.last_seq = Some(seq);
        let slot_ms = f64::from(b.epoch_ms)
            + f64::from(seq.wrapping_sub(b.epoch_seq)) * f64::from(b.period_ms);
        let device_time_s = (slot_ms + f64::from(sample.status.lateness_ms())) / 1000.0;
        Some(PlacedSample {
            seq,
            device_time_s,
            sample,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use remanent_protocol::{RunState, SampleStatus, ThermoWord};

    fn sample(seq: u32) -> Sample {
        Sample {
            seq_lo: seq as u8,
            status: SampleStatus::new(false, false, 2),
            hall_code: 0,
            probe_code: 0,
            thermo: ThermoWord(0),
            duty: 0,
        }
    }

    fn beacon(seq: u32) -> Beacon {
        Beacon {
            seq,
            epoch_seq: 10,
            epoch_ms: 5_000,
            period_ms: 100,
            dropped_total: 0,
            state: RunState::Idle,
            setpoint_tenth_c: 0,
        }
    }

    #[test]
    fn rebuilds_sequence_and_time_across_wraps_and_counts_gaps() {
        let mut tl = Timeline::default();
        assert_eq!(tl.place(sample(300)), None);
        assert_eq!(tl.unplaced, 1);
        tl.beacon(beacon(298));
        let mut seqs = Vec::new();
        for s in (299..800).filter(|s| s % 97 != 0) {
            let p = tl.place(sample(s)).unwrap();
            assert_eq!(p.seq, s);
            // slot 10 is at 5.000 s; each later slot 0.1 s on; 2 ms late
            assert!((p.device_time_s - (5.0 + (s - 10) as f64 * 0.1 + 0.002)).abs() < 1e-9);
            seqs.push(s);
        }
        assert_eq!(tl.gaps, 5); // 388, 485, 582, 679, 776
        assert_eq!(tl.gap_samples, 5);
        // a long outage: the next beacon re-bases
        tl.beacon(beacon(5_000));
        assert_eq!(tl.place(sample(5_001)).unwrap().seq, 5_001);
        assert_eq!(tl.gap_samples, 5 + (5_001 - 799 - 1));
    }
}
