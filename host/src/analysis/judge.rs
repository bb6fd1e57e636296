//! Step 6: what the numbers mean — Br from geometry, the material family, the grade checks
//! against the spec table and the heat-damage flag, with plain notes where a caveat applies.

use super::context::Context;
use super::geometry::{self, BrEstimate};
use super::loss_verdict;
use super::result::{BudgetLine, Judgement, Remanence};
use super::verdict::{self, Check, Outcome};
use crate::families;
use crate::safe_peak::{self, SafePeak};
use crate::units::{Kind, Phrase, Qty};

pub use super::loss_verdict::HEAT_DAMAGE_PCT;
/// The families' table gives α between 20 °C and this, °C.
pub const TABLE_TOP_C: f64 = 100.0;
/// α is usually quoted for 20…100 °C or 20…150 °C: a fit that stops short of 20 + this is
/// noted, K.
pub const QUOTED_SPAN_K: f64 = 60.0;

/// What the judge step produced.
pub struct Judged {
    /// Br from geometry.
    pub br: Option<BrEstimate>,
    /// Families α (and Br, and a Curie collapse) point to, joined for the report.
    pub material_family: String,
    /// The grade checked.
    pub grade: Option<String>,
    /// The checks.
    pub checks: Vec<Check>,
    /// The magnet lost flux in this test, at or below its safe peak.
    pub heat_damaged: bool,
    /// The part's safe test peak.
    pub safe_peak: Option<SafePeak>,
    /// The test went beyond the safe peak: the quarantine statement.
    pub quarantine: Option<Phrase>,
    /// How Br was found, and its budget (relative standard uncertainties, %).
    pub br_budget: Vec<BudgetLine>,
}

impl Judged {
    /// The result's two groups this step made: Br (`referred`: to the fixture's reference
    /// magnet) and the judgement, its verdict the checks' overall one.
    pub fn into_parts(self, referred: bool) -> (Remanence, Judgement) {
        let remanence = Remanence {
            estimate: self.br,
            budget: self.br_budget,
            referred: referred && self.br.is_some(),
        };
        let judgement = Judgement {
            material_family: self.material_family,
            verdict: super::verdict::overall(&self.checks),
            grade: self.grade,
            checks: self.checks,
            heat_damaged: self.heat_damaged,
            safe_peak: self.safe_peak,
            quarantine: self.quarantine,
        };
        (remanence, judgement)
    }
}

/// The measured quantities the judge step needs.
pub struct Measured {
    /// Mean α, %/°C, and its U95.
    pub alpha: (f64, f64),
    /// Mean α over the families' table range (20…100 °C), %/°C, from the fitted curve when it
    /// reaches 100 °C (else the fitted α), and its U95.
    pub alpha_table: (f64, f64),
    /// B at 20 °C, mT, and its standard uncertainty from the fit.
    pub b20_mt: f64,
    /// Standard uncertainty of `b20_mt`, mT.
    pub b20_u_mt: f64,
    /// Highest magnet temperature in the test, °C.
    pub peak_c: f64,
    /// Top of the fitted range, °C.
    pub fit_top_c: f64,
    /// Curie collapse, °C.
    pub curie_c: Option<f64>,
    /// Loss and its U95, %.
    pub loss: Option<(f64, f64)>,
}

/// Judge the measurement.
pub fn judge(m: &Measured, ctx: &Context, notes: &mut Vec<Phrase>) -> Judged {
    let (alpha, alpha_u95) = m.alpha;
    let mut br_budget = Vec::new();
    let br = match (
        &ctx.reference,
        ctx.calibration.as_ref(),
        ctx.magnet.as_ref(),
    ) {
        (Some(r), _, Some(mag)) => {
            let (est, budget) = r.br_of(&mag.shape, m.b20_mt, m.b20_u_mt);
            notes.push(crate::phrase![
                format!(
                    "Br referred to the fixture's reference magnet {} (certified ",
                    r.magnet
                ),
                Qty::pm(Kind::Br, r.br_t, r.br_u_t, 4),
                format!(", {}): the gap cancels", r.source),
            ]);
            // the part's own fit is statistics (type A); the rest is other knowledge
            br_budget = budget
                .into_iter()
                .map(|(s, u)| {
                    if s.contains("(fit)") {
                        BudgetLine::a(s, u)
                    } else {
                        BudgetLine::b(s, u)
                    }
                })
                .collect();
            Some(est)
        }
        (None, Some(c), Some(mag)) => {
            let est =
                geometry::estimate_br(&mag.shape, c.gap.standoff.gap_mm, c.gap.gap_u_mm, m.b20_mt);
            br_budget.push(BudgetLine::b(
                format!(
                    "gap ±{} mm (geometry at the calibrated gap)",
                    c.gap.gap_u_mm
                ),
                est.br_u95_t / 2.0 / est.br_t * 100.0,
            ));
            Some(est)
        }
        _ => None,
    };
    let family = families::matching(
        m.alpha_table.0,
        m.alpha_table.1,
        br.map(|b| b.br_t),
        m.curie_c,
    );
    let material_family = if family.is_empty() {
        "unknown".to_string()
    } else {
        family.join(" or ")
    };
    if family
        .iter()
        .any(|f| families::find(f).is_some_and(|f| f.open_circuit_caveat))
    {
        notes.push("open-circuit caveat: for ferrite and AlNiCo the working point moves with temperature, so the field's coefficient is not exactly α(Br)".into());
    }
    let grade = ctx.magnet.as_ref().map(|mag| mag.grade.clone());
    let mut checks = match grade.as_deref().and_then(|g| ctx.specs.find(g)) {
        Some(spec) => verdict::grade_checks(
            spec,
            alpha,
            alpha_u95,
            br.map(|b| (b.br_t, b.br_u95_t)),
            &family,
        ),
        None => vec![Check {
            what: super::verdict::CheckKind::Grade,
            outcome: Outcome::Indeterminate,
            reason: match &grade {
                Some(g) => format!("grade `{g}` is not in the spec table").into(),
                None => "no grade stated".into(),
            },
        }],
    };
    let safe = ctx
        .magnet
        .as_ref()
        .map(|mag| safe_peak::for_part(mag, mag_spec(ctx, mag)));
    let lv = loss_verdict::judge_loss(m.loss, m.peak_c, m.peak_c, safe.as_ref());
    checks.extend(lv.check);
    let (heat_damaged, quarantine) = (lv.heat_damaged, lv.quarantine);
    if ctx.reference.is_none() {
        for c in checks.iter_mut().filter(|c| {
            c.what == super::verdict::CheckKind::Br && c.outcome == Outcome::Indeterminate
        }) {
            c.reason.push(" — from geometry the gap's uncertainty dominates: refer the run to a reference magnet (`remanent reference`, then --reference)");
        }
    }
    Judged {
        br,
        material_family,
        grade,
        checks,
        heat_damaged,
        safe_peak: safe,
        quarantine,
        br_budget,
    }
}

/// The stated magnet's grade row.
fn mag_spec<'a>(
    ctx: &'a Context,
    mag: &crate::magnets::MagnetInfo,
) -> Option<&'a crate::specs::GradeSpec> {
    ctx.specs.find(&mag.grade)
}
