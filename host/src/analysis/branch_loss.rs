//! The irreversible loss of a record with no settled return: the heating branch (before the
//! magnet began to lose) against the cooling branch (after), at the same lag-corrected magnet
//! temperature, in the lower part of the excursion where both exist.

use super::branch_ratio::{from_ratios, ratios_on};
use super::lag;
use super::loss::{LossResult, CORRELATED_SAMPLES};
use super::prepare::{mean, Prepared};
use super::result::BudgetLine;
use super::segments::Segments;

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
        BudgetLine::rectangular(
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
        u95_pct: BudgetLine::expanded(&budget),
        budget,
        ref_c: [t_lo, t_lo],
        ref_probe_c: None,
        probe_term_pct: 0.0,
    })
}
