//! The magnet under test: shape, remanence and how it changes with temperature.
//!
//! Reversible: Br(T) = Br20·(1 + α(T − 20) + γ(T − 20)²), with α and γ in %/°C and %/°C².
//! Irreversible, for a magnet with a square intrinsic curve (NdFeB, SmCo): the magnet's own
//! coercivity and squareness set a knee; slices of the magnet along its axis, each at its own
//! demagnetizing factor, lose part of their polarization once the working field there passes
//! the knee, so a thin part or a weak one loses first and more. For the others (ferrite,
//! AlNiCo): a loss that grows with the highest temperature reached above an onset shifted by
//! the permeance. Either is approached with a time constant, since most of it happens soon
//! after the exposure begins. Near the Curie point the magnetization collapses, and heating
//! past it demagnetizes the magnet completely.

use serde::{Deserialize, Serialize};

pub use remanent_physics::Shape;

/// A magnet's material behaviour and geometry.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Magnet {
    /// Geometry.
    pub shape: Shape,
    /// Remanence at 20 °C, T.
    pub br_20_t: f64,
    /// Linear reversible coefficient of Br, %/°C.
    pub alpha_pct_per_c: f64,
    /// Quadratic reversible coefficient of Br, %/°C².
    pub gamma_pct_per_c2: f64,
    /// Irreversible loss begins above this temperature at L/D = 0.7, °C.
    pub irreversible_onset_c: f64,
    /// Irreversible loss per °C above the onset, %.
    pub irreversible_pct_per_c: f64,
    /// Curie temperature, °C.
    pub curie_c: f64,
    /// Rated maximum working temperature, °C.
    pub max_working_c: f64,
    /// The part's own intrinsic curve, for a square-loop material (the onset rule otherwise).
    #[serde(default)]
    pub knee: Option<Knee>,
}

/// A square intrinsic curve: the part's own coercivity, not its grade's minimum.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Knee {
    /// HcJ at 20 °C, kA/m.
    pub hcj_20_ka_per_m: f64,
    /// Temperature coefficient of HcJ, %/°C.
    pub beta_pct_per_c: f64,
    /// Where the curve bends, as a fraction of HcJ.
    pub squareness: f64,
}

/// Slices along the axis, centre to pole face, for the knee model.
const SLICES: usize = 12;
/// Of the polarization a slice would have to give up to sit back on its knee, the part it
/// does give up (reversal by nucleation is partial: model assumption).
const SLICE_LOSS_SHARE: f64 = 0.12;

/// Onset shift per unit of L/D away from 0.7, °C (model assumption: a thin disc at L/D 0.2
/// starts losing about 25 °C earlier than the rating suggests).
pub const ONSET_SHIFT_C_PER_LD: f64 = 50.0;
/// Time constant of the irreversible loss, s.
pub const IRREVERSIBLE_TAU_S: f64 = 120.0;

impl Magnet {
    /// Its true mean α between 20 °C and `top_c` (the standards' two-point form), %/°C: with
    /// Br(T) = Br20·(1 + α(T − 20) + γ(T − 20)²), (Br(top) − Br20)/(Br20·(top − 20)).
    pub fn mean_alpha_pct_per_c(&self, top_c: f64) -> f64 {
        self.alpha_pct_per_c + self.gamma_pct_per_c2 * (top_c - 20.0)
    }

    /// The irreversible onset for this magnet's shape, °C.
    pub fn effective_onset_c(&self) -> f64 {
        let shift = (ONSET_SHIFT_C_PER_LD * (self.shape.l_over_d() - 0.7)).clamp(-40.0, 40.0);
        self.irreversible_onset_c + shift
    }

    /// Reversible factor on Br at `t_c` (1 at 20 °C), with the collapse near the Curie point.
    pub fn reversible_factor(&self, t_c: f64) -> f64 {
        let d = t_c - 20.0;
        let poly = 1.0 + self.alpha_pct_per_c / 100.0 * d + self.gamma_pct_per_c2 / 100.0 * d * d;
        let curie = if t_c >= self.curie_c {
            0.0
        } else {
            1.0 - libm::exp(-(self.curie_c - t_c) / 12.0)
        };
        (poly * curie).max(0.0)
    }

    /// The irreversible loss fraction that exposure to `max_c` leads to, 0..=1.
    pub fn irreversible_target(&self, max_c: f64) -> f64 {
        if max_c >= self.curie_c - 2.0 {
            return 1.0;
        }
        if let Some(knee) = self.knee {
            return self.knee_loss(&knee, max_c).min(0.9);
        }
        let over = (max_c - self.effective_onset_c()).max(0.0);
        (self.irreversible_pct_per_c / 100.0 * over).min(0.9)
    }

    /// The fraction lost through the knee after exposure to `max_c`: each slice's polarization
    /// falls part of the way to where its working field sits on the knee.
    fn knee_loss(&self, knee: &Knee, max_c: f64) -> f64 {
        let d = max_c - 20.0;
        let knee_ka_per_m =
            knee.squareness * knee.hcj_20_ka_per_m * (1.0 + knee.beta_pct_per_c / 100.0 * d);
        let br = self.br_20_t * self.reversible_factor(max_c);
        let polarization_ka_per_m = br / (4.0e-7 * core::f64::consts::PI) / 1000.0;
        let mut lost = 0.0;
        for i in 0..SLICES {
            // slice i at height z from the centre, as a fraction of the half length
            let z = (i as f64 + 0.5) / SLICES as f64;
            let n = axial_demag_factor(&self.shape, z);
            let field = n * polarization_ka_per_m;
            if field > knee_ka_per_m {
                lost += SLICE_LOSS_SHARE * (1.0 - knee_ka_per_m.max(0.0) / field);
            }
        }
        lost / SLICES as f64
    }
}

/// What has happened to a magnet so far.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MagnetState {
    /// Highest temperature reached, °C.
    pub max_c: f64,
    /// Irreversible loss so far, fraction.
    pub irreversible: f64,
}

impl MagnetState {
    /// A fresh magnet at `t_c`.
    pub fn new(t_c: f64) -> Self {
        MagnetState {
            max_c: t_c,
            irreversible: 0.0,
        }
    }

    /// Advance by `dt_s` at temperature `t_c`.
    pub fn advance(&mut self, magnet: &Magnet, t_c: f64, dt_s: f64) {
        self.max_c = self.max_c.max(t_c);
        let target = magnet.irreversible_target(self.max_c);
        if target > self.irreversible {
            let k = 1.0 - libm::exp(-dt_s / IRREVERSIBLE_TAU_S);
            self.irreversible += (target - self.irreversible) * k;
        }
    }

    /// Br now, T.
    pub fn br_t(&self, magnet: &Magnet, t_c: f64) -> f64 {
        magnet.br_20_t * (1.0 - self.irreversible) * magnet.reversible_factor(t_c)
    }
}

/// The axial demagnetizing factor on the axis at `z_frac` of the half length from the centre:
/// the two pole faces' charge sheets, each by the solid angle it subtends there.
fn axial_demag_factor(shape: &Shape, z_frac: f64) -> f64 {
    let four_pi = 4.0 * core::f64::consts::PI;
    match *shape {
        Shape::Cylinder {
            diameter_mm,
            length_mm,
        } => {
            let r = diameter_mm / 2.0;
            let h = length_mm / 2.0;
            let omega =
                |dist: f64| 2.0 * core::f64::consts::PI * (1.0 - dist / libm::hypot(dist, r));
            (omega(h * (1.0 - z_frac)) + omega(h * (1.0 + z_frac))) / four_pi
        }
        Shape::Block {
            a_mm,
            b_mm,
            length_mm,
        } => {
            let h = length_mm / 2.0;
            let (a, b) = (a_mm / 2.0, b_mm / 2.0);
            // a rectangle 2a × 2b seen on its axis from `dist`
            let omega = |dist: f64| {
                4.0 * libm::atan(a * b / (dist * libm::sqrt(dist * dist + a * a + b * b)))
            };
            (omega(h * (1.0 - z_frac).max(1e-9)) + omega(h * (1.0 + z_frac))) / four_pi
        }
    }
}
