//! Step 3: which points the reversible curve is fitted to — the heating branch well below a
//! Curie collapse, the lag-corrected ramps (the cooling branch alone after a loss), or, with
//! no lag estimate, the settled soak points, or a record's one ramp.

use super::context::AnalysisError;
use super::curie::CURIE_MARGIN_K;
use super::lag;
use super::lag_estimate::Lagged;
use super::lag_estimate::MIN_BRANCH_SAMPLES;
use super::prepare::{mean, Prepared, LOSSY};
use super::result::FitMethod;
use super::segments::{Segments, MIN_SPAN_K};

/// Fewest soak points that make a quadratic worth fitting.
pub const MIN_SOAKS: usize = 4;
/// One ramp alone cannot tell the lag (that takes the other branch): its τ is taken anywhere
/// in this band, s, the fit made at its middle and the band's effect put in the budget.
pub const SINGLE_RAMP_TAU_S: (f64, f64) = (0.0, 120.0);

/// The points of a record's one usable ramp (the heating or the cooling branch, whichever
/// spans more), its temperatures lag-corrected with `tau_s`; `None` when neither spans
/// [`MIN_SPAN_K`] over enough samples.
pub fn single_ramp(p: &Prepared, seg: &Segments, tau_s: f64) -> Option<(Vec<f64>, Vec<f64>)> {
    let span = |r: &std::ops::Range<usize>| {
        if r.len() <= MIN_BRANCH_SAMPLES {
            return 0.0;
        }
        let t = &p.s.temp_c[r.clone()];
        let (lo, hi) = t
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &x| {
                (l.min(x), h.max(x))
            });
        hi - lo
    };
    let r = if span(&seg.heating) >= span(&seg.cooling) {
        &seg.heating
    } else {
        &seg.cooling
    };
    if span(r) < MIN_SPAN_K {
        return None;
    }
    let tm = lag::lagged(&p.s.time_s, &p.s.temp_c, tau_s);
    let idx: Vec<usize> = r.clone().step_by(p.stride).collect();
    Some((
        idx.iter().map(|&i| tm[i]).collect(),
        idx.iter().map(|&i| p.flux[i]).collect(),
    ))
}

/// The points to fit and how they were chosen.
pub struct FitData {
    /// Magnet temperatures, °C.
    pub t_c: Vec<f64>,
    /// Fluxes, mT.
    pub b_mt: Vec<f64>,
    /// How they were chosen, in words for the report.
    pub method: &'static str,
    /// The same as a stable code for machines: `heating_below_collapse`, `cooling_branch`,
    /// `ramps`, `soak_points` or `single_ramp`.
    pub code: super::result::FitMethod,
}

/// Choose the points.
pub fn select(
    p: &Prepared,
    lagged: &Lagged,
    collapse: Option<usize>,
) -> Result<FitData, AnalysisError> {
    let tm = &lagged.tm;
    if let (Some(ic), Some(tc)) = (collapse, lagged.curie_c) {
        // well below the collapse the reversible curve is still the usual one
        let idx: Vec<usize> = (0..ic)
            .step_by(p.stride)
            .filter(|&i| tm[i] < tc - CURIE_MARGIN_K)
            .collect();
        return Ok(FitData {
            t_c: idx.iter().map(|&i| tm[i]).collect(),
            b_mt: idx.iter().map(|&i| p.flux[i]).collect(),
            method: "the heating branch below the collapse",
            code: FitMethod::HeatingBelowCollapse,
        });
    }
    if lagged.tau_s.is_some() {
        let (t_c, b_mt) = p.fit_points(&lagged.seg, tm, lagged.loss);
        let (method, code) = if lagged.loss > LOSSY {
            ("the lag-corrected cooling branch", FitMethod::CoolingBranch)
        } else {
            ("lag-corrected ramps", FitMethod::Ramps)
        };
        return Ok(FitData {
            t_c,
            b_mt,
            method,
            code,
        });
    }
    let mut t = Vec::new();
    let mut b = Vec::new();
    for r in &lagged.seg.soaks {
        let tail = r.start + (r.end - r.start) * 7 / 10..r.end;
        t.push(mean(tail.clone().map(|i| p.s.temp_c[i])).0);
        b.push(mean(tail.map(|i| p.flux[i])).0);
    }
    if t.len() < MIN_SOAKS {
        let mid = 0.5 * (SINGLE_RAMP_TAU_S.0 + SINGLE_RAMP_TAU_S.1);
        if let Some((t_c, b_mt)) = single_ramp(p, &lagged.seg, mid) {
            return Ok(FitData {
                t_c,
                b_mt,
                method: "one ramp alone (no return: the lag taken from a band, not estimated)",
                code: FitMethod::SingleRamp,
            });
        }
        return Err(AnalysisError::CannotFit(format!(
            "only {} soaks and no usable heating and cooling branches; at least {MIN_SOAKS} soaks are needed",
            t.len()
        )));
    }
    Ok(FitData {
        t_c: t,
        b_mt: b,
        method: "soak points",
        code: FitMethod::SoakPoints,
    })
}
