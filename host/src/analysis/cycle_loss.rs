//! Step 5's choice for one cycle: the loss from the references before and after, else from
//! the heating and cooling branches of a record with no return, and the notes that say which
//! or why there is none.

use super::context::Context;
use super::pipeline::PROBE_RETURN_K;
use super::prepare::{Prepared, LOSSY};
use super::{alpha, branch_loss, branch_ratio, lag_estimate, loss};
use crate::units::{self, Phrase};

/// The cycle's loss (from the references, else from the branches) and whether it came from
/// the references.
pub fn cycle_loss(
    prep: &Prepared,
    lagged: &lag_estimate::Lagged,
    ctx: &Context,
    a: &alpha::AlphaResult,
    notes: &mut Vec<Phrase>,
) -> (Option<loss::LossResult>, bool) {
    let loss = loss::full(
        prep,
        &lagged.seg,
        &lagged.tm,
        ctx,
        &a.model,
        (a.alpha, a.u_c()),
        lag_relative_u(lagged),
    );
    let by_references = loss.is_ok();
    let loss = with_branch_loss(loss, prep, lagged, notes);
    note_loss(&loss, notes);
    let loss = loss
        .ok()
        .filter(|l| l.loss_pct.is_finite() && l.u95_pct.is_finite());
    (loss, by_references)
}

/// How well the lag is known, relative to itself: the α budget's band (±20 %, or every τ the
/// branches leave possible); 1 (the whole correction) when no lag was estimated.
fn lag_relative_u(lagged: &lag_estimate::Lagged) -> f64 {
    match (lagged.tau_s, lagged.tau_range_s) {
        (Some(tau), range) if tau > 0.0 => {
            let (lo, hi) = range.unwrap_or((tau, tau));
            ((tau - lo).max(hi - tau) / tau).max(alpha::LAG_TOLERANCE)
        }
        _ => 1.0,
    }
}

/// A record with no return whose branches show a loss: the loss between the branches.
fn with_branch_loss(
    loss: Result<loss::LossResult, loss::NoLoss>,
    prep: &Prepared,
    lagged: &lag_estimate::Lagged,
    notes: &mut Vec<Phrase>,
) -> Result<loss::LossResult, loss::NoLoss> {
    match (loss, lagged.tau_s) {
        // no return, but the branches show the magnet lost flux: the loss between them
        (Err(loss::NoLoss::NoReturn), Some(tau)) if lagged.loss > LOSSY => {
            let l = branch_loss::full(prep, &lagged.seg, &lagged.tm, tau, alpha::LAG_TOLERANCE);
            if let Some(l) = &l {
                let below_c = l.ref_c[0]
                    + branch_ratio::LOSSY_COMPARE_FRACTION
                        * (lagged.tm[lagged.seg.peak] - l.ref_c[0]);
                notes.push(crate::phrase![
                    format!("the record does not return to a settled temperature, but the heating and cooling branches disagree at the same magnet temperature: the loss is seen between the branches ({:.2} % at the same temperature below ", l.loss_pct),
                    units::temp_q(below_c, 0),
                    ")",
                ]);
            }
            l.ok_or(loss::NoLoss::NoReturn)
        }
        (l, _) => l,
    }
}

/// Notes about the loss: not computed, or a probe that had not cooled back.
fn note_loss(loss: &Result<loss::LossResult, loss::NoLoss>, notes: &mut Vec<Phrase>) {
    match loss {
        Err(why) => notes.push(why.explain()),
        Ok(l) => {
            if let Some(p) = l
                .ref_probe_c
                .filter(|p| (p[1] - p[0]).abs() > PROBE_RETURN_K)
            {
                notes.push(crate::phrase![
                    "the probe had not cooled back (",
                    units::temp_q(p[0], 1),
                    " before, ",
                    units::temp_q(p[1], 1),
                    format!(" after): its own drift is corrected by calibration and counted in the loss budget ({:.3} %)", l.probe_term_pct),
                ]);
            }
        }
    }
}
