//! Step 2: the magnet's lag behind the thermocouple. Normally from branch coincidence — the τ
//! that makes the heating and cooling branches one curve — refined over three rounds with the
//! loss estimate, then cross-checked against the settling near room temperature; in a Curie
//! sweep from the settling alone; without a cooling branch not at all.

use super::curie::CURIE_FRACTION;
use super::prepare::Prepared;
use super::segments::{self, Segments};
use super::{branch_loss, lag, loss};
use crate::units::{self, Phrase};

/// Branches need this many samples each to be compared.
pub const MIN_BRANCH_SAMPLES: usize = 30;
/// The cooling branch must come back down at least this fraction of the excursion.
pub const MIN_RETURN_FRACTION: f64 = 0.5;
/// The branches reject a τ when it leaves them this much more residual than the best one
/// (relative); a settling estimate they do not reject is preferred, and every τ they do not
/// reject is covered by the budget.
pub const BRANCH_DISCRIMINATION: f64 = 0.02;
/// Rounds of lag search and loss refinement.
pub const ROUNDS: usize = 3;
/// The settling is consulted only when the branches leave τ open by more than this fraction
/// either side.
pub const SETTLING_WORTH: f64 = 0.25;
/// A round that moves τ by less than this fraction has converged.
pub const CONVERGED: f64 = 0.005;
/// The first round searches 0 … 600 s on 60 points; later ones ±30 % around the last on 8.
pub const FIRST_SEARCH_S: (f64, f64, u32) = (0.0, 600.0, 60);

/// What the lag step found.
pub struct Lagged {
    /// The time constant, s (None: not estimated).
    pub tau_s: Option<f64>,
    /// Lag-corrected magnet temperature per sample, °C.
    pub tm: Vec<f64>,
    /// Segments on the magnet temperature.
    pub seg: Segments,
    /// Irreversible loss as estimated along the way (fraction, ≥ 0).
    pub loss: f64,
    /// Magnet temperature at the Curie collapse, °C.
    pub curie_c: Option<f64>,
    /// The τ the evidence leaves possible, s (the budget covers it).
    pub tau_range_s: Option<(f64, f64)>,
}

fn branches_comparable(p: &Prepared, seg: &Segments, span: f64) -> bool {
    if seg.heating.len() <= MIN_BRANCH_SAMPLES || seg.cooling.len() <= MIN_BRANCH_SAMPLES {
        return false;
    }
    let cool_min = p.s.temp_c[seg.cooling.clone()]
        .iter()
        .copied()
        .fold(f64::INFINITY, f64::min);
    p.s.temp_c[seg.peak] - cool_min > MIN_RETURN_FRACTION * span
}

/// Run the lag step on `seg` (segments on the thermocouple) with the excursion `span`, K.
pub fn estimate(
    p: &Prepared,
    seg: Segments,
    span: f64,
    collapse: Option<usize>,
    notes: &mut Vec<Phrase>,
) -> Lagged {
    let s = p.s;
    let mut out = Lagged {
        tau_s: None,
        tm: s.temp_c.clone(),
        seg,
        loss: 0.0,
        curie_c: None,
        tau_range_s: None,
    };
    if let Some(ic) = collapse {
        let tau = lag::from_settling(&s.time_s, &s.temp_c, &p.flux).map(|x| x.0);
        relag(p, &mut out, tau.unwrap_or(0.0));
        out.tau_s = tau;
        out.curie_c = Some(out.tm[ic]);
        notes.push(crate::phrase![
            format!("the field fell below {:.0} % of its start at ", CURIE_FRACTION * 100.0),
            units::temp_q(out.tm[ic], 0),
            format!(
                " (magnet temperature{}): the Curie point is at or just below it; the magnet is demagnetized. α comes from the heating branch and includes any irreversible loss below the collapse: take α(Br) from a separate cycle below the magnet's rating",
                if tau.is_some() { ", lag-corrected" } else { "; lag not estimated" }
            ),
        ]);
        return out;
    }
    if !branches_comparable(p, &out.seg, span) {
        notes.push("no cooling branch to compare with the heating branch: the lag cannot be estimated; fitting the soak points alone".into());
        return out;
    }
    for round in 0..ROUNDS {
        let (lo, hi, points) = match out.tau_s {
            Some(t) if round > 0 => (0.7 * t, 1.3 * t + 1.0, 8),
            _ => FIRST_SEARCH_S,
        };
        let (seg, l) = (&out.seg, out.loss);
        let (best, _) = if seg.after.is_none() {
            lag::minimize(lo, hi, points, |t| p.lag_cost_profiled(t, seg).0)
        } else {
            lag::minimize(lo, hi, points, |t| p.lag_cost(t, seg, l))
        };
        let settled = out
            .tau_s
            .is_some_and(|t| (best - t).abs() <= CONVERGED * t.max(1.0));
        out.tau_s = Some(best);
        if settled {
            break; // the loss estimate did not move τ: the last relag stands
        }
        relag_with_loss(p, &mut out, best);
    }
    decide(p, &mut out, notes);
    out
}

/// Weigh the branch estimate against the settling near room temperature: the settling value
/// is used only when the branches cannot tell it from their own (and is not looked for when
/// they pin τ within ±25 %); the range of τ the branches
/// leave possible goes to the budget.
fn decide(p: &Prepared, out: &mut Lagged, notes: &mut Vec<Phrase>) {
    let Some(tau) = out.tau_s else { return };
    let (seg, l) = (out.seg.clone(), out.loss);
    let cost = |t: f64| {
        if seg.after.is_none() {
            p.lag_cost_profiled(t, &seg).0
        } else {
            p.lag_cost(t, &seg, l)
        }
    };
    let best = cost(tau);
    let limit = best * (1.0 + BRANCH_DISCRIMINATION);
    // out from the best τ while the branches cannot tell: double the step until they can, then
    // halve the interval to 1 % of τ
    let edge = |dir: f64| {
        let at = |f: f64| (tau * (1.0 + dir * f)).max(0.0);
        let (mut inside, mut step) = (0.0f64, 0.02f64);
        let mut outside = None;
        while inside + step <= 3.0 {
            let f = inside + step;
            if at(f) <= 0.0 || cost(at(f)) > limit {
                outside = Some(f);
                break;
            }
            inside = f;
            step *= 2.0;
        }
        let Some(mut out_f) = outside else {
            return at(inside);
        };
        while out_f - inside > 0.01 {
            let mid = 0.5 * (inside + out_f);
            if cost(at(mid)) > limit {
                out_f = mid;
            } else {
                inside = mid;
            }
        }
        at(inside)
    };
    let range = (edge(-1.0), edge(1.0));
    out.tau_range_s = Some(range);
    if range.1 - range.0 < 2.0 * SETTLING_WORTH * tau {
        return; // the branches pin τ: a settling could only agree or be ruled out
    }
    if let Some((t_settle, _)) = lag::from_settling(&p.s.time_s, &p.s.temp_c, &p.flux) {
        if (t_settle - tau).abs() > 0.05 * tau {
            if cost(t_settle) <= limit {
                notes.push(
                    format!(
                        "the branches allow τ from {:.0} to {:.0} s and the settling near room temperature shows {t_settle:.0} s: the settling value is used",
                        range.0, range.1
                    )
                    .into(),
                );
                out.tau_s = Some(t_settle);
                relag_with_loss(p, out, t_settle);
            } else {
                notes.push(
                    format!(
                        "the settling near room temperature suggests τ = {t_settle:.0} s, but the heating and cooling branches rule it out (they allow {:.0} … {:.0} s): the fixture was still moving there, so the branch value {tau:.0} s is used",
                        range.0, range.1
                    )
                    .into(),
                );
            }
        }
    }
}

fn relag(p: &Prepared, out: &mut Lagged, tau: f64) {
    out.tm = lag::lagged(&p.s.time_s, &p.s.temp_c, tau);
    out.seg = segments::find(&p.s.time_s, &out.tm, &p.s.temp_c);
}

fn relag_with_loss(p: &Prepared, out: &mut Lagged, tau: f64) {
    relag(p, out, tau);
    let l = if out.seg.after.is_some() {
        loss::quick(p, &out.seg, &out.tm)
    } else {
        branch_loss::quick(p, &out.seg, &out.tm)
    };
    if let Some(l) = l {
        out.loss = l.max(0.0);
    }
}
