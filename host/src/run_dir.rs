//! The run directory of one heat cycle: the raw byte stream exactly as received, the decoded
//! samples as CSV (raw codes and converted values, units in the headers), events, and the
//! metadata. Written as data arrive and flushed at least every second; never overwritten.

use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant, SystemTime};

use remanent_protocol::{DeviceHello, SafetyLimits};
use serde::{Deserialize, Serialize};

use crate::calibration::Calibration;
use crate::conversion::Converted;
use crate::link::PlacedSample;
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
            ceiling_c: f64::from(ceiling_tenth_c) / 10.0,
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
    /// Counts.
    pub counts: Counts,
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
}

fn io_err(path: &Path) -> impl FnOnce(io::Error) -> RunDirError + '_ {
    move |source| RunDirError::Io {
        path: path.display().to_string(),
        source,
    }
}

/// Writes a run as it arrives.
pub struct RunWriter {
    dir: PathBuf,
    raw: BufWriter<File>,
    samples: BufWriter<File>,
    events: BufWriter<File>,
    /// The metadata, rewritten on every flush.
    pub meta: RunMeta,
    last_flush: Instant,
}

/// How often data are forced to disk.
pub const FLUSH_INTERVAL: Duration = Duration::from_millis(500);

impl RunWriter {
    /// Create `dir` (its parent must exist or is created; `dir` itself must not exist).
    pub fn create(dir: &Path, meta: RunMeta) -> Result<RunWriter, RunDirError> {
        if dir.exists() {
            return Err(RunDirError::Exists(dir.display().to_string()));
        }
        if let Some(parent) = dir.parent().filter(|p| !p.as_os_str().is_empty()) {
            fs::create_dir_all(parent).map_err(io_err(parent))?;
        }
        fs::create_dir(dir).map_err(|e| {
            if e.kind() == io::ErrorKind::AlreadyExists {
                RunDirError::Exists(dir.display().to_string())
            } else {
                RunDirError::Io {
                    path: dir.display().to_string(),
                    source: e,
                }
            }
        })?;
        let open = |name: &str| {
            let p = dir.join(name);
            File::create_new(&p)
                .map(BufWriter::new)
                .map_err(|source| RunDirError::Io {
                    path: p.display().to_string(),
                    source,
                })
        };
        let raw = open(RAW_FILE)?;
        let mut samples = open(SAMPLES_FILE)?;
        let mut events = open(EVENTS_FILE)?;
        writeln!(samples, "{SAMPLES_HEADER}").map_err(io_err(dir))?;
        writeln!(events, "device_time_s,kind,detail").map_err(io_err(dir))?;
        let w = RunWriter {
            dir: dir.to_path_buf(),
            raw,
            samples,
            events,
            meta,
            last_flush: Instant::now(),
        };
        w.write_meta()?;
        Ok(w)
    }

    /// The directory.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Bytes exactly as received.
    pub fn raw(&mut self, bytes: &[u8]) -> Result<(), RunDirError> {
        self.meta.counts.bytes += bytes.len() as u64;
        self.raw.write_all(bytes).map_err(io_err(&self.dir))
    }

    /// One placed sample, raw and converted, with the setpoint then in force (from the latest
    /// beacon; `None` while the heater is off).
    pub fn sample(
        &mut self,
        p: &PlacedSample,
        c: &Converted,
        setpoint_c: Option<f64>,
    ) -> Result<(), RunDirError> {
        let s = &p.sample;
        let (temp_c, probe_c, flux_mt) = (c.temp_c, c.probe_c, c.flux_mt);
        let fault = match s.thermo.fault() {
            None => "",
            Some(remanent_protocol::thermo_word::ThermoFault::Open) => "open",
            Some(remanent_protocol::thermo_word::ThermoFault::ShortToGnd) => "short_gnd",
            Some(remanent_protocol::thermo_word::ThermoFault::ShortToVcc) => "short_vcc",
        };
        let opt =
            |v: Option<f64>, prec: usize| v.map(|x| format!("{x:.prec$}")).unwrap_or_default();
        writeln!(
            self.samples,
            "{},{:.3},{},{},{:08x},{:.1},{},{},{},{},{:.4},{},{},{}",
            p.seq,
            p.device_time_s,
            s.hall_code,
            s.probe_code,
            s.thermo.0,
            f64::from(s.duty) / 255.0 * 100.0,
            s.status.heater_enabled() as u8,
            s.status.fault_latched() as u8,
            fault,
            opt(temp_c, 3),
            c.cold_junction_c,
            opt(probe_c, 3),
            opt(flux_mt, 4),
            opt(setpoint_c, 1),
        )
        .map_err(io_err(&self.dir))?;
        self.meta.counts.samples += 1;
        Ok(())
    }

    /// An event line.
    pub fn event(
        &mut self,
        device_time_s: Option<f64>,
        kind: &str,
        detail: &str,
    ) -> Result<(), RunDirError> {
        let t = device_time_s.map(|t| format!("{t:.3}")).unwrap_or_default();
        let detail = detail.replace(['"', '\n'], " ");
        writeln!(self.events, "{t},{kind},\"{detail}\"").map_err(io_err(&self.dir))
    }

    /// Flush if the interval has passed.
    pub fn maybe_flush(&mut self) -> Result<(), RunDirError> {
        if self.last_flush.elapsed() >= FLUSH_INTERVAL {
            self.flush()?;
        }
        Ok(())
    }

    /// Everything to disk now.
    pub fn flush(&mut self) -> Result<(), RunDirError> {
        self.last_flush = Instant::now();
        self.raw.flush().map_err(io_err(&self.dir))?;
        self.samples.flush().map_err(io_err(&self.dir))?;
        self.events.flush().map_err(io_err(&self.dir))?;
        self.write_meta()
    }

    fn write_meta(&self) -> Result<(), RunDirError> {
        let text = toml::to_string_pretty(&self.meta).map_err(|e| RunDirError::Meta {
            path: META_FILE.into(),
            reason: e.to_string(),
        })?;
        let tmp = self.dir.join(".run.toml.tmp");
        fs::write(&tmp, text).map_err(io_err(&tmp))?;
        fs::rename(&tmp, self.dir.join(META_FILE)).map_err(io_err(&self.dir))
    }

    /// Close the record with the reason it ended.
    pub fn finish(mut self, reason: &str) -> Result<PathBuf, RunDirError> {
        self.meta.end_reason = Some(reason.into());
        self.meta.finished_utc = Some(utc_now());
        self.flush()?;
        Ok(self.dir)
    }
}

/// Read a run's metadata.
pub fn read_meta(dir: &Path) -> Result<RunMeta, RunDirError> {
    let path = dir.join(META_FILE);
    let text = fs::read_to_string(&path).map_err(io_err(&path))?;
    toml::from_str(&text).map_err(|e| RunDirError::Meta {
        path: path.display().to_string(),
        reason: e.to_string(),
    })
}

/// Now as RFC 3339 UTC, to the second.
pub fn utc_now() -> String {
    let secs = SystemTime::now()
        .duration_since(SystemTime::UNIX_EPOCH)
        .map(|d| d.as_secs())
        .unwrap_or(0);
    format_utc(secs)
}

/// Seconds since 1970 as RFC 3339 UTC (civil-from-days, Howard Hinnant's algorithm).
pub fn format_utc(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        rem % 3600 / 60,
        rem % 60
    )
}

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
