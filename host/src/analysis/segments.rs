//! Finding the parts of a heat cycle: the reference readings before and after the excursion,
//! the peak, the heating and cooling branches, and the soaks.

use std::ops::Range;

/// The parts of a cycle, as index ranges into the series.
#[derive(Debug, Clone, PartialEq)]
pub struct Segments {
    /// Settled readings before heating began.
    pub before: Range<usize>,
    /// Settled readings after the return, if the record has them.
    pub after: Option<Range<usize>>,
    /// Index of the highest temperature.
    pub peak: usize,
    /// From the end of `before` to the peak.
    pub heating: Range<usize>,
    /// From the peak to the start of `after` (or the end).
    pub cooling: Range<usize>,
    /// Stretches where the temperature held still.
    pub soaks: Vec<Range<usize>>,
}

impl Segments {
    /// The same parts `k` samples later (a cycle's parts placed in the whole record).
    pub fn shifted(self, k: usize) -> Segments {
        let sh = |r: Range<usize>| r.start + k..r.end + k;
        Segments {
            before: sh(self.before),
            after: self.after.map(sh),
            peak: self.peak + k,
            heating: sh(self.heating),
            cooling: sh(self.cooling),
            soaks: self.soaks.into_iter().map(sh).collect(),
        }
    }
}

/// The temperature span below which α is not worth reporting, K.
pub const MIN_SPAN_K: f64 = 10.0;

/// The record's final temperature is the median of this many last readings.
pub const END_SAMPLES: usize = 21;

/// How far the temperature may stray and still count as the reference, K.
pub const REFERENCE_BAND_K: f64 = 0.6;
/// A return that still creeps (a fast profile's short return hold, a magnet with a long lag):
/// the magnet estimate within this band around its final value, K, …
pub const CREEPING_BAND_K: f64 = 3.0;
/// … for at least this long, s: the loss step refers it by its lag-corrected temperature.
pub const CREEPING_MIN_S: f64 = 60.0;
/// A final plateau counts as the return when it is below the start plus this fraction of the
/// excursion (a fixture that has not cooled all the way back: the loss step refers both
/// references to one temperature with the fitted curve and budgets that correction).
pub const RETURN_FRACTION: f64 = 0.45;
/// Soaks: the temperature stays within this band of where the stretch began, K …
pub const SOAK_BAND_K: f64 = 0.15;
/// … for at least this long, s.
pub const SOAK_MIN_S: f64 = 60.0;

/// A soak also needs the thermocouple within this of the magnet estimate (a ramp's start,
/// where the thermocouple has already moved on, is not a soak), K.
pub const SOAK_AGREEMENT_K: f64 = 0.4;

/// Split a series into its parts: `temp_c` is the magnet temperature (lag-corrected when
/// known), `thermocouple_c` the measured one.
pub fn find(time_s: &[f64], temp_c: &[f64], thermocouple_c: &[f64]) -> Segments {
    let n = temp_c.len();
    let start = temp_c[..n.min(20)].iter().sum::<f64>() / n.min(20) as f64;
    let rise = temp_c
        .iter()
        .position(|&t| t > start + REFERENCE_BAND_K)
        .unwrap_or(n);
    let before = 0..rise.max(1);
    let peak = temp_c
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .map(|(i, _)| i)
        .unwrap_or(0);
    // the final value as the median of the last readings, so one noisy last sample cannot
    // decide where the settled tail ends
    let end_t = {
        let mut last: Vec<f64> = temp_c[n.saturating_sub(END_SAMPLES)..].to_vec();
        last.sort_by(f64::total_cmp);
        last[last.len() / 2]
    };
    // the settled tail: back from the end while within the band of the final value
    let mut tail = n - 1;
    while tail > peak && (temp_c[tail - 1] - end_t).abs() < REFERENCE_BAND_K * 0.5 {
        tail -= 1;
    }
    let near_start = |t: f64| (t - start).abs() < RETURN_FRACTION * (temp_c[peak] - start).max(0.0);
    let mut returned = near_start(end_t) && peak < tail && time_s[n - 1] - time_s[tail] >= 30.0;
    if !returned && near_start(end_t) {
        // not settled to the narrow band: a slow creep at the end still serves
        let mut creep = n - 1;
        while creep > peak && (temp_c[creep - 1] - end_t).abs() < CREEPING_BAND_K * 0.5 {
            creep -= 1;
        }
        if peak < creep && time_s[n - 1] - time_s[creep] >= CREEPING_MIN_S {
            tail = creep;
            returned = true;
        }
    }
    let mut after = returned.then_some(tail..n);
    let soaks = soaks(time_s, temp_c, thermocouple_c);
    // prefer settled soaks near room temperature as the references: the last soak before
    // the excursion and the last one after it, when they are close in temperature
    let mut before = before;
    let near_room = |r: &Range<usize>| temp_c[r.start] < start + 8.0;
    if let Some(b) = soaks.iter().rev().find(|r| r.end <= peak && near_room(r)) {
        before = b.clone();
    }
    if let Some(a) = soaks
        .iter()
        .rev()
        .find(|r| r.start > peak && near_start(temp_c[r.start]))
    {
        after = Some(a.clone());
    }
    let heating = before.end.min(peak)..peak;
    let cooling = peak..after.as_ref().map(|a| a.start).unwrap_or(n);
    Segments {
        before,
        after,
        peak,
        heating,
        cooling,
        soaks,
    }
}

fn soaks(time_s: &[f64], temp_c: &[f64], tc: &[f64]) -> Vec<Range<usize>> {
    let n = temp_c.len();
    let mut out = Vec::new();
    let mut i = 0;
    while i < n {
        let mut j = i;
        // extend while the temperature stays in the band (a slow ramp's start must not count)
        while j + 1 < n
            && (temp_c[j + 1] - temp_c[i]).abs() <= SOAK_BAND_K
            && (tc[j + 1] - temp_c[j + 1]).abs() <= SOAK_AGREEMENT_K
        {
            j += 1;
        }
        if time_s[j] - time_s[i] >= SOAK_MIN_S {
            out.push(i..j + 1);
            i = j + 1;
        } else {
            i += ((j - i) / 2).max(1);
        }
    }
    out
}
