//! Step 4: α with its uncertainty budget — the fit's own standard error inflated for
//! correlated residuals, the thermocouple's gain tolerance, the probe's and the standoff's
//! coefficients, and how far α moves when the lag is off by ±20 %.

use crate::units::Phrase;
use remanent_physics::shape::dln_bz_per_mm;

use super::context::{AnalysisError, Context};
use super::fit_data::FitData;
use super::lag;
use super::lag_estimate::Lagged;
use super::lsq::{self, Fit};
use super::model::{autocorrelation_inflation, propagate, Quadratic, REFERENCE_C};
use super::prepare::Prepared;
use super::result::BudgetLine;

/// The lag model's τ is taken as good to this fraction (rectangular).
pub const LAG_TOLERANCE: f64 = 0.1;

/// α and its budget.
pub struct AlphaResult {
    /// The fitted model.
    pub model: Quadratic,
    /// The fit's statistics.
    pub fit: Fit,
    /// Lowest and highest fitted magnet temperature, °C.
    pub range_c: [f64; 2],
    /// Mean α over the range, %/°C.
    pub alpha: f64,
    /// The fit's own (inflated) standard uncertainty, %/°C.
    pub u_fit: f64,
    /// The budget, %/°C.
    pub budget: Vec<BudgetLine>,
    /// How much the fit's standard errors are inflated for correlated residuals.
    pub inflation: f64,
}

impl AlphaResult {
    /// Combined standard uncertainty, %/°C.
    pub fn u_c(&self) -> f64 {
        BudgetLine::combined(&self.budget)
    }

    /// Expanded uncertainty (the budget's 95.45 % coverage interval), %/°C.
    pub fn u95(&self) -> f64 {
        BudgetLine::expanded(&self.budget)
    }
}

/// Fit and budget.
pub fn estimate(
    p: &Prepared,
    lagged: &Lagged,
    data: &FitData,
    ctx: &Context,
    notes: &mut Vec<Phrase>,
) -> Result<AlphaResult, AnalysisError> {
    let (model, fit) = Quadratic::fit(&data.t_c, &data.b_mt)?;
    let t_lo = data.t_c.iter().copied().fold(f64::INFINITY, f64::min);
    let t_hi = data.t_c.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let alpha = model.mean_alpha_pct_per_c(t_hi);
    let var_a = propagate(&model.mean_alpha_gradient(t_hi), &fit.covariance);
    let residuals = model.residuals(&data.t_c, &data.b_mt);
    let inflation = autocorrelation_inflation(&residuals);
    let u_fit = var_a.sqrt() * inflation;
    let mut budget = vec![BudgetLine::a("fit (type A)", u_fit)];
    let cal = ctx.calibration.as_ref();
    let gain_pct = cal
        .map(|c| c.thermocouple.gain_tolerance_pct)
        .unwrap_or(ctx.default_tc_gain_pct);
    budget.push(BudgetLine::rectangular(
        format!("thermocouple gain tolerance ±{gain_pct} % (rectangular)"),
        gain_sensitivity(&model, t_hi) * gain_pct / 100.0 / 3f64.sqrt(),
    ));
    let probe_slope =
        p.s.probe_c
            .as_ref()
            .map(|pr| slope(&lagged.tm, pr, p.stride))
            .unwrap_or(0.0);
    match cal {
        Some(c) => {
            budget.push(BudgetLine::b(
                "probe sensitivity coefficient",
                c.hall.sensitivity_tc_u_pct_per_c * probe_slope.abs(),
            ));
            if let Some(shape) = ctx.magnet.as_ref().map(|m| m.shape) {
                let d = dln_bz_per_mm(&shape, c.gap.standoff.gap_mm);
                let dtso = 0.5 * (1.0 + probe_slope);
                let u = d * c.gap.standoff.standoff_mm * c.gap.standoff_cte_u_per_k * dtso * 100.0;
                budget.push(BudgetLine::b("standoff expansion coefficient", u.abs()));
            }
        }
        None => notes.push(
            "no rig calibration: the probe's own temperature coefficient is not in the budget"
                .into(),
        ),
    }
    if let Some(tau) = lagged.tau_s {
        let a_at = |tau: f64| -> f64 {
            let tm = lag::lagged(&p.s.time_s, &p.s.temp_c, tau);
            let (tt, bb) = p.fit_points(&lagged.seg, &tm, lagged.loss);
            Quadratic::fit(&tt, &bb)
                .map(|(m, _)| m.mean_alpha_pct_per_c(t_hi))
                .unwrap_or(alpha)
        };
        // ±20 % of τ, or every τ the branches leave possible if that is wider
        let (lo, hi) = lagged.tau_range_s.unwrap_or((tau, tau));
        let (lo, hi) = (
            lo.min(tau * (1.0 - LAG_TOLERANCE)),
            hi.max(tau * (1.0 + LAG_TOLERANCE)),
        );
        // the two ends are independent: one on each core
        let (a_hi, a_lo) = std::thread::scope(|sc| {
            let h = sc.spawn(|| a_at(hi));
            (h.join().unwrap_or(alpha), a_at(lo))
        });
        let spread = (a_hi - a_lo).abs() / 2.0;
        budget.push(BudgetLine::rectangular(
            format!("lag model (τ {lo:.0} … {hi:.0} s, rectangular)"),
            spread / 3f64.sqrt(),
        ));
    }
    if data.code == super::result::FitMethod::SingleRamp {
        let (lo, hi) = super::fit_data::SINGLE_RAMP_TAU_S;
        let a_at = |tau: f64| -> f64 {
            super::fit_data::single_ramp(p, &lagged.seg, tau)
                .and_then(|(tt, bb)| Quadratic::fit(&tt, &bb).ok())
                .map_or(alpha, |(m, _)| m.mean_alpha_pct_per_c(t_hi))
        };
        let spread = (a_at(hi) - a_at(lo)).abs() / 2.0;
        budget.push(BudgetLine::rectangular(
            format!("lag not estimable from one ramp (τ {lo:.0} … {hi:.0} s, rectangular)"),
            spread / 3f64.sqrt(),
        ));
        notes.push(format!("one ramp only: α from it with the magnet's lag taken as {:.0} s, anywhere in {lo:.0} … {hi:.0} s in the budget (a return, or a second ramp, would measure it)", 0.5 * (lo + hi)).into());
    }
    Ok(AlphaResult {
        model,
        fit,
        range_c: [t_lo, t_hi],
        alpha,
        u_fit,
        budget,
        inflation,
    })
}

/// How much α moves per unit of relative thermocouple gain error, %/°C: a reading of
/// (1 + g)·T in °C shrinks every slope by 1 + g and moves the top of the fit, on a curved B(T),
/// by g·T — to first order δα = −g·(α + γ·(T_top + 20 °C)) (worked by hand from the model
/// B = b0·(1 + α₁x + γx²), x = T − 20, read at x' = (1 + g)(x + 20) − 20).
pub fn gain_sensitivity(model: &Quadratic, top_c: f64) -> f64 {
    (model.mean_alpha_pct_per_c(top_c) + model.gamma_pct_per_c2() * (top_c + REFERENCE_C)).abs()
}

/// Slope of `y` against `x` (least squares), every `stride`-th point.
fn slope(x: &[f64], y: &[f64], stride: usize) -> f64 {
    let xs: Vec<f64> = x.iter().step_by(stride).copied().collect();
    let ys: Vec<f64> = y.iter().step_by(stride).copied().collect();
    lsq::polyfit(&xs, &ys, 1)
        .map(|f| f.coefficients[1])
        .unwrap_or(0.0)
}
