//! A slow drift of the probe's zero (a cheap linear Hall sensor or its amplifier warming up),
//! told apart from a loss: in the flat stretches before and after the excursion the magnet's
//! flux cannot change, so a trend there — once the small temperature creep is referred away with
//! the fitted curve — is the probe's. Modelled as linear in time, estimated from both stretches,
//! corrected when it matters, and budgeted either way: a loss is only claimed where it stands
//! above what the stretches cannot exclude.

use super::lag_estimate::Lagged;
use super::model::{autocorrelation_inflation, Quadratic};
use super::prepare::Prepared;
use crate::input::series::Series;
use crate::units::Phrase;
use serde::Serialize;

/// The drift as the result states it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DriftResult {
    /// Rate, mT/h.
    #[serde(rename = "rate_mT_per_h")]
    pub rate_mt_per_h: f64,
    /// Its standard uncertainty, mT/h.
    #[serde(rename = "u_mT_per_h")]
    pub u_mt_per_h: f64,
    /// What it moved the reading by between the stretches before and after, %.
    pub over_excursion_pct: f64,
    /// It was large enough to correct (else: bounded the loss claimed as damage).
    pub corrected: bool,
}

/// A drift is corrected when its rate stands this many standard uncertainties from zero …
pub const SIGNIFICANT_SIGMAS: f64 = 4.0;
/// … and moves the reading by more than this over the excursion, %.
pub const MATTERS_PCT: f64 = 0.02;

/// The probe's zero drift as the flat stretches show it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Drift {
    /// Rate, mT/s.
    pub rate_mt_per_s: f64,
    /// Its standard uncertainty, mT/s (the fits' and, with two stretches, their disagreement).
    pub u_mt_per_s: f64,
    /// Mid times of the stretches before and after, s.
    pub at_s: [f64; 2],
    /// The flux it is relative to, mT.
    pub flux_mt: f64,
}

/// Slope of `b` against `t` by least squares and its standard uncertainty (inflated for
/// neighbouring readings that move together).
fn slope(t: &[f64], b: &[f64]) -> Option<(f64, f64)> {
    let n = t.len() as f64;
    if t.len() < 20 {
        return None;
    }
    let (mt, mb) = (t.iter().sum::<f64>() / n, b.iter().sum::<f64>() / n);
    let stt: f64 = t.iter().map(|x| (x - mt) * (x - mt)).sum();
    if stt <= 0.0 {
        return None;
    }
    let k = t
        .iter()
        .zip(b)
        .map(|(x, y)| (x - mt) * (y - mb))
        .sum::<f64>()
        / stt;
    let res: Vec<f64> = t
        .iter()
        .zip(b)
        .map(|(x, y)| y - mb - k * (x - mt))
        .collect();
    let sd = (res.iter().map(|r| r * r).sum::<f64>() / (n - 2.0)).sqrt();
    Some((k, sd / stt.sqrt() * autocorrelation_inflation(&res)))
}

/// The settled half of a window.
fn settled(r: &std::ops::Range<usize>) -> std::ops::Range<usize> {
    r.start + (r.end - r.start) / 2..r.end
}

/// The drift the stretches before and after show, each reading referred by the fitted curve to
/// its stretch's mean magnet temperature; `None` without a stretch after the excursion.
pub fn estimate(p: &Prepared, lagged: &Lagged, model: &Quadratic) -> Option<Drift> {
    let after = lagged.seg.after.as_ref()?;
    let mut fits = Vec::new();
    let mut mids = [0.0; 2];
    for (k, w) in [settled(&lagged.seg.before), settled(after)]
        .iter()
        .enumerate()
    {
        let idx: Vec<usize> = w.clone().collect();
        if idx.is_empty() {
            return None;
        }
        let t_mean = idx.iter().map(|&i| lagged.tm[i]).sum::<f64>() / idx.len() as f64;
        let t: Vec<f64> = idx.iter().map(|&i| p.s.time_s[i]).collect();
        let b: Vec<f64> = idx
            .iter()
            .map(|&i| p.flux[i] * model.eval_mt(t_mean) / model.eval_mt(lagged.tm[i]))
            .collect();
        mids[k] = 0.5 * (t[0] + t[t.len() - 1]);
        fits.extend(slope(&t, &b));
    }
    if fits.is_empty() {
        return None;
    }
    // weighted by their uncertainties; two stretches that disagree widen it
    let w: Vec<f64> = fits.iter().map(|(_, u)| 1.0 / (u * u).max(1e-30)).collect();
    let sw: f64 = w.iter().sum();
    let rate = fits.iter().zip(&w).map(|((k, _), w)| k * w).sum::<f64>() / sw;
    let mut u = (1.0 / sw).sqrt();
    if let [(k0, _), (k1, _)] = fits[..] {
        u = u.hypot((k0 - k1).abs() / 2.0 / 3f64.sqrt());
    }
    Some(Drift {
        rate_mt_per_s: rate,
        u_mt_per_s: u,
        at_s: mids,
        flux_mt: model.b0_mt,
    })
}

impl Drift {
    /// Time between the stretches, s.
    pub fn span_s(&self) -> f64 {
        self.at_s[1] - self.at_s[0]
    }

    /// The drift over the excursion, % of the reading.
    pub fn over_excursion_pct(&self) -> f64 {
        self.rate_mt_per_s * self.span_s() / self.flux_mt * 100.0
    }

    /// What it leaves open over the excursion (standard uncertainty), % of the reading.
    pub fn u_over_excursion_pct(&self) -> f64 {
        self.u_mt_per_s * self.span_s() / self.flux_mt.abs() * 100.0
    }

    /// For the result.
    pub fn result(&self, corrected: bool) -> DriftResult {
        DriftResult {
            rate_mt_per_h: self.rate_mt_per_s * 3600.0,
            u_mt_per_h: self.u_mt_per_s * 3600.0,
            over_excursion_pct: self.over_excursion_pct(),
            corrected,
        }
    }

    /// Large enough to correct.
    pub fn matters(&self) -> bool {
        self.rate_mt_per_s.abs() > SIGNIFICANT_SIGMAS * self.u_mt_per_s
            && self.over_excursion_pct().abs() > MATTERS_PCT
    }

    /// The series with the drift taken out of every reading (zero at the first stretch).
    pub fn corrected(&self, s: &Series) -> Series {
        let mut out = s.clone();
        for (b, t) in out.flux_mt.iter_mut().zip(&s.time_s) {
            *b -= self.rate_mt_per_s * (t - self.at_s[0]);
        }
        out
    }

    /// The note that names it.
    pub fn note(&self) -> Phrase {
        format!(
            "the probe's zero drifted: the flux moved {:+.3} % of the reading ({:+.3} mT/h) across the flat stretches before and after the excursion, where a magnet's flux cannot change; corrected as a drift linear in time, what remains of it is in the budgets",
            self.over_excursion_pct(),
            self.rate_mt_per_s * 3600.0
        )
        .into()
    }
}

/// The loss budget's line for what remains of a corrected drift, its U95 taken again.
pub fn budget_loss(l: &mut super::loss::LossResult, d: &Drift) {
    l.budget.push(super::result::BudgetLine::b(
        "probe zero drift between the references (what remains after its correction)",
        d.u_over_excursion_pct(),
    ));
    l.u95_pct = super::result::BudgetLine::expanded(&l.budget);
}

/// The α budget's line for what remains of a corrected drift, %/°C: its uncertainty over the
/// ramps' duration `ramp_s` read as a slope over the fitted range's width.
pub fn budget_alpha(a: &mut super::alpha::AlphaResult, d: &Drift, ramp_s: f64) {
    let width_k = (a.range_c[1] - a.range_c[0]).max(1.0);
    let u = d.u_mt_per_s * ramp_s / (a.model.b0_mt.abs() * width_k) * 100.0;
    a.budget.push(super::result::BudgetLine::b(
        "probe zero drift during the ramps (what remains after its correction)",
        u,
    ));
}

/// The least loss that can be told from a drift the flat stretches cannot exclude (twice the
/// uncorrected drift, with its uncertainty, over the excursion), %: a loss below it is not
/// claimed as damage.
pub fn undecided_pct(d: &Drift) -> f64 {
    2.0 * d.rate_mt_per_s.hypot(d.u_mt_per_s) * d.span_s() / d.flux_mt.abs() * 100.0
}
