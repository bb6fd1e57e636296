//! Simple magnet shapes and the on-axis field they make at a gap.

use serde::{Deserialize, Serialize};

use crate::field;

/// Geometry, mm. Magnetized along the length.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Shape {
    /// Axially magnetized disc or rod.
    Cylinder {
        /// Diameter, mm.
        diameter_mm: f64,
        /// Length along the magnetization, mm.
        length_mm: f64,
    },
    /// Rectangular block magnetized through its thickness.
    Block {
        /// Face side, mm.
        a_mm: f64,
        /// Other face side, mm.
        b_mm: f64,
        /// Thickness along the magnetization, mm.
        length_mm: f64,
    },
}

impl Shape {
    /// The first dimension that is not a finite positive length (0.001 … 10 000 mm), by name.
    pub fn bad_dimension(&self) -> Option<(&'static str, f64)> {
        let bad = |v: f64| !(v.is_finite() && (0.001..=10_000.0).contains(&v));
        let sizes: [(&'static str, f64); 3] = match *self {
            Shape::Cylinder {
                diameter_mm,
                length_mm,
            } => [
                ("diameter_mm", diameter_mm),
                ("length_mm", length_mm),
                ("length_mm", length_mm),
            ],
            Shape::Block {
                a_mm,
                b_mm,
                length_mm,
            } => [("a_mm", a_mm), ("b_mm", b_mm), ("length_mm", length_mm)],
        };
        sizes.into_iter().find(|(_, v)| bad(*v))
    }

    /// Bz on the axis at `gap_mm` from the pole face, per tesla of Br.
    pub fn bz_per_br(&self, gap_mm: f64) -> f64 {
        match *self {
            Shape::Cylinder {
                diameter_mm,
                length_mm,
            } => field::cylinder_bz_per_br(diameter_mm, length_mm, gap_mm),
            Shape::Block {
                a_mm,
                b_mm,
                length_mm,
            } => field::block_bz_per_br(a_mm, b_mm, length_mm, gap_mm),
        }
    }

    /// Length over diameter (for a block, over the diameter of a circle of the same area):
    /// the usual stand-in for the permeance coefficient.
    pub fn l_over_d(&self) -> f64 {
        match *self {
            Shape::Cylinder {
                diameter_mm,
                length_mm,
            } => length_mm / diameter_mm,
            Shape::Block {
                a_mm,
                b_mm,
                length_mm,
            } => {
                let d = libm::sqrt(4.0 * a_mm * b_mm / core::f64::consts::PI);
                length_mm / d
            }
        }
    }
}

/// d ln(Bz)/d gap at `gap_mm`, per mm (central difference): how strongly the field at the
/// probe depends on the gap.
pub fn dln_bz_per_mm(shape: &Shape, gap_mm: f64) -> f64 {
    let h = 1e-4;
    let lo = shape.bz_per_br((gap_mm - h).max(0.0));
    let hi = shape.bz_per_br(gap_mm + h);
    (libm::log(hi) - libm::log(lo)) / (2.0 * h)
}
