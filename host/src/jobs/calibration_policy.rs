//! Which calibration a recording converts with: the user's file when given; otherwise the
//! virtual rig's own constants, said plainly — the one place that default is chosen.

use std::path::Path;

use crate::calibration::{Calibration, CalibrationError};
use remanent_rig_model::RigParams;

/// The calibration chosen, and a note for the user when it is not their own.
pub struct Chosen {
    /// The constants.
    pub calibration: Calibration,
    /// Said to the user when the default was taken.
    pub note: Option<&'static str>,
}

/// Choose the calibration for a bench or virtual rig.
pub fn choose(path: Option<&Path>) -> Result<Chosen, CalibrationError> {
    Ok(match path {
        Some(p) => Chosen {
            calibration: Calibration::load(p)?,
            note: None,
        },
        None => Chosen {
            calibration: Calibration::virtual_rig(&RigParams::REFERENCE),
            note: Some("no --calibration given; converting with the virtual rig's constants"),
        },
    })
}
