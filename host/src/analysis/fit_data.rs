//! Step 3: which points the reversible curve is fitted to — the heating branch well below a
//! Curie collapse, the lag-corrected ramps (the cooling branch alone after a loss), or, with
//! no lag estimate, the settled soak points.

use super::context::AnalysisError;
use super::curie::CURIE_MARGIN_K;
use super::lag_estimate::Lagged;
use super::prepare::{mean, Prepared, LOSSY};

/// Fewest soak points that make a quadratic worth fitting.
pub const MIN_SOAKS: usize = 4;

/// The points to fit and how they were chosen.
pub struct FitData {
    /// Magnet temperatures, °C.
    pub t_c: Vec<f64>,
    /// Fluxes, mT.
    pub b_mt: Vec<f64>,
    /// How they were chosen, in words for the report.
    pub method: &'static str,
    /// The same as a stable code for machines: `heating_below_collapse`, `cooling_branch`,
    /// `ramps` or `soak_points`.
    pub code: &'static str,
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
            code: "heating_below_collapse",
        });
    }
    if lagged.tau_s.is_some() {
        let (t_c, b_mt) = p.fit_points(&lagged.seg, tm, lagged.loss);
        let (method, code) = if lagged.loss > LOSSY {
            ("the lag-corrected cooling branch", "cooling_branch")
        } else {
            ("lag-corrected ramps", "ramps")
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
        return Err(AnalysisError::CannotFit(format!(
            "only {} soaks and no usable heating and cooling branches; at least {MIN_SOAKS} soaks are needed",
            t.len()
        )));
    }
    Ok(FitData {
        t_c: t,
        b_mt: b,
        method: "soak points",
        code: "soak_points",
    })
}
