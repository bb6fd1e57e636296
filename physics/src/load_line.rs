//! The working point of a magnet in open circuit, and the highest temperature at which it stays
//! clear of the knee of its intrinsic curve (the load-line method).
//!
//! Straight recoil line B = Br + μ0·μrec·H and load line B = −μ0·Pc·H give the working field
//! |H_d| = Br / (μ0·(μrec + Pc)). Loss begins where |H_d| reaches the knee of the intrinsic
//! curve, taken as a fraction of HcJ. With Br(T) = Br20·(1 + α·(T − 20)) and
//! HcJ(T) = HcJ20·(1 + β·(T − 20)) both sides are straight lines in T, so the limit has a
//! closed form.
//!
//! Where in the part: the permeance coefficient Pc = (1 − N)/N follows from the demagnetizing
//! factor N at a point. For a uniformly magnetized cylinder or block, the component of the
//! demagnetizing field along the magnetization is strongest at the centre of a pole face
//! (N there is 1 − B_face/J, from the on-axis field at gap 0) and mildest at the magnet's
//! centre, the textbook point. The rims of a pole face see a field that turns away from the
//! axis, whose axial part is weaker than at the face's centre; with the knee reached by the
//! axial component (a sintered magnet reverses by nucleation, whose threshold follows the
//! field along the easy axis: common practice) the pole-face centre is the weakest point.

use crate::shape::Shape;

/// μ0, T·m/A.
pub const MU0: f64 = 4.0e-7 * core::f64::consts::PI;

/// The knee of a square intrinsic curve as a fraction of HcJ (squareness 0.90–0.95 for
/// sintered NdFeB: the low end, so the limit is on the safe side; common practice).
pub const KNEE_FRACTION: f64 = 0.90;

/// A point of the part the working point is judged at.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Point {
    /// The magnet's centre: the mildest point.
    MagnetCentre,
    /// The centre of a pole face: the strongest axial demagnetizing field.
    PoleFaceCentre,
}

impl Point {
    /// In words.
    pub fn describe(self) -> &'static str {
        match self {
            Point::MagnetCentre => "the magnet's centre",
            Point::PoleFaceCentre => "the centre of a pole face",
        }
    }
}

/// The demagnetizing factor N (axial component, per unit polarization) at `point`.
pub fn demag_factor(shape: &Shape, point: Point) -> f64 {
    match point {
        // B is continuous across the face: inside, H = B/μ0 − M, so N = 1 − B_face/J
        Point::PoleFaceCentre => 1.0 - shape.bz_per_br(0.0),
        Point::MagnetCentre => 1.0 - centre_bz_per_j(shape),
    }
}

/// Bz at the magnet's centre per unit polarization (each pole face's charge sheet seen at half
/// the length: the solid-angle form of the same closed expressions).
fn centre_bz_per_j(shape: &Shape) -> f64 {
    match *shape {
        Shape::Cylinder {
            diameter_mm,
            length_mm,
        } => length_mm / libm::sqrt(length_mm * length_mm + diameter_mm * diameter_mm),
        Shape::Block {
            a_mm,
            b_mm,
            length_mm,
        } => {
            let l = length_mm;
            let diag = libm::sqrt(l * l + a_mm * a_mm + b_mm * b_mm);
            2.0 / core::f64::consts::PI * libm::atan(a_mm * b_mm / (l * diag))
        }
    }
}

/// The permeance coefficient Pc = (1 − N)/N at `point`.
pub fn permeance(shape: &Shape, point: Point) -> f64 {
    let n = demag_factor(shape, point);
    (1.0 - n) / n
}

/// What the load line needs of a material.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Material {
    /// Br at 20 °C, T.
    pub br_20_t: f64,
    /// α(Br), %/°C.
    pub alpha_pct_per_c: f64,
    /// HcJ at 20 °C, kA/m.
    pub hcj_20_ka_per_m: f64,
    /// β(HcJ), %/°C.
    pub beta_pct_per_c: f64,
    /// Recoil permeability μrec.
    pub recoil: f64,
    /// Knee as a fraction of HcJ.
    pub knee_fraction: f64,
}

impl Material {
    /// |H_d| at `t_c` where the permeance coefficient is `pc`, kA/m.
    pub fn working_field_ka_per_m(&self, pc: f64, t_c: f64) -> f64 {
        let br = self.br_20_t * (1.0 + self.alpha_pct_per_c / 100.0 * (t_c - 20.0));
        br / (MU0 * (self.recoil + pc)) / 1000.0
    }

    /// The knee's field at `t_c`, kA/m.
    pub fn knee_ka_per_m(&self, t_c: f64) -> f64 {
        self.knee_fraction
            * self.hcj_20_ka_per_m
            * (1.0 + self.beta_pct_per_c / 100.0 * (t_c - 20.0))
    }
}

/// Where heating takes the working point relative to the knee.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum KneeLimit {
    /// The knee moves away faster than the working field grows: heating never reaches it
    /// (a ferrite's coercivity rises with temperature; its danger is cold).
    Recedes,
    /// The working point reaches the knee at this temperature, °C.
    At(f64),
}

/// The temperature at which heating brings the working field at permeance `pc` to the knee
/// (below 20 °C when the point is past the knee already there).
pub fn knee_limit(m: &Material, pc: f64) -> KneeLimit {
    let h20 = m.working_field_ka_per_m(pc, 20.0);
    let k20 = m.knee_ka_per_m(20.0);
    // k20·(1 + b·d) = h20·(1 + a·d)  →  d = (k20 − h20) / (h20·a − k20·b)
    let slope = h20 * m.alpha_pct_per_c / 100.0 - k20 * m.beta_pct_per_c / 100.0;
    if slope <= 0.0 {
        return KneeLimit::Recedes;
    }
    KneeLimit::At(20.0 + (k20 - h20) / slope)
}

#[cfg(test)]
mod tests {
    use super::*;

    const D10X5: Shape = Shape::Cylinder {
        diameter_mm: 10.0,
        length_mm: 5.0,
    };
    const D10X2: Shape = Shape::Cylinder {
        diameter_mm: 10.0,
        length_mm: 2.0,
    };

    fn nd(br_20_t: f64) -> Material {
        Material {
            br_20_t,
            alpha_pct_per_c: -0.12,
            hcj_20_ka_per_m: 955.0,
            beta_pct_per_c: -0.6,
            recoil: 1.05,
            knee_fraction: 0.9,
        }
    }

    // Check values in the project's domain notes (computed there from the formulas with
    // values from memory, not from a published table): Ø10 × 5 N_centre 0.553, Pc 0.81;
    // Ø10 × 2 N_centre 0.804, Pc 0.24; N42 Ø10 × 5 |H_d| 556 kA/m, safe at the centre ≈ 88 °C;
    // N35 Ø10 × 2 |H_d| 738 kA/m, ≈ 48 °C.
    #[test]
    fn the_centre_matches_the_worked_check_values() {
        assert!((demag_factor(&D10X5, Point::MagnetCentre) - 0.553).abs() < 0.001);
        assert!((permeance(&D10X5, Point::MagnetCentre) - 0.81).abs() < 0.01);
        assert!((demag_factor(&D10X2, Point::MagnetCentre) - 0.804).abs() < 0.001);
        assert!((permeance(&D10X2, Point::MagnetCentre) - 0.24).abs() < 0.01);
        let pc = permeance(&D10X5, Point::MagnetCentre);
        assert!((nd(1.30).working_field_ka_per_m(pc, 20.0) - 556.0).abs() < 2.0);
        let KneeLimit::At(t) = knee_limit(&nd(1.30), pc) else {
            panic!("NdFeB's knee comes nearer on heating")
        };
        assert!((t - 88.0).abs() < 1.5, "{t}");
        let pc = permeance(&D10X2, Point::MagnetCentre);
        assert!((nd(1.20).working_field_ka_per_m(pc, 20.0) - 738.0).abs() < 3.0);
        let KneeLimit::At(t) = knee_limit(&nd(1.20), pc) else {
            panic!()
        };
        assert!((t - 48.0).abs() < 1.5, "{t}");
    }

    #[test]
    fn the_pole_face_is_harsher_than_the_centre_and_ferrite_recedes() {
        for s in [D10X5, D10X2] {
            assert!(
                demag_factor(&s, Point::PoleFaceCentre) > demag_factor(&s, Point::MagnetCentre)
            );
        }
        let ferrite = Material {
            beta_pct_per_c: 0.27,
            alpha_pct_per_c: -0.19,
            ..nd(0.39)
        };
        assert_eq!(knee_limit(&ferrite, 0.3), KneeLimit::Recedes);
    }
}
