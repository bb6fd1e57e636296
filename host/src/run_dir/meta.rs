//! A run directory's layout and metadata: file names, the samples header, `run.toml`
//! (magnet, device, profile, calibration, counts, end), errors, and reading it back.

use std::fs;
use std::io;
use std::path::Path;
use std::time::SystemTime;

use remanent_protocol::{DeviceHello, SafetyLimits};
use serde::{Deserialize, Serialize};

use crate::calibration::Calibration;
use crate::formats::Kind;
use crate::magnets::MagnetInfo;
use crate::profiles::ProfileSpec;

/// File names inside a run directory.
pub const RAW_FILE: &str = "raw.bin";
/// Decoded samples.
pub const SAMPLES_FILE: &str = "samples.csv";
/// Events: faults, state changes, gaps, rejected frames.
pub const EVENTS_FILE: &str = "events.csv";
/// Metadata.
pub const META_FILE: &str = "run.toml";
/// The fixture reference a run was judged with, kept beside it: every later analysis of the
/// run (a report, an import into the history) uses it unless told another.
pub const REFERENCE_FILE: &str = "fixture-reference.toml";

/// The CSV header of the samples file.
pub const SAMPLES_HEADER: &str = "seq,device_time_s,hall_code,probe_code,thermo_word,heater_duty_pct,heater_on,fault_latched,tc_fault,temp_C,cold_junction_C,probe_temp_C,flux_mT,setpoint_C";

/// Counts kept while recording.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Counts {
    /// Samples written.
    pub samples: u64,
    /// Gaps in the sequence numbers.
    pub gaps: u64,
    /// Samples missing in those gaps.
    pub gap_samples: u64,
    /// Samples the device reported dropping itself.
    pub device_dropped: u32,
    /// Frames rejected by the decoder, by reason.
    pub frames_bad_crc: u64,
    /// Frames with invalid COBS.
    pub frames_bad_cobs: u64,
    /// Other rejected frames (overlong, too short, unknown, malformed).
    pub frames_other: u64,
    /// Bytes received.
    pub bytes: u64,
    /// Faults the device reported.
    pub faults: u64,
    /// Samples taken before the record's start (a previous session's), left out.
    #[serde(default)]
    pub stale_samples: u64,
    /// Samples no beacon settled before the record ended, left out.
    #[serde(default)]
    pub unsettled_samples: u64,
}

/// Device facts from its hello.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DeviceInfo {
    /// Board name.
    pub board: String,
    /// Firmware version.
    pub firmware: String,
    /// Protocol version.
    pub protocol: u16,
    /// Schema fingerprint, hex.
    pub schema: String,
    /// Sampling period, ms.
    pub period_ms: u16,
    /// Oversampling.
    pub oversample: u8,
    /// Enforced limits.
    pub ceiling_c: f64,
    /// Heartbeat timeout, ms.
    pub heartbeat_timeout_ms: u16,
    /// Duty cap, %.
    pub duty_cap_pct: u8,
}

impl DeviceInfo {
    /// From the device's hello.
    pub fn from_hello(h: &DeviceHello) -> Self {
        let SafetyLimits {
            ceiling_tenth_c,
            heartbeat_timeout_ms,
            duty_cap_pct,
            ..
        } = h.limits;
        DeviceInfo {
            board: h.board.as_str().into(),
            firmware: format!("{}.{}.{}", h.firmware[0], h.firmware[1], h.firmware[2]),
            protocol: h.version.protocol,
            schema: format!("{:08x}", h.version.schema),
            period_ms: h.sensors.period_ms,
            oversample: h.sensors.oversample,
            ceiling_c: remanent_physics::wire::c_from_tenths(ceiling_tenth_c),
            heartbeat_timeout_ms,
            duty_cap_pct,
        }
    }
}

/// Everything about a run except its samples.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunMeta {
    /// Software that wrote it.
    pub software: String,
    /// Wall-clock start, UTC (RFC 3339).
    pub started_utc: String,
    /// Wall-clock end, UTC, once finished.
    pub finished_utc: Option<String>,
    /// Why the record ended.
    pub end_reason: Option<String>,
    /// The port it was recorded from.
    pub port: String,
    /// The magnet.
    pub magnet: MagnetInfo,
    /// The device.
    pub device: Option<DeviceInfo>,
    /// The profile.
    pub profile: ProfileSpec,
    /// The calibration used for the converted columns.
    pub calibration: Calibration,
    /// On what the conversion rests (absent in runs recorded before it was kept).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub calibration_basis: Option<crate::calibration::policy::Basis>,
    /// Counts.
    pub counts: Counts,
    /// Lot, purchase order, supplier and operator, as given when recording.
    #[serde(
        default,
        skip_serializing_if = "crate::inspection::Inspection::is_empty"
    )]
    pub inspection: crate::inspection::Inspection,
}

/// Run directory errors.
#[derive(Debug, thiserror::Error)]
pub enum RunDirError {
    /// The directory is already there.
    #[error("{0} already exists: choose a new --out, or remove it yourself (a record is never overwritten)")]
    Exists(String),
    /// File system error.
    #[error("{path}: {source}")]
    Io {
        /// Where.
        path: String,
        /// Why.
        source: io::Error,
    },
    /// Metadata unreadable.
    #[error("{path} is not a valid run metadata file: {reason}")]
    Meta {
        /// Where.
        path: String,
        /// Why.
        reason: String,
    },
    /// A raw stream this build cannot decode, or that held no sample.
    #[error("{path}: {reason}")]
    Replay {
        /// The run replayed.
        path: String,
        /// Why nothing can be rebuilt from it.
        reason: String,
    },
}

pub(crate) fn io_err(path: &Path) -> impl FnOnce(io::Error) -> RunDirError + '_ {
    move |source| RunDirError::Io {
        path: path.display().to_string(),
        source,
    }
}

/// Read a run's metadata.
pub fn read_meta(dir: &Path) -> Result<RunMeta, RunDirError> {
    let path = dir.join(META_FILE);
    let text = fs::read_to_string(&path).map_err(io_err(&path))?;
    let meta_err = |reason: String| RunDirError::Meta {
        path: path.display().to_string(),
        reason,
    };
    for (kind, table) in [(Kind::Calibration, "calibration"), (Kind::Magnet, "magnet")] {
        crate::formats::check_numbers(kind, &text, table).map_err(meta_err)?;
    }
    toml::from_str(&text).map_err(|e| meta_err(e.to_string()))
}

/// Now as RFC 3339 UTC, to the second.
pub fn utc_now() -> String {
    let secs = SystemTime::now()
        .duration_since(SystemTime::UNIX_EPOCH)
        .map(|d| d.as_secs())
        .unwrap_or(0);
    format_utc(secs)
}

pub use crate::timestamps::format_utc;

#[cfg(test)]
mod tests {
    #[test]
    fn formats_known_instants() {
        // 2000-03-01T00:00:00Z is 951868800 s after the Unix epoch (POSIX time, date(1)).
        assert_eq!(super::format_utc(951_868_800), "2000-03-01T00:00:00Z");
        assert_eq!(super::format_utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(super::format_utc(1_798_761_599), "2026-12-31T23:59:59Z");
    }
}
