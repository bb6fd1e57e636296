//! What surrounds the probe and the thermocouple during a calibration step: the fixture as
//! usual, a closed zero-field can, the centre of a coil, the probe warmed alone in a fixed
//! field, or the thermocouple in a bath (ice, boiling water). The rig reads its sensors through
//! the scene, so each calibration step can be played against known truth.

use serde::{Deserialize, Serialize};

/// Where the sensors are.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub enum Scene {
    /// In the fixture, with its magnet (or none).
    #[default]
    Fixture,
    /// The probe in a closed mu-metal can: no field at all.
    ZeroField,
    /// The probe at the centre of a coil whose true field is this, mT.
    Coil {
        /// The true field, mT.
        field_mt: f64,
    },
    /// The probe warmed alone (a resistor on its standoff) in a fixed field, climbing toward
    /// `top_c` with a time constant of a few minutes.
    ProbeWarming {
        /// The true field, mT (0 in the zero-field can).
        field_mt: f64,
        /// Where the probe's temperature goes, °C.
        top_c: f64,
    },
    /// The thermocouple's junction in a bath at this temperature, °C.
    Bath {
        /// The bath's true temperature, °C.
        temp_c: f64,
    },
}

/// The probe warms toward its target with this time constant, s.
pub const PROBE_WARMING_TAU_S: f64 = 240.0;

impl Scene {
    /// The field at the probe in this scene (`fixture_mt`: the fixture's own), mT.
    pub fn field_mt(self, fixture_mt: f64) -> f64 {
        match self {
            Scene::Fixture | Scene::Bath { .. } => fixture_mt,
            Scene::ZeroField => 0.0,
            Scene::Coil { field_mt } | Scene::ProbeWarming { field_mt, .. } => field_mt,
        }
    }

    /// The probe's temperature after `h` seconds from `probe_c`, or `None` to leave it to the
    /// fixture's thermal network.
    pub fn probe_after(self, probe_c: f64, h: f64) -> Option<f64> {
        match self {
            Scene::ProbeWarming { top_c, .. } => {
                Some(top_c + (probe_c - top_c) * libm::exp(-h / PROBE_WARMING_TAU_S))
            }
            _ => None,
        }
    }

    /// The thermocouple junction's temperature in this scene, or `None` for the fixture's.
    pub fn junction_c(self) -> Option<f64> {
        match self {
            Scene::Bath { temp_c } => Some(temp_c),
            _ => None,
        }
    }
}
