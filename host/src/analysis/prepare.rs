//! Step 1: the series made ready for the other steps — every reading referred to the gap at
//! 20 °C (the standoff expands as it warms), and a decimated copy for the lag search.

use crate::units::Phrase;
use remanent_physics::standoff;

use super::branch_ratio::LOSSY_COMPARE_FRACTION;
use super::context::Context;
use super::lag;
use super::segments::Segments;
use crate::input::dataset::Series;

/// The lag search runs on at most this many points: a first-order response is smooth, so a
/// 20 000-point series finds τ as well as a million.
pub const LAG_SEARCH_POINTS: usize = 20_000;

/// Above this irreversible loss (fraction) α is fitted on the cooling branch alone: the
/// heating branch then mixes reversible and irreversible change.
pub const LOSSY: f64 = 0.001;

/// A magnet losing more than this (fraction) was losing flux during the top soak …
pub const TOP_SOAK_LOSS: f64 = 0.0005;
/// … which is then left out of the fit: readings within this of the peak, K.
pub const TOP_SOAK_BAND_K: f64 = 3.0;

/// The series with the gap-corrected flux and the decimated lag-search copy.
pub struct Prepared<'a> {
    /// The series as loaded.
    pub s: &'a Series,
    /// Flux referred to the gap at 20 °C, mT.
    pub flux: Vec<f64>,
    /// Every `stride`-th sample goes into the fits.
    pub stride: usize,
    time_dec: Vec<f64>,
    temp_dec: Vec<f64>,
}

impl<'a> Prepared<'a> {
    /// Refer the flux to the gap at 20 °C when the geometry and the gap calibration are
    /// known; say so in `notes` when they are not.
    pub fn new(s: &'a Series, ctx: &Context, notes: &mut Vec<Phrase>) -> Prepared<'a> {
        let n = s.time_s.len();
        let shape = ctx.magnet.as_ref().map(|m| m.shape);
        let flux = match (ctx.calibration.as_ref(), shape, s.probe_c.as_ref()) {
            (Some(c), Some(shape), Some(probe)) => {
                let g0 = shape.bz_per_br(c.gap.standoff.gap_mm);
                (0..n)
                    .map(|i| {
                        let t_so = standoff::standoff_c(s.temp_c[i], probe[i]);
                        let gap = c.gap.standoff.gap_at_mm(t_so);
                        s.flux_mt[i] * g0 / shape.bz_per_br(gap)
                    })
                    .collect()
            }
            _ => {
                notes.push(
                    "no magnet geometry or gap calibration: the standoff's expansion is not corrected"
                        .into(),
                );
                s.flux_mt.clone()
            }
        };
        let stride = (n / LAG_SEARCH_POINTS).max(1);
        Prepared {
            s,
            flux,
            stride,
            time_dec: s.time_s.iter().step_by(stride).copied().collect(),
            temp_dec: s.temp_c.iter().step_by(stride).copied().collect(),
        }
    }

    /// Whether sample `i` (magnet temperature `tm_i`, peak `tmax`) sits in a top soak that a
    /// lossy magnet spent losing flux.
    fn in_lossy_top(loss: f64, tmax: f64, tm_i: f64) -> bool {
        loss > TOP_SOAK_LOSS && tmax - tm_i < TOP_SOAK_BAND_K
    }

    /// Whether a sample at `tm_i` can judge the lag: after a loss, only the lower part of the
    /// excursion (`tmin` … `tmax`), where both branches hold the same magnet.
    fn compares(loss: f64, tmin: f64, tmax: f64, tm_i: f64) -> bool {
        if loss > LOSSY {
            tm_i < tmin + LOSSY_COMPARE_FRACTION * (tmax - tmin)
        } else {
            !Self::in_lossy_top(loss, tmax, tm_i)
        }
    }

    /// Indices used for the fit: from the start of heating to the end, skipping the top soak
    /// when the magnet was losing flux there.
    pub fn fit_indices(&self, seg: &Segments, tm: &[f64], loss: f64) -> Vec<usize> {
        let tmax = tm[seg.peak];
        (0..tm.len())
            .step_by(self.stride)
            .filter(|&i| !Self::in_lossy_top(loss, tmax, tm[i]))
            .collect()
    }

    /// Indices for the reported fit: after a loss above [`LOSSY`] only the cooling branch,
    /// which is reversible once the exposure is over; otherwise both branches.
    pub fn final_indices(&self, seg: &Segments, tm: &[f64], loss: f64) -> Vec<usize> {
        if loss > LOSSY {
            (seg.peak..tm.len()).step_by(self.stride).collect()
        } else {
            self.fit_indices(seg, tm, loss)
        }
    }

    /// Flux at `i` with the irreversible loss after the peak taken back out, mT.
    pub fn adjusted(&self, i: usize, seg: &Segments, loss: f64) -> f64 {
        if i > seg.peak {
            self.flux[i] / (1.0 - loss)
        } else {
            self.flux[i]
        }
    }

    /// The points of the reported fit for magnet temperatures `tm`: (T, B).
    pub fn fit_points(&self, seg: &Segments, tm: &[f64], loss: f64) -> (Vec<f64>, Vec<f64>) {
        let idx = self.final_indices(seg, tm, loss);
        (
            idx.iter().map(|&i| tm[i]).collect(),
            idx.iter().map(|&i| self.adjusted(i, seg, loss)).collect(),
        )
    }

    /// How badly the branches disagree for a lag `tau`: the residual sum of squares of the
    /// quadratic through both (on the decimated series), with the cooling branch corrected for
    /// the loss `loss`.
    pub fn lag_cost(&self, tau: f64, seg: &Segments, loss: f64) -> f64 {
        let tm = lag::lagged(&self.time_dec, &self.temp_dec, tau);
        self.cost_with(&tm, seg, loss)
    }

    /// As [`Prepared::lag_cost`] for a record with no return, the loss profiled out: for each
    /// τ the loss the branches show at that τ (a lag error and a loss both part the branches;
    /// only the shape of the ramps' corners tells them apart).
    pub fn lag_cost_profiled(&self, tau: f64, seg: &Segments) -> (f64, f64) {
        let tm = lag::lagged(&self.time_dec, &self.temp_dec, tau);
        let (h0, pk) = (seg.heating.start / self.stride, seg.peak / self.stride);
        let loss = super::branch_ratio::ratios_on(
            &tm,
            |k| self.flux[k * self.stride],
            h0..pk,
            pk..tm.len(),
            1,
        )
        .map(|r| super::branch_ratio::from_ratios(&r).max(0.0))
        .unwrap_or(0.0);
        (self.cost_with(&tm, seg, loss), loss)
    }

    fn cost_with(&self, tm: &[f64], seg: &Segments, loss: f64) -> f64 {
        let tmax = tm.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let tmin = tm.iter().copied().fold(f64::INFINITY, f64::min);
        let keep: Vec<usize> = (0..tm.len())
            .filter(|&k| Self::compares(loss, tmin, tmax, tm[k]))
            .collect();
        let t: Vec<f64> = keep.iter().map(|&k| tm[k]).collect();
        let b: Vec<f64> = keep
            .iter()
            .map(|&k| self.adjusted(k * self.stride, seg, loss))
            .collect();
        super::lsq::quadratic_rss(&t, &b)
    }
}

/// Mean, sample standard deviation and count.
pub fn mean(v: impl Iterator<Item = f64>) -> (f64, f64, usize) {
    let v: Vec<f64> = v.collect();
    let n = v.len();
    let m = v.iter().sum::<f64>() / n.max(1) as f64;
    let var = v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n.max(2) - 1) as f64;
    (m, var.sqrt(), n)
}
