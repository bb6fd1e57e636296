//! The heating branch against the cooling branch at the same magnet temperature, in the lower
//! part of the excursion where both hold the same magnet: the ratios whose mean is the loss a
//! record shows between its branches (used by the lag search and by the loss step).

use super::model::Quadratic;

/// After a loss the branches are compared only below this fraction of the excursion, where the
/// heating branch had not begun to lose.
pub const LOSSY_COMPARE_FRACTION: f64 = 0.5;

/// Fewest heating-branch points in the compared range.
pub const MIN_POINTS: usize = 30;

/// Ratios heating / cooling − 1 at the same magnet temperature, on `tm` (every `step`-th of
/// the index ranges; `flux(i)` the flux of index `i`).
pub fn ratios_on(
    tm: &[f64],
    flux: impl Fn(usize) -> f64,
    heat: std::ops::Range<usize>,
    cool: std::ops::Range<usize>,
    step: usize,
) -> Option<Vec<f64>> {
    let tmax = *tm.get(cool.start)?;
    let cool_min = tm[cool.clone()]
        .iter()
        .step_by(step)
        .copied()
        .fold(f64::INFINITY, f64::min);
    let heat_min = tm[heat.clone()]
        .iter()
        .step_by(step)
        .copied()
        .fold(f64::INFINITY, f64::min);
    let lo = cool_min.max(heat_min);
    let hi = heat_min + LOSSY_COMPARE_FRACTION * (tmax - heat_min);
    if hi <= lo {
        return None;
    }
    // the cooling curve over the compared range and a little beyond
    let span = hi - lo;
    let (ct, cb): (Vec<f64>, Vec<f64>) = cool
        .step_by(step)
        .filter(|&i| tm[i] <= hi + 0.5 * span)
        .map(|i| (tm[i], flux(i)))
        .unzip();
    let (curve, _) = Quadratic::fit(&ct, &cb).ok()?;
    let r: Vec<f64> = heat
        .step_by(step)
        .filter(|&i| tm[i] >= lo && tm[i] <= hi)
        .map(|i| flux(i) / curve.eval_mt(tm[i]) - 1.0)
        .collect();
    (r.len() >= MIN_POINTS).then_some(r)
}

/// The loss (fraction) from ratios heating / cooling − 1.
pub fn from_ratios(r: &[f64]) -> f64 {
    let m = r.iter().sum::<f64>() / r.len().max(1) as f64;
    1.0 - 1.0 / (1.0 + m)
}
