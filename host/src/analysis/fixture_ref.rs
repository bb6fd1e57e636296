//! The fixture factor from a reference magnet: a part of known Br read in the same fixture
//! fixes the gap and the probe's sensitivity together, so a part referred to it gets a Br
//! whose uncertainty comes from the reference and the repeatability of placing a magnet, not
//! from the gap. Stored as a small TOML file (`remanent reference … --out fixture.toml`).

use std::path::Path;

use remanent_physics::shape::dln_bz_per_mm;
use remanent_physics::Shape;
use serde::{Deserialize, Serialize};

use crate::analysis::geometry::BrEstimate;
use crate::calibration::Stamp;

/// Repeatability of taking a magnet out and putting it back in a fixture with a locating
/// pocket, relative standard deviation, % — used when the reference was placed only once
/// (common practice; the value is from memory: measure yours with `--placements`).
pub const DEFAULT_REPEATABILITY_PCT: f64 = 0.15;

/// A fixture's reference: what the reference magnet read, and what it is known to be.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FixtureReference {
    /// The reference magnet's id.
    pub magnet: String,
    /// Its shape.
    pub shape: Shape,
    /// Its certified Br at 20 °C, T.
    #[serde(rename = "br_T")]
    pub br_t: f64,
    /// Its standard uncertainty, T.
    #[serde(rename = "br_u_T")]
    pub br_u_t: f64,
    /// Who certified it.
    pub source: String,
    /// The field it gave in this fixture, referred to 20 °C, mT (mean over the placements).
    #[serde(rename = "b20_mT")]
    pub b20_mt: f64,
    /// Standard uncertainty of that mean from the readings and the referral to 20 °C, mT.
    #[serde(rename = "b20_u_mT")]
    pub b20_u_mt: f64,
    /// Placing a magnet again moves its reading by this much (relative standard deviation), %.
    pub repeatability_pct: f64,
    /// Placements read.
    pub placements: usize,
    /// The calibration's gap when it was read, mm (only the shapes' ratio depends on it).
    pub gap_mm: f64,
    /// The calibration's gap uncertainty, mm (matters only for a part of another shape).
    pub gap_u_mm: f64,
    /// When it was read.
    pub made: Stamp,
}

/// A reference file could not be read.
#[derive(Debug, thiserror::Error)]
#[error("fixture reference {path}: {reason}")]
pub struct ReferenceError {
    /// The file.
    pub path: String,
    /// Why.
    pub reason: String,
}

impl FixtureReference {
    /// Read a reference file.
    pub fn load(path: &Path) -> Result<FixtureReference, ReferenceError> {
        let err = |reason: String| ReferenceError {
            path: path.display().to_string(),
            reason,
        };
        let text = std::fs::read_to_string(path).map_err(|e| err(e.to_string()))?;
        let r: FixtureReference = toml::from_str(&text).map_err(|e| err(e.to_string()))?;
        r.check().map_err(err)?;
        Ok(r)
    }

    /// Every value a finite number in its range, every size of the shape a length: what a
    /// verdict may be computed from. Names the first that is not.
    pub fn check(&self) -> Result<(), String> {
        let positive = [
            ("br_T", self.br_t),
            ("b20_mT", self.b20_mt),
            ("gap_mm", self.gap_mm),
        ];
        let non_negative = [
            ("br_u_T", self.br_u_t),
            ("b20_u_mT", self.b20_u_mt),
            ("repeatability_pct", self.repeatability_pct),
            ("gap_u_mm", self.gap_u_mm),
        ];
        for (key, v) in positive {
            if !(v.is_finite() && v > 0.0) {
                return Err(format!("{key} = {v} is not a finite positive number"));
            }
        }
        for (key, v) in non_negative {
            if !(v.is_finite() && v >= 0.0) {
                return Err(format!("{key} = {v} is not a finite number ≥ 0"));
            }
        }
        if let Some((key, v)) = self.shape.bad_dimension() {
            return Err(format!(
                "shape {key} = {v} is not a length (a finite number of millimetres above 0)"
            ));
        }
        if self.placements == 0 {
            return Err("placements = 0: a reference is read at least once".into());
        }
        Ok(())
    }

    /// Measured field over the field the reference's Br gives at the nominal gap: the
    /// fixture's factor (gap and probe sensitivity together).
    pub fn factor(&self) -> f64 {
        self.b20_mt / (self.br_t * 1000.0 * self.shape.bz_per_br(self.gap_mm))
    }

    /// Br of a part of `shape` whose field at 20 °C is `b20_mt` (standard uncertainty
    /// `b20_u_mt`), referred to this reference; with its expanded uncertainty (k = 2).
    pub fn br_of(
        &self,
        shape: &Shape,
        b20_mt: f64,
        b20_u_mt: f64,
    ) -> (BrEstimate, Vec<(String, f64)>) {
        let br = b20_mt / (self.factor() * 1000.0 * shape.bz_per_br(self.gap_mm));
        // relative standard uncertainties, %
        let mut budget = vec![
            (
                "reference magnet's certified Br".to_string(),
                self.br_u_t / self.br_t * 100.0,
            ),
            (
                "the reference's reading in this fixture".to_string(),
                self.b20_u_mt / self.b20_mt * 100.0,
            ),
            // the reference's mean over its placements, and the part's one placement: each
            // moves its reading by the fixture's repeatability
            (
                format!(
                    "placing the reference ({} placement{})",
                    self.placements,
                    if self.placements == 1 {
                        ", typical repeatability"
                    } else {
                        "s"
                    }
                ),
                self.repeatability_pct / (self.placements.max(1) as f64).sqrt(),
            ),
            (
                "placing the part (one placement)".to_string(),
                self.repeatability_pct,
            ),
            (
                "the part's field at 20 °C (fit)".to_string(),
                b20_u_mt / b20_mt * 100.0,
            ),
        ];
        // a gap error cancels only between magnets whose field falls off alike
        let shape_term =
            (dln_bz_per_mm(shape, self.gap_mm) - dln_bz_per_mm(&self.shape, self.gap_mm)).abs()
                * self.gap_u_mm
                * 100.0;
        if shape_term > 1e-6 {
            budget.push((
                "gap, for a part of another shape than the reference".to_string(),
                shape_term,
            ));
        }
        let u_rel = budget.iter().map(|b| b.1 * b.1).sum::<f64>().sqrt() / 100.0;
        let d = dln_bz_per_mm(shape, self.gap_mm);
        (
            BrEstimate {
                br_t: br,
                br_u95_t: 2.0 * br * u_rel,
                pct_per_0_1_mm: -d * 0.1 * 100.0,
            },
            budget,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn reference(b20: f64) -> FixtureReference {
        FixtureReference {
            magnet: "ref".into(),
            shape: Shape::Cylinder {
                diameter_mm: 10.0,
                length_mm: 5.0,
            },
            br_t: 1.3,
            br_u_t: 0.0026,
            source: "test".into(),
            b20_mt: b20,
            b20_u_mt: 0.02,
            repeatability_pct: DEFAULT_REPEATABILITY_PCT,
            placements: 1,
            gap_mm: 3.0,
            gap_u_mm: 0.05,
            made: Stamp(0),
        }
    }

    #[test]
    fn a_part_like_the_reference_gets_its_br_free_of_the_gap() {
        let shape = reference(1.0).shape;
        // the true gap is 3.1 mm, not the nominal 3.0: both magnets read low alike
        let at = |br: f64| br * 1000.0 * shape.bz_per_br(3.1);
        let r = reference(at(1.3));
        let (est, budget) = r.br_of(&shape, at(1.25), 0.02);
        assert!((est.br_t - 1.25).abs() < 1e-9, "{}", est.br_t);
        // reference 0.2 %, repeatability 0.15 %: about ±0.65 % at k = 2, not the gap's ±3 %
        assert!(est.br_u95_t / est.br_t < 0.007, "{}", est.br_u95_t);
        assert!(budget.iter().all(|b| !b.0.contains("another shape")));
    }

    #[test]
    fn a_reference_file_with_a_size_or_value_no_verdict_can_use_is_refused_naming_it() {
        let good = reference(219.0);
        assert_eq!(good.check(), Ok(()));
        let disc = |d: f64| FixtureReference {
            shape: Shape::Cylinder {
                diameter_mm: d,
                length_mm: 5.0,
            },
            ..good.clone()
        };
        for d in [f64::INFINITY, 0.0, -10.0, f64::NAN] {
            let e = disc(d).check().unwrap_err();
            assert!(e.contains("diameter_mm"), "{d}: {e}");
        }
        let gap_u = FixtureReference {
            gap_u_mm: f64::NAN,
            ..good.clone()
        };
        assert!(gap_u.check().unwrap_err().contains("gap_u_mm"));
        let none = FixtureReference {
            placements: 0,
            ..good.clone()
        };
        assert!(none.check().unwrap_err().contains("placements"));
        // through the file, as `--reference` reads it
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("r.toml");
        let text = toml::to_string(&good)
            .unwrap()
            .replace("diameter_mm = 10.0", "diameter_mm = inf");
        std::fs::write(&path, text).unwrap();
        let e = FixtureReference::load(&path).unwrap_err().to_string();
        assert!(
            e.contains("diameter_mm = inf") && e.contains("r.toml"),
            "{e}"
        );
    }
}
