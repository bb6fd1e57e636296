//! Records with several heat cycles (pre-ageing then measuring, repeated tests): where each
//! cycle begins and ends, split in the middle of the plateau between them so that each gets
//! its own settled readings before and after.

use std::ops::Range;

use super::segments::MIN_SPAN_K;
use crate::input::dataset::Series;

/// A cycle has ended once the temperature is back below the start plus this fraction of its
/// excursion (and half the smallest span worth fitting).
pub const RETURN_FRACTION: f64 = 0.25;

/// The cycles of a record as index ranges (one range covering everything for a plain record).
pub fn find(temp_c: &[f64]) -> Vec<Range<usize>> {
    let n = temp_c.len();
    if n == 0 {
        return std::iter::once(0..0).collect();
    }
    let start = temp_c[..n.min(20)].iter().sum::<f64>() / n.min(20) as f64;
    // (rise, return) index pairs of each excursion
    let mut excursions: Vec<(usize, usize)> = Vec::new();
    let mut i = 0;
    while i < n {
        let Some(rise) = (i..n).find(|&k| temp_c[k] > start + MIN_SPAN_K) else {
            break;
        };
        let mut peak = temp_c[rise];
        let mut k = rise;
        // back below a quarter of the excursion and below half the smallest span, so that the
        // next rise above the span is a new cycle
        while k < n && temp_c[k] > start + (RETURN_FRACTION * (peak - start)).min(0.5 * MIN_SPAN_K)
        {
            peak = peak.max(temp_c[k]);
            k += 1;
        }
        if k >= n {
            break;
        }
        excursions.push((rise, k));
        i = k;
    }
    if excursions.len() < 2 {
        return std::iter::once(0..n).collect();
    }
    // split between one excursion's return and the next one's rise, at the middle of the
    // coolest stretch there
    let mut cuts = vec![0];
    for w in excursions.windows(2) {
        let (from, to) = (w[0].1, w[1].0);
        let low = temp_c[from..to]
            .iter()
            .copied()
            .fold(f64::INFINITY, f64::min);
        let near: Vec<usize> = (from..to).filter(|&k| temp_c[k] < low + 1.0).collect();
        let cut = match (near.first(), near.last()) {
            (Some(a), Some(b)) => (a + b) / 2,
            _ => (from + to) / 2,
        };
        cuts.push(cut);
    }
    cuts.push(n);
    cuts.windows(2).map(|w| w[0]..w[1]).collect()
}

/// The rows `r` of `s` as a series of their own.
pub fn slice(s: &Series, r: Range<usize>) -> Series {
    let cut = |v: &Vec<f64>| v[r.clone()].to_vec();
    let (t0, t1) = (s.time_s[r.start], s.time_s[r.end - 1]);
    Series {
        time_s: cut(&s.time_s),
        temp_c: cut(&s.temp_c),
        flux_mt: cut(&s.flux_mt),
        probe_c: s.probe_c.as_ref().map(cut),
        repairs: Default::default(),
        breaks: Vec::new(),
        duty_pct: s.duty_pct.as_ref().map(cut),
        setpoint_c: s.setpoint_c.as_ref().map(cut),
        faults: s
            .faults
            .iter()
            .filter(|f| f.0 >= t0 && f.0 <= t1)
            .cloned()
            .collect(),
        skipped: Vec::new(),
        spikes: Vec::new(),
        notes: Vec::new(),
    }
}
