//! The Curie collapse: in a sweep past the Curie point the field falls to almost nothing on
//! the way up and does not come back.

use super::prepare::{mean, Prepared};

/// A field below this fraction of its starting value while hot marks the collapse.
pub const CURIE_FRACTION: f64 = 0.05;
/// In a Curie sweep α is fitted this far below the collapse, K.
pub const CURIE_MARGIN_K: f64 = 120.0;
/// No magnet family collapses below this (the coolest, NdFeB, near 300 °C): lower readings
/// near zero are an empty fixture, not a collapse, °C.
pub const SEARCH_ABOVE_C: f64 = 80.0;
/// The starting field is the mean of this many first samples.
pub const START_SAMPLES: usize = 50;

/// The first sample where the field has collapsed, if any.
pub fn collapse(p: &Prepared) -> Option<usize> {
    let n = p.flux.len();
    let b_start = mean(p.flux[..n.min(START_SAMPLES)].iter().copied()).0;
    (0..n).find(|&i| {
        p.s.temp_c[i] > SEARCH_ABOVE_C && p.flux[i].abs() < CURIE_FRACTION * b_start.abs()
    })
}
