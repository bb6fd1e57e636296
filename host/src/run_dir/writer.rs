//! Writing a run as it arrives: raw bytes, sample rows, events and the metadata, flushed at
//! least every [`FLUSH_INTERVAL`].

use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use super::meta::{
    io_err, utc_now, RunDirError, RunMeta, EVENTS_FILE, META_FILE, RAW_FILE, SAMPLES_FILE,
    SAMPLES_HEADER,
};
use super::row::SampleRow;
use crate::conversion::{thermo_fault_name, Converted};
use crate::link::PlacedSample;

/// Writes a run as it arrives.
pub struct RunWriter {
    dir: PathBuf,
    raw: BufWriter<File>,
    samples: csv::Writer<File>,
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
        let mut samples = csv::WriterBuilder::new().has_headers(false).from_writer(
            open(SAMPLES_FILE)?
                .into_inner()
                .map_err(|e| RunDirError::Io {
                    path: dir.join(SAMPLES_FILE).display().to_string(),
                    source: e.into_error(),
                })?,
        );
        samples
            .write_record(SAMPLES_HEADER.split(','))
            .map_err(|e| csv_err(dir, e))?;
        let mut events = open(EVENTS_FILE)?;
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
        let tc_fault = s.thermo.fault().map_or("", thermo_fault_name);
        let row = SampleRow {
            seq: p.seq,
            device_time_s: p.device_time_s,
            hall_code: s.hall_code,
            probe_code: s.probe_code,
            thermo_word: s.thermo,
            heater_duty_pct: f64::from(s.duty) / 255.0 * 100.0,
            heater_on: u8::from(s.status.heater_enabled()),
            fault_latched: u8::from(s.status.fault_latched()),
            tc_fault: tc_fault.into(),
            temp_c: c.temp_c,
            cold_junction_c: c.cold_junction_c,
            probe_temp_c: c.probe_c,
            flux_mt: c.flux_mt,
            setpoint_c,
        };
        self.samples
            .serialize(row)
            .map_err(|e| csv_err(&self.dir, e))?;
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

/// A CSV writing error as a run-directory error.
fn csv_err(dir: &Path, e: csv::Error) -> RunDirError {
    RunDirError::Io {
        path: dir.join(SAMPLES_FILE).display().to_string(),
        source: match e.into_kind() {
            csv::ErrorKind::Io(io) => io,
            other => io::Error::other(format!("{other:?}")),
        },
    }
}
