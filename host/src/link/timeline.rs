//! Rebuilds each sample's full sequence number and device time, and counts the gaps. Never
//! invents a sample and never guesses: a sample carries only the low byte of its number, so it
//! is held until the next beacon settles it. Between a lower bound (the last sample placed, or
//! the previous beacon less the device's queue) and the beacon's newest sample, the held
//! samples are numbered with the smallest steps their low bytes allow; that numbering is the
//! only one possible when it ends less than 256 below the beacon. Otherwise (an outage of 256
//! samples or more among them) they are discarded and counted, as are samples still held when
//! a record ends. Only samples taken after the record's start belong to it: older ones (a
//! previous session's) are dropped and counted.

use remanent_protocol::{Beacon, Sample};

/// A sample with its place in the record.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlacedSample {
    /// Full sequence number.
    pub seq: u32,
    /// Device time, s.
    pub device_time_s: f64,
    /// The setpoint in force when it arrived (0: heater off), 0.1 °C.
    pub setpoint_tenth_c: i16,
    /// Samples found missing just before it.
    pub missing_before: u64,
    /// The sample as received.
    pub sample: Sample,
}

/// The device's sampling changed while it was being listened to (a Configure, which the recorder
/// never sends: another program on the link).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Resampled {
    /// The period before, ms.
    pub period_before_ms: u16,
    /// The period now, ms.
    pub period_ms: u16,
    /// The first sample of the new sampling.
    pub from_seq: u32,
}

/// More samples than this are never held (a beacon comes every second).
const MAX_HELD: usize = 4096;
/// Samples sent after a beacon were taken after its newest less the device's queue (16) and
/// this margin.
const QUEUE_MARGIN: u32 = 20;

/// Sequence and clock state.
#[derive(Debug, Default, Clone)]
pub struct Timeline {
    beacon: Option<Beacon>,
    /// The beacon of the sampling before the latest change: samples taken before the change
    /// are timed by it.
    epoch_before: Option<Beacon>,
    /// A change of sampling not yet taken by [`Timeline::take_resampled`].
    resampled: Option<Resampled>,
    last_seq: Option<u32>,
    held: Vec<(Sample, i16)>,
    start_after: Option<u32>,
    /// Samples missing between received ones.
    pub gap_samples: u64,
    /// Separate gaps.
    pub gaps: u64,
    /// Samples received before any beacon (cannot be placed; dropped and counted).
    pub unplaced: u64,
    /// Samples held and then discarded because no beacon came to settle them.
    pub unsettled: u64,
    /// Samples taken before the record's start (a previous session's), dropped.
    pub stale: u64,
    /// Samples the device itself reported dropping (latest beacon).
    pub device_dropped: u32,
}

impl Timeline {
    /// Only samples taken after the latest beacon's newest belong to the record.
    pub fn start_after_latest_beacon(&mut self) {
        self.start_after = self.beacon.map(|b| b.seq);
        self.unplaced += self.held.len() as u64;
        self.held.clear();
    }

    /// The latest beacon.
    pub fn latest_beacon(&self) -> Option<&Beacon> {
        self.beacon.as_ref()
    }

    /// A sample arrived: held until the next beacon (dropped and counted before any beacon).
    pub fn hold(&mut self, sample: Sample) {
        let Some(b) = self.beacon else {
            self.unplaced += 1;
            return;
        };
        if self.held.len() < MAX_HELD {
            self.held.push((sample, b.setpoint_tenth_c));
        } else {
            self.unsettled += 1;
        }
    }

    /// A beacon arrived; the held samples it settles, placed, in order. Each held sample was
    /// sent before this beacon, so it was taken at or before `b.seq`: its number is the
    /// largest at or below `b.seq` with its low byte.
    pub fn beacon(&mut self, b: Beacon) -> Vec<PlacedSample> {
        self.device_dropped = b.dropped_total;
        let previous = self.beacon.replace(b);
        if let Some(p) = previous.filter(|p| {
            (p.epoch_seq, p.epoch_ms, p.period_ms) != (b.epoch_seq, b.epoch_ms, b.period_ms)
        }) {
            self.epoch_before = Some(p);
            self.resampled = Some(Resampled {
                period_before_ms: p.period_ms,
                period_ms: b.period_ms,
                from_seq: b.epoch_seq,
            });
        }
        let held = std::mem::take(&mut self.held);
        let floor = match (self.last_seq, previous) {
            (Some(l), Some(p)) => l.max(p.seq.wrapping_sub(QUEUE_MARGIN)),
            (Some(l), None) => l,
            (None, Some(p)) => p.seq.wrapping_sub(QUEUE_MARGIN),
            (None, None) => return Vec::new(),
        };
        let mut cur = floor;
        let seqs: Vec<u32> = held
            .iter()
            .map(|(s, _)| {
                let step = match s.seq_lo.wrapping_sub(cur as u8) {
                    0 => 256,
                    d => u32::from(d),
                };
                cur = cur.wrapping_add(step);
                cur
            })
            .collect();
        let behind = b.seq.wrapping_sub(cur) as i32;
        if !held.is_empty() && !(0..256).contains(&behind) {
            // more than one numbering fits (or none): discard rather than guess
            self.unsettled += held.len() as u64;
            return Vec::new();
        }
        let mut out = Vec::with_capacity(held.len());
        for ((s, setpoint), seq) in held.into_iter().zip(seqs) {
            if let Some(p) = self.accept(seq, s, setpoint) {
                out.push(p);
            }
        }
        out
    }

    /// The device's sampling changed since this was last asked.
    pub fn take_resampled(&mut self) -> Option<Resampled> {
        self.resampled.take()
    }

    /// Samples waiting for a beacon.
    pub fn holding(&self) -> usize {
        self.held.len()
    }

    /// Discard what is still held (the record ended); counted in [`Timeline::unsettled`].
    pub fn finish(&mut self) {
        self.unsettled += self.held.len() as u64;
        self.held.clear();
    }

    /// Take a sample whose full number is known.
    fn accept(&mut self, seq: u32, sample: Sample, setpoint: i16) -> Option<PlacedSample> {
        let b = self.beacon?;
        if self
            .start_after
            .is_some_and(|s| seq.wrapping_sub(s) as i32 <= 0)
        {
            self.stale += 1;
            return None;
        }
        let mut missing_before = 0;
        if let Some(last) = self.last_seq {
            let step = seq.wrapping_sub(last) as i32;
            if step <= 0 {
                return None; // a repeat or out of order: a serial link does not reorder
            }
            if step > 1 {
                missing_before = (step - 1) as u64;
                self.gaps += 1;
                self.gap_samples += missing_before;
            }
        }
        self.last_seq = Some(seq);
        // timed by the sampling in force when it was taken (a sample from before a change of
        // sampling, timed from the new epoch, once wrapped to 4.3e8 s)
        let e = match self.epoch_before {
            Some(before) if (seq.wrapping_sub(b.epoch_seq) as i32) < 0 => before,
            _ => b,
        };
        let slot_ms = f64::from(e.epoch_ms)
            + f64::from(seq.wrapping_sub(e.epoch_seq)) * f64::from(e.period_ms);
        let device_time_s = (slot_ms + f64::from(sample.status.lateness_ms())) / 1000.0;
        Some(PlacedSample {
            seq,
            device_time_s,
            setpoint_tenth_c: setpoint,
            missing_before,
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

    /// Feed samples `seqs`, a beacon after every tenth; everything placed.
    fn run(tl: &mut Timeline, seqs: impl Iterator<Item = u32>) -> Vec<PlacedSample> {
        let mut out = Vec::new();
        for s in seqs {
            tl.hold(sample(s));
            if s % 10 == 0 {
                out.extend(tl.beacon(beacon(s)));
            }
        }
        out
    }

    #[test]
    fn rebuilds_sequence_and_time_across_wraps_and_counts_gaps() {
        let mut tl = Timeline::default();
        tl.hold(sample(300));
        assert_eq!(tl.unplaced, 1);
        assert!(tl.beacon(beacon(298)).is_empty());
        let placed = run(&mut tl, (299..=800).filter(|s| s % 97 != 0));
        for p in &placed {
            // slot 10 is at 5.000 s; each later slot 0.1 s on; 2 ms late
            let s = p.seq;
            assert!((p.device_time_s - (5.0 + (s - 10) as f64 * 0.1 + 0.002)).abs() < 1e-9);
        }
        let seqs: Vec<u32> = placed.iter().map(|p| p.seq).collect();
        let want: Vec<u32> = (299..=800).filter(|s| s % 97 != 0).collect();
        assert_eq!(seqs, want);
        assert_eq!(tl.gaps, 5); // 388, 485, 582, 679, 776
        assert_eq!(tl.gap_samples, 5);
    }

    #[test]
    fn after_a_long_outage_samples_are_settled_by_the_beacon_or_discarded_never_guessed() {
        let mut tl = Timeline::default();
        tl.beacon(beacon(100));
        run(&mut tl, 101..=110);
        // 200 samples lost: the low bytes still say how far, and the beacon agrees
        for s in 311..=318 {
            tl.hold(sample(s));
        }
        let placed = tl.beacon(beacon(320));
        let seqs: Vec<u32> = placed.iter().map(|p| p.seq).collect();
        assert_eq!(seqs, (311..=318).collect::<Vec<_>>());
        assert_eq!(tl.gap_samples, 200);
        // 300 lost: the low byte of 621 looks like a small step from 318; the beacon shows
        // the numbering cannot be known, so they are discarded, not placed 256 too early
        for s in 621..=628 {
            tl.hold(sample(s));
        }
        assert!(tl.beacon(beacon(630)).is_empty());
        assert_eq!(tl.unsettled, 8);
        // and the next second goes on correctly
        let placed = run(&mut tl, 631..=640);
        assert_eq!(placed.first().unwrap().seq, 631);
        assert_eq!(tl.gap_samples, 200 + 312);
        // what no beacon settles is discarded and counted
        tl.hold(sample(641));
        tl.finish();
        assert_eq!(tl.unsettled, 9);
    }

    #[test]
    fn samples_from_before_the_start_are_dropped_and_counted() {
        let mut tl = Timeline::default();
        tl.beacon(beacon(500));
        tl.start_after_latest_beacon();
        for s in 490..=502 {
            tl.hold(sample(s));
        }
        let placed = tl.beacon(beacon(502));
        assert_eq!(
            placed.iter().map(|p| p.seq).collect::<Vec<_>>(),
            vec![501, 502]
        );
        assert_eq!(tl.stale, 11);
        assert_eq!(tl.gap_samples, 0);
    }
}
