//! Step 6: what the numbers mean — Br from geometry, the material family, the grade checks
//! against the spec table and the heat-damage flag, with plain notes where a caveat applies.

use super::context::Context;
use super::families;
use super::geometry::{self, BrEstimate};
use super::verdict::{self, Check, Outcome};

/// A loss above this (and above its own U95) flags heat damage, %.
pub const HEAT_DAMAGE_PCT: f64 = 0.3;
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
    /// The magnet lost flux in this test.
    pub heat_damaged: bool,
}

/// The measured quantities the judge step needs.
pub struct Measured {
    /// Mean α, %/°C, and its U95.
    pub alpha: (f64, f64),
    /// Mean α over the families' table range (20…100 °C), %/°C, from the fitted curve when it
    /// reaches 100 °C (else the fitted α), and its U95.
    pub alpha_table: (f64, f64),
    /// B at 20 °C, mT.
    pub b20_mt: f64,
    /// Top of the fitted range, °C.
    pub fit_top_c: f64,
    /// Curie collapse, °C.
    pub curie_c: Option<f64>,
    /// Loss and its U95, %.
    pub loss: Option<(f64, f64)>,
}

/// Judge the measurement.
pub fn judge(m: &Measured, ctx: &Context, notes: &mut Vec<String>) -> Judged {
    let (alpha, alpha_u95) = m.alpha;
    let br = match (ctx.calibration.as_ref(), ctx.magnet.as_ref()) {
        (Some(c), Some(mag)) => Some(geometry::estimate_br(
            &mag.shape,
            c.gap.standoff.gap_mm,
            c.gap.gap_u_mm,
            m.b20_mt,
        )),
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
            what: "grade".into(),
            outcome: Outcome::Indeterminate,
            reason: match &grade {
                Some(g) => format!("grade `{g}` is not in the spec table"),
                None => "no grade stated".into(),
            },
        }],
    };
    let heat_damaged = matches!(m.loss, Some((l, u)) if l > u.max(HEAT_DAMAGE_PCT));
    if let (true, Some((l, u))) = (heat_damaged, m.loss) {
        checks.push(Check {
            what: "irreversible loss".into(),
            outcome: Outcome::Fail,
            reason: format!("lost {l:.2} ± {u:.2} % of its flux in this test"),
        });
    }
    Judged {
        br,
        material_family,
        grade,
        checks,
        heat_damaged,
    }
}
