//! Periodic acquisition: one sample per slot of a fixed schedule, with oversampling, queued
//! for the link in a bounded queue that drops the oldest when the host is slow.

use heapless::Deque;
use remanent_protocol::{Beacon, RunState, Sample, SampleStatus, ThermoWord};

use crate::traits::{Adc, AdcInput, Thermocouple};

/// Samples held for a slow link (1.6 s at 10 Hz). Oldest dropped first.
pub const QUEUE_LEN: usize = 16;

/// Shortest and longest period accepted, ms. A control period completes every sample period
/// and only that feeds a board's watchdog (a few hundred ms), so the longest is 250 ms.
pub const PERIOD_RANGE_MS: core::ops::RangeInclusive<u16> = 10..=250;
/// Oversampling accepted.
pub const OVERSAMPLE_RANGE: core::ops::RangeInclusive<u8> = 1..=16;

/// Raw readings of one slot.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Acquired {
    /// Hall channel, averaged.
    pub hall_code: i16,
    /// Probe thermistor channel, averaged.
    pub probe_code: i16,
    /// Thermocouple converter word, or `None` when its bus failed.
    pub thermo: Option<ThermoWord>,
    /// Whether the ADC bus failed.
    pub adc_failed: bool,
}

/// The sampling schedule and its queue.
#[derive(Debug)]
pub struct Sampler {
    period_ms: u16,
    oversample: u8,
    epoch_ms: u32,
    epoch_seq: u32,
    next_seq: u32,
    dropped: u32,
    queue: Deque<Sample, QUEUE_LEN>,
}

impl Sampler {
    /// A schedule whose first slot is `now_ms`.
    pub fn new(now_ms: u32, period_ms: u16, oversample: u8) -> Self {
        Sampler {
            period_ms,
            oversample,
            epoch_ms: now_ms,
            epoch_seq: 0,
            next_seq: 0,
            dropped: 0,
            queue: Deque::new(),
        }
    }

    /// Start a new schedule at `now_ms` (sequence numbers carry on).
    pub fn reconfigure(&mut self, now_ms: u32, period_ms: u16, oversample: u8) {
        self.period_ms = period_ms;
        self.oversample = oversample;
        self.epoch_ms = now_ms;
        self.epoch_seq = self.next_seq;
    }

    /// Sampling period, ms.
    pub fn period_ms(&self) -> u16 {
        self.period_ms
    }

    /// Conversions averaged per sample.
    pub fn oversample(&self) -> u8 {
        self.oversample
    }

    fn slot_ms(&self, seq: u32) -> u32 {
        self.epoch_ms.wrapping_add(
            seq.wrapping_sub(self.epoch_seq)
                .wrapping_mul(u32::from(self.period_ms)),
        )
    }

    /// If a slot is due at `now_ms`: its sequence number and lateness, ms. Slots missed
    /// entirely (the loop was late by more than a period) are skipped and counted as dropped.
    pub fn take_due(&mut self, now_ms: u32) -> Option<(u32, u32)> {
        let late = now_ms.wrapping_sub(self.slot_ms(self.next_seq));
        if late > u32::MAX / 2 {
            return None; // not yet due
        }
        let missed = late / u32::from(self.period_ms);
        if missed > 0 {
            self.next_seq = self.next_seq.wrapping_add(missed);
            self.dropped = self.dropped.wrapping_add(missed);
        }
        let seq = self.next_seq;
        self.next_seq = self.next_seq.wrapping_add(1);
        Some((seq, now_ms.wrapping_sub(self.slot_ms(seq))))
    }

    /// Read all sensors for one slot, averaging the ADC inputs over the oversampling.
    pub fn acquire<A: Adc, T: Thermocouple>(&self, adc: &mut A, tc: &mut T) -> Acquired {
        let mut adc_failed = false;
        let mut average = |input| {
            let mut sum: i32 = 0;
            for _ in 0..self.oversample {
                match adc.convert(input) {
                    Ok(code) => sum += i32::from(code),
                    Err(_) => {
                        adc_failed = true;
                        return 0;
                    }
                }
            }
            let n = i32::from(self.oversample);
            // round half away from zero
            ((sum + sum.signum() * n / 2) / n) as i16
        };
        let hall_code = average(AdcInput::Hall);
        let probe_code = average(AdcInput::ProbeThermistor);
        Acquired {
            hall_code,
            probe_code,
            thermo: tc.read_word().ok(),
            adc_failed,
        }
    }

    /// Queue a sample for the link; drops the oldest when full.
    pub fn enqueue(&mut self, sample: Sample) {
        if self.queue.is_full() {
            self.queue.pop_front();
            self.dropped = self.dropped.wrapping_add(1);
        }
        // cannot fail: a place was just made
        let _ = self.queue.push_back(sample);
    }

    /// Skip a slot without a sample (sensors failed); counted as dropped.
    pub fn skip(&mut self) {
        self.dropped = self.dropped.wrapping_add(1);
    }

    /// Next sample for the link.
    pub fn dequeue(&mut self) -> Option<Sample> {
        self.queue.pop_front()
    }

    /// Samples waiting.
    pub fn queued(&self) -> usize {
        self.queue.len()
    }

    /// Samples dropped so far.
    pub fn dropped(&self) -> u32 {
        self.dropped
    }

    /// Build the sample frame body.
    pub fn sample(
        seq: u32,
        lateness_ms: u32,
        acq: &Acquired,
        word: ThermoWord,
        duty: f32,
        heater_enabled: bool,
        fault_latched: bool,
    ) -> Sample {
        Sample {
            seq_lo: seq as u8,
            status: SampleStatus::new(heater_enabled, fault_latched, lateness_ms),
            hall_code: acq.hall_code,
            probe_code: acq.probe_code,
            thermo: word,
            duty: (duty.clamp(0.0, 1.0) * 255.0 + 0.5) as u8,
        }
    }

    /// The beacon describing this schedule.
    pub fn beacon(&self, state: RunState, setpoint_tenth_c: i16) -> Beacon {
        Beacon {
            seq: self.next_seq.wrapping_sub(1),
            epoch_seq: self.epoch_seq,
            epoch_ms: self.epoch_ms,
            period_ms: self.period_ms,
            dropped_total: self.dropped,
            state,
            setpoint_tenth_c,
        }
    }
}
