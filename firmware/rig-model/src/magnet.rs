//! The magnet under test: shape, remanence and how it changes with temperature.
//!
//! Reversible: Br(T) = Br20·(1 + α(T − 20) + γ(T − 20)²), with α and γ in %/°C and %/°C².
//! Irreversible: a loss that grows with the highest temperature reached above an onset set by
//! the grade and shifted by the permeance (thin magnets lose first), approached with a time
//! constant since most of it happens soon after the exposure begins. Near the Curie point the
//! magnetization collapses, and heating past it demagnetizes the magnet completely.

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
}

/// Onset shift per unit of L/D away from 0.7, °C (model assumption: a thin disc at L/D 0.2
/// starts losing about 25 °C earlier than the rating suggests).
pub const ONSET_SHIFT_C_PER_LD: f64 = 50.0;
/// Time constant of the irreversible loss, s.
pub const IRREVERSIBLE_TAU_S: f64 = 120.0;

impl Magnet {
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
        let over = (max_c - self.effective_onset_c()).max(0.0);
        (self.irreversible_pct_per_c / 100.0 * over).min(0.9)
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
