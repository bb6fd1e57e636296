//! Cleaning a loaded series before anything is fitted: thermocouple spikes rejected by a
//! robust rule (a Hampel filter: the median and median absolute deviation of the neighbours),
//! and what the loader left out put into words for the report.

use super::series::Series;
use crate::units::{self, Phrase};

/// Neighbours each side that judge a reading.
pub const SPIKE_HALF_WINDOW: usize = 3;
/// A reading further than this many robust standard deviations from its neighbours' median is
/// a spike (Hampel's rule; 3 is the textbook choice, 6 leaves real steps alone) …
pub const SPIKE_SIGMAS: f64 = 6.0;
/// … and further than this, K (so quantization steps of a quiet record are never spikes).
pub const SPIKE_FLOOR_K: f64 = 2.0;
/// Scale from the median absolute deviation to a normal standard deviation.
const MAD_TO_SD: f64 = 1.4826;

/// Remove thermocouple spikes from `s` (every column of the rows), recording each in
/// `s.spikes` with its time and value.
pub fn despike(s: &mut Series) {
    let t = &s.temp_c;
    let n = t.len();
    if n < 2 * SPIKE_HALF_WINDOW + 1 {
        return;
    }
    let mut keep = vec![true; n];
    let mut win = Vec::with_capacity(2 * SPIKE_HALF_WINDOW);
    let mut dev = Vec::with_capacity(2 * SPIKE_HALF_WINDOW);
    for i in 0..n {
        let lo = i.saturating_sub(SPIKE_HALF_WINDOW);
        let hi = (i + SPIKE_HALF_WINDOW + 1).min(n);
        // cheap test first: most readings sit between their neighbours
        let (a, b) = (t[lo], t[hi - 1]);
        if (t[i] - 0.5 * (a + b)).abs() <= SPIKE_FLOOR_K {
            continue;
        }
        win.clear();
        win.extend((lo..hi).filter(|&j| j != i).map(|j| t[j]));
        let med = median(&mut win);
        dev.clear();
        dev.extend(win.iter().map(|v| (v - med).abs()));
        let mad = median(&mut dev);
        let limit = (SPIKE_SIGMAS * MAD_TO_SD * mad).max(SPIKE_FLOOR_K);
        if (t[i] - med).abs() > limit {
            keep[i] = false;
        }
    }
    if keep.iter().all(|&k| k) {
        return;
    }
    for (i, k) in keep.iter().enumerate() {
        if !k {
            s.spikes.push((s.time_s[i], s.temp_c[i]));
        }
    }
    let filter = |v: &mut Vec<f64>| {
        let mut it = keep.iter();
        v.retain(|_| *it.next().unwrap_or(&true));
    };
    filter(&mut s.time_s);
    filter(&mut s.temp_c);
    filter(&mut s.flux_mt);
    for v in [&mut s.probe_c, &mut s.duty_pct, &mut s.setpoint_c]
        .into_iter()
        .flatten()
    {
        filter(v);
    }
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let m = v.len() / 2;
    if v.len() % 2 == 1 {
        v[m]
    } else {
        0.5 * (v[m - 1] + v[m])
    }
}

/// What the loader left out, in words: rows by reason (with the first line of each) and the
/// spikes rejected.
pub fn notes(s: &Series) -> Vec<Phrase> {
    let mut out = s.notes.clone();
    let mut reasons: Vec<(&str, usize, usize)> = Vec::new();
    for (line, why) in &s.skipped {
        match reasons.iter_mut().find(|r| r.0 == why) {
            Some(r) => r.1 += 1,
            None => reasons.push((why, 1, *line)),
        }
    }
    for (why, count, first) in reasons {
        out.push(
            if count == 1 {
                format!("1 row left out: {why} (line {first})")
            } else {
                format!("{count} rows left out: {why} (first at line {first})")
            }
            .into(),
        );
    }
    if let Some(&(t, v)) = s.spikes.first() {
        out.push(crate::phrase![
            format!(
                "{} thermocouple spike{} rejected (a reading far from its neighbours' median; first at t = {t:.1} s: ",
                s.spikes.len(),
                if s.spikes.len() == 1 { "" } else { "s" }
            ),
            units::temp_q(v, 1),
            ")"
        ]);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spikes_go_and_a_fast_ramp_with_quantization_stays() {
        let mut s = Series::default();
        for i in 0..500 {
            let t = i as f64 * 0.1;
            // 20 K/min ramp on a 0.25 °C quantizer
            let temp = ((25.0 + t / 3.0) * 4.0).round() / 4.0;
            s.time_s.push(t);
            s.temp_c.push(temp);
            s.flux_mt.push(200.0);
        }
        s.temp_c[100] = 1372.0; // an open-circuit reading the converter let through
        s.temp_c[300] -= 40.0;
        despike(&mut s);
        assert_eq!(s.spikes.len(), 2, "{:?}", s.spikes);
        assert_eq!(s.time_s.len(), 498);
        assert_eq!(s.flux_mt.len(), 498);
        assert!(notes(&s)[0]
            .to_string()
            .starts_with("2 thermocouple spikes rejected"));
    }
}
