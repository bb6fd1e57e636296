//! The part's safe test temperature: the highest magnet temperature at which a conforming part
//! of its grade and shape keeps its working point clear of the knee, less a margin, and never
//! above the grade's (or the magnet's own) rating. Worked out from the grade's worst case
//! (the highest Br, the least negative α, the lowest HcJ) at the pole-face centre
//! (`remanent_physics::load_line`); hardware-notes/safe-peak.md has a worked example.

use remanent_physics::load_line::{self, KneeLimit, Material, Point};
use serde::{Deserialize, Serialize};

use crate::magnets::MagnetInfo;
use crate::specs::GradeSpec;
use crate::units::{temp_q, Phrase};

/// Kept below the knee's temperature: the thermocouple's tolerance (±2.2 K, ASTM E230 standard
/// limits, recalled), the controller's overshoot and the lag between block and magnet, K.
pub const MARGIN_K: f64 = 5.0;
/// Recoil permeability assumed when the spec row gives none (sintered NdFeB and SmCo).
pub const DEFAULT_RECOIL: f64 = 1.05;
/// A part is taken past its safe peak when the magnet went more than this above it, K.
pub const OVERSHOOT_K: f64 = 2.0;

/// What limits the safe peak.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Bound {
    /// The load line reaches the knee first.
    Knee,
    /// The rating comes first (the knee is further, or recedes on heating).
    Rating,
    /// The spec table gives no coercivity for the grade: the rating alone.
    NoCoercivity,
}

/// The safe peak and how it was found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SafePeak {
    /// Highest magnet temperature the test may reach, °C.
    #[serde(rename = "peak_C")]
    pub peak_c: f64,
    /// What set it.
    pub bound: Bound,
    /// The rating it is capped at, °C.
    #[serde(rename = "rating_C")]
    pub rating_c: f64,
    /// Where the knee is reached, °C (none: heating moves the working point away from it).
    #[serde(rename = "knee_C", default, skip_serializing_if = "Option::is_none")]
    pub knee_c: Option<f64>,
    /// Permeance coefficient at the point judged.
    pub pc: f64,
    /// Permeance coefficient at the magnet's centre (the textbook value), for comparison.
    pub pc_centre: f64,
    /// The point judged.
    pub point: Point,
    /// The grade it was worked out for.
    pub grade: String,
}

/// The load-line material of a grade's worst conforming part.
fn worst_case(spec: &GradeSpec) -> Option<Material> {
    let hcj = spec
        .hcj_min_ka_per_m
        .filter(|h| h.is_finite() && *h > 0.0)?;
    let beta = spec.beta_hcj_pct_per_c.filter(|b| b.is_finite())?;
    Some(Material {
        br_20_t: spec.br_max_t,
        alpha_pct_per_c: spec.alpha_max,
        hcj_20_ka_per_m: hcj,
        beta_pct_per_c: beta,
        recoil: spec.recoil_permeability.unwrap_or(DEFAULT_RECOIL),
        knee_fraction: load_line::KNEE_FRACTION,
    })
}

/// The safe peak of `magnet` by its grade's row (none: the magnet's rating alone).
pub fn for_part(magnet: &MagnetInfo, spec: Option<&GradeSpec>) -> SafePeak {
    let point = Point::PoleFaceCentre;
    let pc = load_line::permeance(&magnet.shape, point);
    let pc_centre = load_line::permeance(&magnet.shape, Point::MagnetCentre);
    let rating_c = spec.map_or(magnet.max_working_c, |s| {
        s.max_working_c.min(magnet.max_working_c)
    });
    let knee = spec
        .and_then(worst_case)
        .map(|m| load_line::knee_limit(&m, pc));
    let (peak_c, bound, knee_c) = match knee {
        None => (rating_c, Bound::NoCoercivity, None),
        Some(KneeLimit::Recedes) => (rating_c, Bound::Rating, None),
        Some(KneeLimit::At(t)) => {
            let below = (t - MARGIN_K).floor();
            if below < rating_c {
                (below, Bound::Knee, Some(t))
            } else {
                (rating_c, Bound::Rating, Some(t))
            }
        }
    };
    SafePeak {
        peak_c,
        bound,
        rating_c,
        knee_c,
        pc,
        pc_centre,
        point,
        grade: spec.map_or_else(|| magnet.grade.clone(), |s| s.grade.clone()),
    }
}

impl SafePeak {
    /// Whether a test that reached `peak_c` took the part past its safe peak.
    pub fn exceeded_by(&self, peak_c: f64) -> bool {
        peak_c > self.peak_c + OVERSHOOT_K
    }

    /// One line: the peak, what set it, where and with which permeance.
    pub fn explain(&self) -> Phrase {
        let why: Phrase = match (self.bound, self.knee_c) {
            (Bound::Knee, Some(k)) => crate::phrase![
                "its working point at ",
                self.point.describe(),
                format!(
                    " (Pc {:.2}; {:.2} at the magnet's centre) reaches the knee of a worst-case {} at ",
                    self.pc, self.pc_centre, self.grade
                ),
                temp_q(k, 0),
                format!(", less {MARGIN_K:.0} K"),
            ],
            (Bound::Rating, Some(k)) => crate::phrase![
                format!("the {} rating; the load line at ", self.grade),
                self.point.describe(),
                format!(" (Pc {:.2}) reaches the knee only at ", self.pc),
                temp_q(k, 0),
            ],
            (Bound::Rating, None) => format!(
                "the {} rating; its coercivity rises with temperature, so heating moves its working point away from the knee (Pc {:.2} at {})",
                self.grade, self.pc, self.point.describe()
            )
            .into(),
            _ => format!(
                "the rating alone: the spec table gives no HcJ for {}",
                self.grade
            )
            .into(),
        };
        let mut p = crate::phrase!["safe test peak ", temp_q(self.peak_c, 0), ": "];
        p.extend(why);
        p
    }
}
