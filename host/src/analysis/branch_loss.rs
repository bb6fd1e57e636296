//! The irreversible loss of a record with no settled return: the heating branch (before the
//! magnet began to lose) against the cooling branch (after), at the same lag-corrected magnet
//! temperature, in the lower part of the excursion where both exist.

use super::lag;
use super::loss::{LossResult, CORRELATED_SAMPLES};
use super::model::Quadratic;
use super::prepare::{mean, Prepared, LOSSY_COMPARE_FRACTION};
use super::result::BudgetLine;
use super::segments::Segments;

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

fn ratios(p: &Prepared, seg: &Segments, tm: &[f64]) -> Option<Vec<f64>> {
    ratios_on(
        tm,
        |i| p.flux[i],
        seg.heating.start..seg.peak,
        seg.peak..tm.len(),
        p.stride,
    )
}

/// The loss (fraction) the branches show, for the lag search.
pub fn quick(p: &Prepared, seg: &Segments, tm: &[f64]) -> Option<f64> {
    ratios(p, seg, tm).map(|r| from_ratios(&r))
}

/// The loss with its budget: the scatter of the compared points and how far the result moves
/// when the lag is off by `lag_tolerance`.
pub fn full(
    p: &Prepared,
    seg: &Segments,
    tm: &[f64],
    tau_s: f64,
    lag_tolerance: f64,
) -> Option<LossResult> {
    let r = ratios(p, seg, tm)?;
    let (m, sd, n) = mean(r.into_iter());
    let loss = 1.0 - 1.0 / (1.0 + m);
    let at = |tau: f64| {
        let tm = lag::lagged(&p.s.time_s, &p.s.temp_c, tau);
        quick(p, seg, &tm).unwrap_or(loss)
    };
    let lag_u = (at(tau_s * (1.0 + lag_tolerance)) - at(tau_s * (1.0 - lag_tolerance))).abs()
        / 2.0
        / 3f64.sqrt();
    let budget = vec![
        BudgetLine::a(
            "scatter of the compared branch points (type A)",
            sd / (n as f64 / CORRELATED_SAMPLES).max(1.0).sqrt() * 100.0,
        ),
        BudgetLine::b(
            format!(
                "lag model (τ ± {:.0} %, rectangular)",
                lag_tolerance * 100.0
            ),
            lag_u * 100.0,
        ),
    ];
    let t_lo = (seg.heating.start..seg.peak)
        .map(|i| tm[i])
        .fold(f64::INFINITY, f64::min);
    Some(LossResult {
        loss_pct: loss * 100.0,
        u95_pct: 2.0 * BudgetLine::combined(&budget),
        budget,
        ref_c: [t_lo, t_lo],
        ref_probe_c: None,
        probe_term_pct: 0.0,
    })
}
