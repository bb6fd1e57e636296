//! The analysis: lag-corrected magnet temperature, the reversible coefficient with its
//! uncertainty budget, the irreversible loss, Br from geometry, and the verdict.
//!
//! Method (hardware-notes/method.md has the full account): the magnet follows the
//! thermocouple as a first-order lag whose time constant makes the heating and cooling
//! branches coincide; B(T) = B20·(1 + α(T − 20) + γ(T − 20)²) is fitted by QR least squares;
//! the loss compares the settled readings before and after the excursion at one temperature.

pub mod dataset;
pub mod geometry;
pub mod lag;
pub mod lsq;
pub mod segments;
pub mod summary;
pub mod verdict;

use serde::Serialize;

use crate::calibration::Calibration;
use crate::magnets::MagnetInfo;
use crate::specs::SpecTable;
use dataset::Series;
use geometry::BrEstimate;
use remanent_physics::shape::dln_bz_per_mm;
use remanent_physics::standoff;
use verdict::{Check, Outcome};

/// What the analysis knows besides the series.
#[derive(Debug, Clone)]
pub struct Context {
    /// Rig calibration (for the type-B terms and the gap correction).
    pub calibration: Option<Calibration>,
    /// The magnet (for Br from geometry and the grade check).
    pub magnet: Option<MagnetInfo>,
    /// Spec table.
    pub specs: SpecTable,
    /// Thermocouple gain tolerance to assume without a calibration, %.
    pub default_tc_gain_pct: f64,
}

/// One contribution to an uncertainty budget.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BudgetLine {
    /// What it is.
    pub source: String,
    /// Type A (statistics) or B (other knowledge).
    pub kind: char,
    /// Standard uncertainty, in the result's unit.
    pub u: f64,
}

/// The analysis result.
#[derive(Debug, Clone, Serialize)]
pub struct Analysis {
    /// Mean α(Br) between 20 °C and the top of the fitted range, %/°C (the standards' two-point form).
    #[serde(rename = "alpha_pct_per_C")]
    pub alpha_pct_per_c: f64,
    /// Its expanded uncertainty, k = 2, %/°C.
    #[serde(rename = "alpha_u95_pct_per_C")]
    pub alpha_u95_pct_per_c: f64,
    /// Standard error of α from the fit alone, %/°C.
    #[serde(rename = "alpha_fit_se_pct_per_C")]
    pub alpha_fit_se_pct_per_c: f64,
    /// Tangent coefficient at 20 °C (the linear term of the fit), %/°C.
    #[serde(rename = "alpha_at_20C_pct_per_C")]
    pub alpha_at_20c_pct_per_c: f64,
    /// Quadratic term, %/°C².
    #[serde(rename = "gamma_pct_per_C2")]
    pub gamma_pct_per_c2: f64,
    /// Fitted B at 20 °C, mT.
    #[serde(rename = "b20_mT")]
    pub b20_mt: f64,
    /// Lowest and highest magnet temperature in the fit, °C.
    #[serde(rename = "fit_range_C")]
    pub fit_range_c: [f64; 2],
    /// Residual standard deviation of the fit, mT.
    #[serde(rename = "residual_sd_mT")]
    pub residual_sd_mt: f64,
    /// Points fitted.
    pub fit_points: usize,
    /// How the fit was made: `lag-corrected ramps` or `soak points`.
    pub fit_method: String,
    /// Thermal lag time constant of the magnet behind the thermocouple, s (None: not estimated).
    pub lag_time_constant_s: Option<f64>,
    /// Irreversible loss at room temperature, % (None: the record does not return).
    pub irreversible_loss_pct: Option<f64>,
    /// Its expanded uncertainty, k = 2, %.
    pub irreversible_loss_u95_pct: Option<f64>,
    /// Reference temperatures before and after, °C.
    #[serde(rename = "reference_C")]
    pub reference_c: Option<[f64; 2]>,
    /// Probe temperatures at the two references, °C.
    #[serde(rename = "reference_probe_C")]
    pub reference_probe_c: Option<[f64; 2]>,
    /// Highest magnet temperature reached, °C.
    #[serde(rename = "max_magnet_temp_C")]
    pub max_magnet_temp_c: f64,
    /// Where the field collapsed in a Curie sweep, °C (None: not reached).
    #[serde(rename = "curie_estimate_C")]
    pub curie_estimate_c: Option<f64>,
    /// Br estimate from geometry.
    pub br: Option<BrEstimate>,
    /// Material family (or families) α and Br point to.
    pub material_family: String,
    /// Overall verdict against the grade's spec.
    pub verdict: Outcome,
    /// The grade checked.
    pub grade: Option<String>,
    /// Individual checks.
    pub checks: Vec<Check>,
    /// The magnet lost flux in this test.
    pub heat_damaged: bool,
    /// Uncertainty budget of α, %/°C.
    pub alpha_budget: Vec<BudgetLine>,
    /// Uncertainty budget of the loss, %.
    pub loss_budget: Vec<BudgetLine>,
    /// Plain words about what was done, assumed or could not be computed.
    pub notes: Vec<String>,
    /// Samples analysed.
    pub samples: usize,
    /// Indices of the reference windows and the peak (for plots).
    #[serde(skip)]
    pub segments: Option<segments::Segments>,
    /// Lag-corrected magnet temperature per sample, °C (for plots).
    #[serde(skip)]
    pub magnet_temp_c: Vec<f64>,
    /// Flux corrected for the gap's expansion, mT (for plots).
    #[serde(skip)]
    pub flux_corrected_mt: Vec<f64>,
    /// Fit coefficients in x = T − 20: b0, b1, b2 (mT, mT/°C, mT/°C²).
    #[serde(skip)]
    pub fit_coefficients: [f64; 3],
}

impl Analysis {
    /// The fitted reversible B at `t_c`, mT.
    pub fn fitted_mt(&self, t_c: f64) -> f64 {
        let x = t_c - 20.0;
        let [b0, b1, b2] = self.fit_coefficients;
        b0 + b1 * x + b2 * x * x
    }
}

/// The analysis could not produce α.
#[derive(Debug, thiserror::Error)]
pub enum AnalysisError {
    /// Nothing to fit.
    #[error("cannot fit α: {0}")]
    CannotFit(String),
    /// The fit failed.
    #[error("cannot fit α: {0}")]
    Lsq(#[from] lsq::LsqError),
}

/// A loss above this (and above its own U95) flags heat damage, %.
pub const HEAT_DAMAGE_PCT: f64 = 0.3;

/// A field below this fraction of its starting value while hot marks the Curie collapse.
pub const CURIE_FRACTION: f64 = 0.05;
/// In a Curie sweep α is fitted this far below the collapse, K.
pub const CURIE_MARGIN_K: f64 = 120.0;

/// Above this irreversible loss (fraction) α is fitted on the cooling branch alone.
pub const LOSSY: f64 = 0.001;

/// The temperature span below which α is not worth reporting, K.
pub const MIN_SPAN_K: f64 = 15.0;

struct Prepared<'a> {
    s: &'a Series,
    flux: Vec<f64>,
    stride: usize,
    /// Every `stride`-th time and thermocouple reading: the lag search runs on these (a
    /// first-order response is smooth, so a 20 000-point series finds τ as well as a million).
    time_dec: Vec<f64>,
    temp_dec: Vec<f64>,
}

fn fit_quadratic(t: &[f64], b: &[f64]) -> Result<lsq::Fit, lsq::LsqError> {
    let x: Vec<f64> = t.iter().map(|v| v - 20.0).collect();
    lsq::polyfit(&x, b, 2)
}

impl Prepared<'_> {
    /// Indices used for the fit: from the start of heating to the end, skipping the top soak
    /// when the magnet was losing flux there.
    fn fit_indices(&self, seg: &segments::Segments, tm: &[f64], loss: f64) -> Vec<usize> {
        let tmax = tm[seg.peak];
        (0..tm.len())
            .step_by(self.stride)
            .filter(|&i| !(loss > 0.0005 && tmax - tm[i] < 3.0))
            .collect()
    }

    /// Indices for the reported fit: after a loss of more than 0.1 % only the cooling branch,
    /// which is reversible once the exposure is over; otherwise both branches.
    fn final_indices(&self, seg: &segments::Segments, tm: &[f64], loss: f64) -> Vec<usize> {
        if loss > LOSSY {
            (seg.peak..tm.len()).step_by(self.stride).collect()
        } else {
            self.fit_indices(seg, tm, loss)
        }
    }

    fn adjusted(&self, i: usize, seg: &segments::Segments, loss: f64) -> f64 {
        if i > seg.peak {
            self.flux[i] / (1.0 - loss)
        } else {
            self.flux[i]
        }
    }

    fn cost(&self, tau: f64, seg: &segments::Segments, loss: f64) -> f64 {
        let tm = lag::lagged(&self.time_dec, &self.temp_dec, tau);
        let tmax = tm.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let keep: Vec<usize> = (0..tm.len())
            .filter(|&k| !(loss > 0.0005 && tmax - tm[k] < 3.0))
            .collect();
        let t: Vec<f64> = keep.iter().map(|&k| tm[k]).collect();
        let b: Vec<f64> = keep
            .iter()
            .map(|&k| self.adjusted(k * self.stride, seg, loss))
            .collect();
        fit_quadratic(&t, &b)
            .map(|f| f.rss)
            .unwrap_or(f64::INFINITY)
    }
}

fn mean(v: impl Iterator<Item = f64>) -> (f64, f64, usize) {
    let v: Vec<f64> = v.collect();
    let n = v.len();
    let m = v.iter().sum::<f64>() / n.max(1) as f64;
    let var = v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n.max(2) - 1) as f64;
    (m, var.sqrt(), n)
}

/// Analyse a series.
pub fn analyze(s: &Series, ctx: &Context) -> Result<Analysis, AnalysisError> {
    let n = s.time_s.len();
    let mut notes = Vec::new();
    let cal = ctx.calibration.as_ref();
    let shape = ctx.magnet.as_ref().map(|m| m.shape);
    // the gap grows as the standoff warms: refer every reading to the gap at 20 °C
    let flux: Vec<f64> = match (cal, shape, s.probe_c.as_ref()) {
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
    let stride = (n / 20_000).max(1);
    let prep = Prepared {
        s,
        flux,
        stride,
        time_dec: s.time_s.iter().step_by(stride).copied().collect(),
        temp_dec: s.temp_c.iter().step_by(stride).copied().collect(),
    };
    let mut seg = segments::find(&s.time_s, &s.temp_c, &s.temp_c);
    let span = s.temp_c[seg.peak] - s.temp_c[seg.before.start];
    if span < MIN_SPAN_K {
        return Err(AnalysisError::CannotFit(format!(
            "the temperature rose only {span:.1} K; at least {MIN_SPAN_K:.0} K is needed"
        )));
    }
    // a Curie sweep: the field collapses on the way up (and does not come back)
    let b_start = mean(prep.flux[..n.min(50)].iter().copied()).0;
    let collapse =
        (0..n).find(|&i| s.temp_c[i] > 80.0 && prep.flux[i].abs() < CURIE_FRACTION * b_start.abs());
    let branches_ok = collapse.is_none() && seg.heating.len() > 30 && seg.cooling.len() > 30 && {
        let cool_min = s.temp_c[seg.cooling.clone()]
            .iter()
            .copied()
            .fold(f64::INFINITY, f64::min);
        s.temp_c[seg.peak] - cool_min > 0.5 * span
    };
    let mut loss = 0.0;
    let mut tau = None;
    let mut curie_c = None;
    let mut tm = s.temp_c.clone();
    if branches_ok {
        for round in 0..3 {
            // the first round searches the whole plausible range; later ones refine near it
            let (lo, hi, points) = match tau {
                Some(t) if round > 0 => (0.7 * t, 1.3 * t + 1.0, 8),
                _ => (0.0, 600.0, 60),
            };
            let (best, _) = lag::minimize(lo, hi, points, |t| prep.cost(t, &seg, loss));
            tau = Some(best);
            tm = lag::lagged(&s.time_s, &s.temp_c, best);
            seg = segments::find(&s.time_s, &tm, &s.temp_c);
            if let Some(l) = reference_loss(&prep, &seg, &tm, None) {
                loss = l.max(0.0);
            }
        }
        // a magnet that lost flux on the way up makes the branches disagree for a reason other
        // than lag: cross-check with the lag seen in a settling near room temperature, and
        // trust that one when the two differ
        {
            if let Some((t_settle, _)) = lag::from_settling(&s.time_s, &s.temp_c, &prep.flux) {
                if tau.is_some_and(|t| (t - t_settle).abs() > 0.3 * t_settle) {
                    notes.push(format!(
                        "the branches suggest τ = {:.0} s but the settling near room temperature shows {t_settle:.0} s: the branches disagree for another reason (flux lost on the way up?), so the settling value is used",
                        tau.unwrap_or(0.0)
                    ));
                    tau = Some(t_settle);
                    tm = lag::lagged(&s.time_s, &s.temp_c, t_settle);
                    seg = segments::find(&s.time_s, &tm, &s.temp_c);
                    if let Some(l) = reference_loss(&prep, &seg, &tm, None) {
                        loss = l.max(0.0);
                    }
                }
            }
        }
    } else if let Some(ic) = collapse {
        tau = lag::from_settling(&s.time_s, &s.temp_c, &prep.flux).map(|x| x.0);
        tm = lag::lagged(&s.time_s, &s.temp_c, tau.unwrap_or(0.0));
        seg = segments::find(&s.time_s, &tm, &s.temp_c);
        curie_c = Some(tm[ic]);
        notes.push(format!(
            "the field fell below {:.0} % of its start at {:.0} °C (magnet temperature{}): the Curie point is at or just below it; the magnet is demagnetized. α comes from the heating branch and includes any irreversible loss below the collapse: take α(Br) from a separate cycle below the magnet's rating",
            CURIE_FRACTION * 100.0,
            tm[ic],
            if tau.is_some() { ", lag-corrected" } else { "; lag not estimated" }
        ));
    } else {
        notes.push("no cooling branch to compare with the heating branch: the lag cannot be estimated; fitting the soak points alone".into());
    }
    // the fit
    let (t_fit, b_fit, method): (Vec<f64>, Vec<f64>, &str) = if let (Some(ic), Some(tc)) =
        (collapse, curie_c)
    {
        // well below the collapse the reversible curve is still the usual one
        let idx: Vec<usize> = (0..ic)
            .step_by(prep.stride)
            .filter(|&i| tm[i] < tc - CURIE_MARGIN_K)
            .collect();
        (
            idx.iter().map(|&i| tm[i]).collect(),
            idx.iter().map(|&i| prep.flux[i]).collect(),
            "the heating branch below the collapse",
        )
    } else if tau.is_some() {
        let idx = prep.final_indices(&seg, &tm, loss);
        let method = if loss > LOSSY {
            "the lag-corrected cooling branch"
        } else {
            "lag-corrected ramps"
        };
        (
            idx.iter().map(|&i| tm[i]).collect(),
            idx.iter().map(|&i| prep.adjusted(i, &seg, loss)).collect(),
            method,
        )
    } else {
        let mut t = Vec::new();
        let mut b = Vec::new();
        for r in &seg.soaks {
            let tail = r.start + (r.end - r.start) * 7 / 10..r.end;
            t.push(mean(tail.clone().map(|i| s.temp_c[i])).0);
            b.push(mean(tail.map(|i| prep.flux[i])).0);
        }
        if t.len() < 4 {
            return Err(AnalysisError::CannotFit(format!(
                "only {} soaks and no usable heating and cooling branches; at least 4 soaks are needed",
                t.len()
            )));
        }
        (t, b, "soak points")
    };
    let fit = fit_quadratic(&t_fit, &b_fit)?;
    let [b0, b1, b2] = [
        fit.coefficients[0],
        fit.coefficients[1],
        fit.coefficients[2],
    ];
    let t_lo = t_fit.iter().copied().fold(f64::INFINITY, f64::min);
    let t_hi = t_fit.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let x_top = t_hi - 20.0;
    let alpha = (b1 + b2 * x_top) / b0 * 100.0;
    let grad = [
        -(b1 + b2 * x_top) / (b0 * b0) * 100.0,
        100.0 / b0,
        x_top / b0 * 100.0,
    ];
    let mut var_a = 0.0;
    for i in 0..3 {
        for j in 0..3 {
            var_a += grad[i] * fit.covariance[i * 3 + j] * grad[j];
        }
    }
    // neighbouring residuals are correlated (slow drifts): inflate by the lag-1 correlation
    let u_fit = var_a.sqrt() * autocorrelation_inflation(&t_fit, &b_fit, &fit);
    let mut budget = vec![BudgetLine {
        source: "fit (type A)".into(),
        kind: 'A',
        u: u_fit,
    }];
    let gain_pct = cal
        .map(|c| c.thermocouple.gain_tolerance_pct)
        .unwrap_or(ctx.default_tc_gain_pct);
    budget.push(BudgetLine {
        source: format!("thermocouple gain tolerance ±{gain_pct} % (rectangular)"),
        kind: 'B',
        u: alpha.abs() * gain_pct / 100.0 / 3f64.sqrt(),
    });
    let probe_slope = s
        .probe_c
        .as_ref()
        .map(|p| slope(&tm, p, prep.stride))
        .unwrap_or(0.0);
    if let Some(c) = cal {
        budget.push(BudgetLine {
            source: "probe sensitivity coefficient".into(),
            kind: 'B',
            u: c.hall.sensitivity_tc_u_pct_per_c * probe_slope.abs(),
        });
        if let Some(shape) = shape {
            let d = dln_bz_per_mm(&shape, c.gap.standoff.gap_mm);
            let dtso = 0.5 * (1.0 + probe_slope);
            budget.push(BudgetLine {
                source: "standoff expansion coefficient".into(),
                kind: 'B',
                u: (d * c.gap.standoff.standoff_mm * c.gap.standoff_cte_u_per_k * dtso * 100.0)
                    .abs(),
            });
        }
    } else {
        notes.push(
            "no rig calibration: the probe's own temperature coefficient is not in the budget"
                .into(),
        );
    }
    if let Some(t) = tau {
        let a_at = |tau: f64| -> f64 {
            let tm = lag::lagged(&s.time_s, &s.temp_c, tau);
            let idx = prep.final_indices(&seg, &tm, loss);
            let tt: Vec<f64> = idx.iter().map(|&i| tm[i]).collect();
            let bb: Vec<f64> = idx.iter().map(|&i| prep.adjusted(i, &seg, loss)).collect();
            fit_quadratic(&tt, &bb)
                .map(|f| {
                    (f.coefficients[1] + f.coefficients[2] * x_top) / f.coefficients[0] * 100.0
                })
                .unwrap_or(alpha)
        };
        let spread = (a_at(t * 1.2) - a_at(t * 0.8)).abs() / 2.0;
        budget.push(BudgetLine {
            source: "lag model (τ ± 20 %, rectangular)".into(),
            kind: 'B',
            u: spread / 3f64.sqrt(),
        });
    }
    let u_c = budget.iter().map(|l| l.u * l.u).sum::<f64>().sqrt();
    // loss
    let loss_result = reference_loss_full(&prep, &seg, &tm, cal, shape, &fit);
    let (loss_pct, loss_u95, loss_budget, refs, ref_probe) = match &loss_result {
        Some(l) => (
            Some(l.loss_pct),
            Some(l.u95_pct),
            l.budget.clone(),
            Some(l.ref_c),
            l.ref_probe_c,
        ),
        None => {
            notes.push("the record does not return to a settled room temperature: irreversible loss not computed".into());
            (None, None, Vec::new(), None, None)
        }
    };
    if let (Some(p), Some(l)) = (ref_probe, loss_result.as_ref()) {
        if (p[1] - p[0]).abs() > 2.0 {
            notes.push(format!(
                "the probe had not cooled back ({:.1} °C before, {:.1} °C after): its own drift is corrected by calibration and counted in the loss budget ({:.3} %)",
                p[0], p[1], l.probe_term_pct
            ));
        }
    }
    // Br from geometry
    let br = match (cal, shape) {
        (Some(c), Some(shape)) => Some(geometry::estimate_br(
            &shape,
            c.gap.standoff.gap_mm,
            c.gap.gap_u_mm,
            b0,
        )),
        _ => None,
    };
    let family = verdict::families(alpha, 2.0 * u_c, br.map(|b| b.br_t), curie_c);
    let material_family = if family.is_empty() {
        "unknown".to_string()
    } else {
        family.join(" or ")
    };
    if family
        .iter()
        .any(|f| *f == "cast AlNiCo" || *f == "sintered hard ferrite")
    {
        notes.push("open-circuit caveat: for ferrite and AlNiCo the working point moves with temperature, so the field's coefficient is not exactly α(Br)".into());
    }
    let grade = ctx.magnet.as_ref().map(|m| m.grade.clone());
    let mut checks = match grade.as_deref().and_then(|g| ctx.specs.find(g)) {
        Some(spec) => verdict::grade_checks(
            spec,
            alpha,
            2.0 * u_c,
            br.map(|b| (b.br_t, b.br_u95_t)),
            &family,
        ),
        None => vec![Check {
            what: "grade".into(),
            outcome: Outcome::Indeterminate,
            reason: match &grade {
                Some(g) => format!("grade `{g}` is not in the spec table"),
                None => "no grade stated".into(),
            },
        }],
    };
    let heat_damaged =
        matches!((loss_pct, loss_u95), (Some(l), Some(u)) if l > u.max(HEAT_DAMAGE_PCT));
    if loss > LOSSY {
        notes.push(
            "the magnet lost flux during the excursion: α is fitted on the cooling branch alone (the heating branch mixes reversible and irreversible change); for a datasheet value measure a fresh magnet below its onset".into(),
        );
    }
    if heat_damaged {
        checks.push(Check {
            what: "irreversible loss".into(),
            outcome: Outcome::Fail,
            reason: format!(
                "lost {:.2} ± {:.2} % of its flux in this test",
                loss_pct.unwrap_or(0.0),
                loss_u95.unwrap_or(0.0)
            ),
        });
    }
    if t_hi - 20.0 < 60.0 {
        notes.push(format!(
            "fitted only up to {t_hi:.0} °C: α is usually quoted for 20…100 °C or 20…150 °C"
        ));
    }
    Ok(Analysis {
        alpha_pct_per_c: alpha,
        alpha_u95_pct_per_c: 2.0 * u_c,
        alpha_fit_se_pct_per_c: u_fit,
        alpha_at_20c_pct_per_c: b1 / b0 * 100.0,
        gamma_pct_per_c2: b2 / b0 * 100.0,
        b20_mt: b0,
        fit_range_c: [t_lo, t_hi],
        residual_sd_mt: fit.residual_sd,
        fit_points: fit.n,
        fit_method: method.into(),
        lag_time_constant_s: tau,
        irreversible_loss_pct: loss_pct,
        irreversible_loss_u95_pct: loss_u95,
        reference_c: refs,
        reference_probe_c: ref_probe,
        max_magnet_temp_c: tm[seg.peak],
        curie_estimate_c: curie_c,
        br,
        material_family,
        verdict: verdict::overall(&checks),
        grade,
        checks,
        heat_damaged,
        alpha_budget: budget,
        loss_budget,
        notes,
        samples: n,
        segments: Some(seg),
        magnet_temp_c: tm,
        flux_corrected_mt: prep.flux,
        fit_coefficients: [b0, b1, b2],
    })
}

/// Lag-1 autocorrelation inflation √((1 + ρ)/(1 − ρ)) of the residuals (1 when uncorrelated).
fn autocorrelation_inflation(t: &[f64], b: &[f64], fit: &lsq::Fit) -> f64 {
    let r: Vec<f64> = t
        .iter()
        .zip(b)
        .map(|(t, b)| {
            let x = t - 20.0;
            b - (fit.coefficients[0] + fit.coefficients[1] * x + fit.coefficients[2] * x * x)
        })
        .collect();
    let num: f64 = r.windows(2).map(|w| w[0] * w[1]).sum();
    let den: f64 = r.iter().map(|v| v * v).sum();
    let rho = if den > 0.0 {
        (num / den).clamp(0.0, 0.95)
    } else {
        0.0
    };
    ((1.0 + rho) / (1.0 - rho)).sqrt()
}

/// Slope of `y` against `x` (least squares), every `stride`-th point.
fn slope(x: &[f64], y: &[f64], stride: usize) -> f64 {
    let xs: Vec<f64> = x.iter().step_by(stride).copied().collect();
    let ys: Vec<f64> = y.iter().step_by(stride).copied().collect();
    lsq::polyfit(&xs, &ys, 1)
        .map(|f| f.coefficients[1])
        .unwrap_or(0.0)
}

/// The irreversible loss with its budget.
struct LossResult {
    loss_pct: f64,
    u95_pct: f64,
    budget: Vec<BudgetLine>,
    ref_c: [f64; 2],
    ref_probe_c: Option<[f64; 2]>,
    probe_term_pct: f64,
}

/// Settled part of a reference window: its last 30 %.
fn settled(r: &std::ops::Range<usize>) -> std::ops::Range<usize> {
    r.start + (r.end - r.start) * 7 / 10..r.end
}

/// How much the flux still drifted across a window: the difference of its two halves'
/// means, relative to the mean, % (a window that has not settled shows it here).
fn drift_pct(flux: &[f64], r: &std::ops::Range<usize>) -> f64 {
    let mid = r.start + (r.end - r.start) / 2;
    let (a, _, _) = mean(flux[r.start..mid].iter().copied());
    let (b, _, _) = mean(flux[mid..r.end].iter().copied());
    ((b - a) / (0.5 * (a + b))).abs() * 100.0
}

/// Quick loss estimate (no budget) with an optional reversible correction.
fn reference_loss(
    p: &Prepared,
    seg: &segments::Segments,
    tm: &[f64],
    fit: Option<&lsq::Fit>,
) -> Option<f64> {
    let after = seg.after.as_ref()?;
    let (b_before, _, _) = mean(settled(&seg.before).map(|i| p.flux[i]));
    let (b_after, _, _) = mean(settled(after).map(|i| p.flux[i]));
    let (t_before, _, _) = mean(settled(&seg.before).map(|i| tm[i]));
    let (t_after, _, _) = mean(settled(after).map(|i| tm[i]));
    let ratio = match fit {
        Some(f) => eval(f, t_before) / eval(f, t_after),
        None => 1.0 - 0.0011 * (t_before - t_after), // NdFeB-like first guess; refined later
    };
    Some((b_before - b_after * ratio) / b_before)
}

fn eval(f: &lsq::Fit, t: f64) -> f64 {
    let x = t - 20.0;
    f.coefficients[0] + f.coefficients[1] * x + f.coefficients[2] * x * x
}

fn reference_loss_full(
    p: &Prepared,
    seg: &segments::Segments,
    tm: &[f64],
    cal: Option<&Calibration>,
    shape: Option<remanent_physics::Shape>,
    fit: &lsq::Fit,
) -> Option<LossResult> {
    let after = seg.after.as_ref()?;
    let (before_r, after_r) = (settled(&seg.before), settled(after));
    let (b0, sd0, n0) = mean(before_r.clone().map(|i| p.flux[i]));
    let (b1, sd1, n1) = mean(after_r.clone().map(|i| p.flux[i]));
    // the magnet's temperature in the windows: lag-corrected; how much the lag model moved it
    // away from the thermocouple goes into the budget
    let (t0, _, _) = mean(before_r.clone().map(|i| tm[i]));
    let (t1, _, _) = mean(after_r.clone().map(|i| tm[i]));
    let (tc0, _, _) = mean(before_r.clone().map(|i| p.s.temp_c[i]));
    let (tc1, _, _) = mean(after_r.clone().map(|i| p.s.temp_c[i]));
    let lag_shift_k = ((t0 - tc0).powi(2) + (t1 - tc1).powi(2)).sqrt();
    let ratio = eval(fit, t0) / eval(fit, t1);
    let loss = (b0 - b1 * ratio) / b0;
    // readings within a window are correlated over ~10 samples: count them as n/10
    let u_mean = ((sd0 * sd0 / (n0 as f64 / 10.0).max(1.0))
        + (sd1 * sd1 / (n1 as f64 / 10.0).max(1.0)))
    .sqrt()
        / b0
        * 100.0;
    let alpha_rel = (fit.coefficients[1] / fit.coefficients[0]).abs();
    let mut budget = vec![
        BudgetLine {
            source: "scatter of the reference readings (type A)".into(),
            kind: 'A',
            u: u_mean,
        },
        BudgetLine {
            source: "drift within the reference windows (not fully settled)".into(),
            kind: 'B',
            u: (drift_pct(&p.flux, &before_r).powi(2) + drift_pct(&p.flux, &after_r).powi(2))
                .sqrt(),
        },
        BudgetLine {
            source: "lag correction of the reference temperatures".into(),
            kind: 'B',
            u: (fit.coefficients[1] / fit.coefficients[0]).abs() * lag_shift_k * 100.0,
        },
        BudgetLine {
            source: "reversible correction between the reference temperatures".into(),
            kind: 'B',
            u: alpha_rel * 0.05 * (t1 - t0).abs() * 100.0,
        },
    ];
    let mut ref_probe = None;
    let mut probe_term = 0.0;
    if let (Some(probe), Some(c)) = (p.s.probe_c.as_ref(), cal) {
        let (p0, _, _) = mean(before_r.clone().map(|i| probe[i]));
        let (p1, _, _) = mean(after_r.clone().map(|i| probe[i]));
        ref_probe = Some([p0, p1]);
        let dp = (p1 - p0).abs();
        let s_term = c.hall.sensitivity_tc_u_pct_per_c * dp;
        let off_term =
            c.hall.offset_tc_u_mv_per_c * dp / c.hall.sensor.sensitivity_mv_per_mt / b0 * 100.0;
        probe_term = (s_term * s_term + off_term * off_term).sqrt();
        budget.push(BudgetLine {
            source: "probe drift between the references".into(),
            kind: 'B',
            u: probe_term,
        });
        if let Some(shape) = shape {
            let d = dln_bz_per_mm(&shape, c.gap.standoff.gap_mm);
            let dtso = 0.5 * ((t1 - t0) + (p1 - p0));
            budget.push(BudgetLine {
                source: "standoff expansion between the references".into(),
                kind: 'B',
                u: (d * c.gap.standoff.standoff_mm * c.gap.standoff_cte_u_per_k * dtso * 100.0)
                    .abs(),
            });
        }
    }
    let u = budget.iter().map(|l| l.u * l.u).sum::<f64>().sqrt();
    Some(LossResult {
        loss_pct: loss * 100.0,
        u95_pct: 2.0 * u,
        budget,
        ref_c: [t0, t1],
        ref_probe_c: ref_probe,
        probe_term_pct: probe_term,
    })
}
