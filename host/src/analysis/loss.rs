//! Step 5: the irreversible loss — the settled readings before and after the excursion,
//! referred to one temperature with the fitted reversible curve — with its own budget.

use super::context::Context;
use super::model::{autocorrelation_inflation, Quadratic};
use super::prepare::{mean, Prepared};
use super::result::BudgetLine;
use super::segments::Segments;
use remanent_physics::shape::dln_bz_per_mm;

/// Points compared between the heating and cooling branches are correlated over about this
/// many samples: the branch loss's type-A term counts them as n / this.
pub const CORRELATED_SAMPLES: f64 = 10.0;
/// The reversible correction between the references is known as well as α itself (the same
/// fitted curve, the same thermocouple gain and lag), relatively; never better than this
/// fraction of itself …
pub const REVERSIBLE_CORRECTION_REL_U: f64 = 0.01;
/// … and the loss is refused when that correction alone would carry more than this (k = 2),
/// %: the accuracy the loss is quoted to.
pub const LOSS_TOLERANCE_PCT: f64 = 0.1;

/// Why the loss was not computed.
#[derive(Debug, Clone, PartialEq)]
pub enum NoLoss {
    /// The record has no settled reading after the excursion.
    NoReturn,
    /// The references are too far apart in temperature for the fitted curve to bridge them.
    CorrectionTooUncertain {
        /// Magnet temperatures of the two references, °C.
        ref_c: [f64; 2],
        /// The correction's expanded uncertainty, %.
        u95_pct: f64,
    },
}

impl NoLoss {
    /// In words, for the notes.
    pub fn explain(&self) -> crate::units::Phrase {
        use crate::units::{span, temp_q};
        match self {
            NoLoss::NoReturn => "the record does not return to a settled temperature near where it started: irreversible loss not computed".into(),
            NoLoss::CorrectionTooUncertain { ref_c, u95_pct } => crate::phrase![
                "the record ended at ",
                temp_q(ref_c[1], 1),
                ", ",
                span((ref_c[1] - ref_c[0]).abs(), 1),
                " from where it started (",
                temp_q(ref_c[0], 1),
                format!("): referring the two readings to one temperature would carry ±{u95_pct:.2} % (k = 2), more than the {LOSS_TOLERANCE_PCT} % the loss is quoted to ({:.1}× too much); irreversible loss not computed — let the fixture cool further", u95_pct / LOSS_TOLERANCE_PCT),
            ],
        }
    }
}
/// First guess of the reversible change between the references inside the lag search,
/// fraction per K (NdFeB-like; the full loss uses the fitted curve).
pub const FIRST_GUESS_PER_K: f64 = 0.0011;

/// The loss with its budget.
pub struct LossResult {
    /// Loss, %.
    pub loss_pct: f64,
    /// Its expanded uncertainty (k = 2), %.
    pub u95_pct: f64,
    /// The budget, %.
    pub budget: Vec<BudgetLine>,
    /// Magnet temperatures at the two references, °C.
    pub ref_c: [f64; 2],
    /// Probe temperatures at the two references, °C.
    pub ref_probe_c: Option<[f64; 2]>,
    /// The probe-drift term, %.
    pub probe_term_pct: f64,
}

/// Settled part of a reference window: its last 30 %.
fn settled(r: &std::ops::Range<usize>) -> std::ops::Range<usize> {
    r.start + (r.end - r.start) * 7 / 10..r.end
}

/// The standard uncertainty of a window's mean, mT: its scatter over √n, inflated for
/// neighbouring readings that move together (lag-1 autocorrelation, as the fit's residuals).
fn mean_u(v: &[f64]) -> f64 {
    let (m, sd, n) = mean(v.iter().copied());
    let dev: Vec<f64> = v.iter().map(|x| x - m).collect();
    sd * autocorrelation_inflation(&dev) / (n.max(1) as f64).sqrt()
}

/// How much the flux still drifted across a window beyond what its scatter explains: the
/// difference of its two halves' means, less the part the readings' own noise would give
/// (in quadrature), relative to the mean, % (a window that has not settled shows it here).
fn drift_pct(v: &[f64]) -> f64 {
    let mid = v.len() / 2;
    let (a, _, _) = mean(v[..mid].iter().copied());
    let (b, _, _) = mean(v[mid..].iter().copied());
    // each half's mean carries √2 × the whole window's mean_u
    let noise = 2.0 * mean_u(v);
    let d = b - a;
    (d * d - noise * noise).max(0.0).sqrt() / (0.5 * (a + b)).abs() * 100.0
}

/// Quick loss estimate (fraction, no budget) for the lag search.
pub fn quick(p: &Prepared, seg: &Segments, tm: &[f64]) -> Option<f64> {
    let after = seg.after.as_ref()?;
    let (b_before, _, _) = mean(settled(&seg.before).map(|i| p.flux[i]));
    let (b_after, _, _) = mean(settled(after).map(|i| p.flux[i]));
    let (t_before, _, _) = mean(settled(&seg.before).map(|i| tm[i]));
    let (t_after, _, _) = mean(settled(after).map(|i| tm[i]));
    let ratio = match local_line(p, seg, tm, t_before, t_after) {
        Some((c0, c1)) => (c0 + c1 * t_before) / (c0 + c1 * t_after),
        None => 1.0 - FIRST_GUESS_PER_K * (t_before - t_after),
    };
    Some((b_before - b_after * ratio) / b_before)
}

/// The cooling branch's straight line B = c0 + c1·T over the references' temperatures (and a
/// little above): the reversible change between references that are apart in temperature,
/// from the magnet's own data rather than a guess (a ferrite changes twice as fast as NdFeB).
fn local_line(
    p: &Prepared,
    seg: &Segments,
    tm: &[f64],
    t_before: f64,
    t_after: f64,
) -> Option<(f64, f64)> {
    let (lo, hi) = (t_before.min(t_after), t_before.max(t_after));
    if hi - lo < 2.0 {
        return None; // references at one temperature: nothing to bridge
    }
    let (mut n, mut st, mut sb) = (0.0, 0.0, 0.0);
    let pts: Vec<(f64, f64)> = seg
        .cooling
        .clone()
        .filter(|&i| tm[i] >= lo - 2.0 && tm[i] <= hi + 10.0)
        .map(|i| (tm[i], p.flux[i]))
        .collect();
    for &(t, b) in &pts {
        n += 1.0;
        st += t;
        sb += b;
    }
    if n < 20.0 {
        return None;
    }
    let (mt, mb) = (st / n, sb / n);
    let (mut stt, mut stb) = (0.0, 0.0);
    for &(t, b) in &pts {
        stt += (t - mt) * (t - mt);
        stb += (t - mt) * (b - mb);
    }
    (stt > 0.0).then(|| {
        let c1 = stb / stt;
        (mb - c1 * mt, c1)
    })
}

/// The loss with its full budget, or why there is none; `lag_rel_u` is how well the lag
/// correction is known relative to itself (1: not at all).
pub fn full(
    p: &Prepared,
    seg: &Segments,
    tm: &[f64],
    ctx: &Context,
    model: &Quadratic,
    alpha: (f64, f64),
    lag_rel_u: f64,
) -> Result<LossResult, NoLoss> {
    let after = seg.after.as_ref().ok_or(NoLoss::NoReturn)?;
    let (before_r, after_r) = (settled(&seg.before), settled(after));
    // the magnet's temperature in the windows: lag-corrected; the part of that correction the
    // lag's own uncertainty leaves open goes into the budget
    let (t0, _, _) = mean(before_r.clone().map(|i| tm[i]));
    let (t1, _, _) = mean(after_r.clone().map(|i| tm[i]));
    // each reading referred by the fitted curve to its window's mean temperature, so a
    // window that still creeps (a short return hold) counts only what the temperature does
    // not explain
    let referred = |r: &std::ops::Range<usize>, t: f64| -> Vec<f64> {
        r.clone()
            .map(|i| p.flux[i] * model.eval_mt(t) / model.eval_mt(tm[i]))
            .collect()
    };
    let (flux0, flux1) = (referred(&before_r, t0), referred(&after_r, t1));
    let (b0, _, _) = mean(flux0.iter().copied());
    let (b1, _, _) = mean(flux1.iter().copied());
    let (tc0, _, _) = mean(before_r.clone().map(|i| p.s.temp_c[i]));
    let (tc1, _, _) = mean(after_r.clone().map(|i| p.s.temp_c[i]));
    let lag_shift_k = ((t0 - tc0).powi(2) + (t1 - tc1).powi(2)).sqrt();
    let ratio = model.eval_mt(t0) / model.eval_mt(t1);
    let loss = (b0 - b1 * ratio) / b0;
    let u_mean = mean_u(&flux0).hypot(mean_u(&flux1)) / b0 * 100.0;
    let alpha_rel = (model.b1_mt_per_c / model.b0_mt).abs();
    // the curve bridges the references: the correction is known as well as α, relatively
    let correction_pct = (ratio - 1.0).abs() * 100.0;
    let alpha_rel_u = (alpha.1 / alpha.0.abs().max(1e-9)).max(REVERSIBLE_CORRECTION_REL_U);
    let correction_u = correction_pct * alpha_rel_u;
    if 2.0 * correction_u > LOSS_TOLERANCE_PCT {
        return Err(NoLoss::CorrectionTooUncertain {
            ref_c: [t0, t1],
            u95_pct: 2.0 * correction_u,
        });
    }
    let mut budget = vec![
        BudgetLine::a("scatter of the reference readings (type A)", u_mean),
        BudgetLine::b(
            "drift within the reference windows (not fully settled)",
            drift_pct(&flux0).hypot(drift_pct(&flux1)),
        ),
        BudgetLine::b(
            "lag correction of the reference temperatures",
            alpha_rel * lag_shift_k * lag_rel_u * 100.0,
        ),
        BudgetLine::b(
            "reversible correction between the reference temperatures",
            correction_u,
        ),
    ];
    let mut ref_probe = None;
    let mut probe_term = 0.0;
    let cal = ctx.calibration.as_ref();
    if let (Some(probe), Some(c)) = (p.s.probe_c.as_ref(), cal) {
        let (p0, _, _) = mean(before_r.clone().map(|i| probe[i]));
        let (p1, _, _) = mean(after_r.clone().map(|i| probe[i]));
        ref_probe = Some([p0, p1]);
        let dp = (p1 - p0).abs();
        let s_term = c.hall.sensitivity_tc_u_pct_per_c * dp;
        let off_term =
            c.hall.offset_tc_u_mv_per_c * dp / c.hall.sensor.sensitivity_mv_per_mt / b0 * 100.0;
        probe_term = (s_term * s_term + off_term * off_term).sqrt();
        budget.push(BudgetLine::b(
            "probe drift between the references",
            probe_term,
        ));
        if let Some(shape) = ctx.magnet.as_ref().map(|m| m.shape) {
            let d = dln_bz_per_mm(&shape, c.gap.standoff.gap_mm);
            let dtso = 0.5 * ((t1 - t0) + (p1 - p0));
            let u = d * c.gap.standoff.standoff_mm * c.gap.standoff_cte_u_per_k * dtso * 100.0;
            budget.push(BudgetLine::b(
                "standoff expansion between the references",
                u.abs(),
            ));
        }
    }
    Ok(LossResult {
        loss_pct: loss * 100.0,
        u95_pct: BudgetLine::expanded(&budget),
        budget,
        ref_c: [t0, t1],
        ref_probe_c: ref_probe,
        probe_term_pct: probe_term,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::series::Series;

    /// 100 readings at `t0` around `b0`, 100 on the excursion, 100 at `t1` around `b1`; the
    /// readings alternate ±0.01 mT about their level.
    fn record(t0: f64, b0: f64, t1: f64, b1: f64) -> Series {
        let mut s = Series::default();
        for i in 0..300 {
            let (t, b) = match i {
                0..100 => (t0, b0),
                100..200 => (100.0, 150.0),
                _ => (t1, b1),
            };
            s.time_s.push(f64::from(i));
            s.temp_c.push(t);
            s.flux_mt.push(b + if i % 2 == 0 { 0.01 } else { -0.01 });
        }
        s
    }

    fn segments() -> Segments {
        Segments {
            before: 0..100,
            after: Some(200..300),
            peak: 150,
            heating: 100..150,
            cooling: 150..200,
            soaks: Vec::new(),
        }
    }

    fn ctx() -> Context {
        Context {
            calibration: None,
            magnet: None,
            specs: crate::specs::SpecTable::builtin(),
            default_tc_gain_pct: 0.75,
            reference: None,
        }
    }

    /// B = 200 − 0.2·(T − 20) mT.
    const LINE: Quadratic = Quadratic {
        b0_mt: 200.0,
        b1_mt_per_c: -0.2,
        b2_mt_per_c2: 0.0,
    };

    fn loss_of(s: &Series, alpha: (f64, f64)) -> Result<LossResult, NoLoss> {
        let p = Prepared::new(s, &ctx(), &mut Vec::new());
        full(&p, &segments(), &s.temp_c, &ctx(), &LINE, alpha, 0.1)
    }

    #[test]
    fn references_at_one_temperature_give_the_drop_and_its_scatter() {
        // 199 → 198.005 mT at 25 °C: (199 − 198.005) / 199 = 0.5 % lost (by hand); a gain
        // reads as a negative loss
        let l = loss_of(&record(25.0, 199.0, 25.0, 198.005), (-0.1, 1e-4)).expect("loss");
        assert!((l.loss_pct - 0.5).abs() < 1e-9, "{}", l.loss_pct);
        let gain = loss_of(&record(25.0, 199.0, 25.0, 199.995), (-0.1, 1e-4)).expect("loss");
        assert!((gain.loss_pct + 0.5).abs() < 1e-9, "{}", gain.loss_pct);
        // scatter: the settled 30 readings of each window alternate ±0.01, sd 0.01·√(30/29),
        // uncorrelated (ρ < 0 taken as 0), so each mean is known to sd/√30 and the two
        // together to √2 · 0.0018570 = 0.0026262 mT, 0.0013197 % of 199 mT (by hand)
        let scatter = l.budget[0].u;
        assert!((scatter - 0.0013197).abs() < 2e-7, "{scatter}");
        // alternating readings do not drift; nothing to correct between equal temperatures
        assert_eq!(l.budget[1].u, 0.0, "{:?}", l.budget[1]);
        assert_eq!(l.budget[3].u, 0.0, "{:?}", l.budget[3]);
        // every term normal: U95 = 2·u_c
        assert!((l.u95_pct - 2.0 * scatter).abs() < 1e-12);
        assert_eq!(l.ref_c, [25.0, 25.0]);
    }

    #[test]
    fn references_apart_are_bridged_by_the_curve_and_that_is_budgeted() {
        // before at 25 °C: B = 199; after at 35 °C the curve gives 197, and 1 % was lost:
        // 197 · 0.99 = 195.03 mT; referred to 25 °C: 195.03 · 199/197 = 197.01, a 1 % loss
        let l = loss_of(&record(25.0, 199.0, 35.0, 195.03), (-0.1, 1e-4)).expect("loss");
        assert!((l.loss_pct - 1.0).abs() < 1e-9, "{}", l.loss_pct);
        // the correction (199/197 − 1 = 1.0152 %) known as well as α, never better than 1 %
        let corr = &l.budget[3];
        assert!(corr.source.contains("reversible correction"));
        assert!((corr.u - 0.010152).abs() < 1e-6, "{}", corr.u);
        // with α known only to 10 %, the correction alone would carry ±0.2 %: refused
        match loss_of(&record(25.0, 199.0, 35.0, 195.03), (-0.1, 0.01)) {
            Err(NoLoss::CorrectionTooUncertain { ref_c, u95_pct }) => {
                assert_eq!(ref_c, [25.0, 35.0]);
                assert!((u95_pct - 0.20305).abs() < 1e-4, "{u95_pct}");
            }
            other => panic!("{:?}", other.map(|l| l.loss_pct)),
        }
    }

    #[test]
    fn a_record_with_no_return_has_no_loss() {
        let s = record(25.0, 199.0, 25.0, 198.0);
        let p = Prepared::new(&s, &ctx(), &mut Vec::new());
        let seg = Segments {
            after: None,
            ..segments()
        };
        let r = full(&p, &seg, &s.temp_c, &ctx(), &LINE, (-0.1, 1e-4), 0.1);
        assert_eq!(r.err(), Some(NoLoss::NoReturn));
    }
}
