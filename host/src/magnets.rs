//! Which magnet is in the fixture: an entry of the built-in demo catalogue, or a TOML file.

use std::path::Path;

use remanent_physics::Shape;
use remanent_rig_model::catalogue;
use remanent_rig_model::Magnet;
use serde::{Deserialize, Serialize};

use crate::formats;

/// What the user states about the magnet under test.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MagnetInfo {
    /// The user's id for this piece.
    pub id: String,
    /// The grade it is sold as (looked up in the spec table).
    pub grade: String,
    /// Free text.
    #[serde(default)]
    pub description: String,
    /// Rated maximum working temperature, °C.
    #[serde(rename = "max_working_C")]
    pub max_working_c: f64,
    /// Geometry.
    pub shape: Shape,
    /// For a reference part: its certified (or lab-measured) Br.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reference: Option<ReferenceBr>,
}

/// A reference part's known Br, from its certificate or a lab's measurement.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReferenceBr {
    /// Br at 20 °C, T.
    #[serde(rename = "br_T")]
    pub br_t: f64,
    /// Its standard uncertainty (k = 1), T.
    #[serde(rename = "br_u_T")]
    pub br_u_t: f64,
    /// Who measured it (certificate number, lab).
    pub source: String,
}

/// A magnet file: the facts, plus (for the virtual rig) a model of how it behaves.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MagnetFile {
    /// The stated facts.
    #[serde(flatten)]
    pub info: MagnetInfo,
    /// How the virtual rig should make it behave.
    pub model: Option<Magnet>,
}

/// A magnet could not be found.
#[derive(Debug, thiserror::Error)]
pub enum MagnetError {
    /// Neither a catalogue id nor a readable file.
    #[error("no demo magnet or file called `{0}`; `remanent magnets` lists the demo parts")]
    Unknown(String),
    /// The file is malformed.
    #[error("magnet file {path} is not valid: {reason}")]
    Parse {
        /// The file.
        path: String,
        /// Why.
        reason: String,
    },
}

/// The demo reference part's certificate (invented, like the part): its Br to 0.2 %.
fn demo_certificate(id: &str, br_t: f64) -> Option<ReferenceBr> {
    id.starts_with("RM-REF-").then(|| ReferenceBr {
        br_t,
        br_u_t: 0.002 * br_t,
        source: "demo certificate RC-2026-0117 (invented)".into(),
    })
}

/// Resolve a catalogue id or a TOML file.
pub fn resolve(id_or_path: &str) -> Result<MagnetFile, MagnetError> {
    if let Some(p) = catalogue::find(id_or_path) {
        return Ok(MagnetFile {
            info: MagnetInfo {
                id: p.id.into(),
                grade: p.grade.into(),
                description: p.description.into(),
                max_working_c: p.magnet.max_working_c,
                shape: p.magnet.shape,
                reference: demo_certificate(p.id, p.magnet.br_20_t),
            },
            model: Some(p.magnet),
        });
    }
    let path = Path::new(id_or_path);
    if !path.is_file() {
        return Err(MagnetError::Unknown(id_or_path.into()));
    }
    let err = |reason: String| MagnetError::Parse {
        path: path.display().to_string(),
        reason,
    };
    let text = std::fs::read_to_string(path).map_err(|e| err(e.to_string()))?;
    formats::check(formats::Kind::Magnet, &text).map_err(err)?;
    toml::from_str(&text).map_err(|e| err(formats::bounded(&e.to_string())))
}
