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
use crate::event::file::{to_row, EventRow, HEADER as EVENTS_HEADER};
use crate::event::RunEvent;
use crate::link::PlacedSample;

/// Writes a run as it arrives.
pub struct RunWriter {
    dir: PathBuf,
    raw: BufWriter<File>,
    samples: csv::Writer<StopAfterError<File>>,
    events: csv::Writer<File>,
    /// Events not yet written, kept in device-time order.
    pending_events: Vec<(f64, EventRow)>,
    /// Device time of the latest sample written, s.
    latest_s: f64,
    /// Space set aside so the end of the record can still be written on a full disk.
    reserve: Option<PathBuf>,
    /// The metadata, rewritten on every flush.
    pub meta: RunMeta,
    last_flush: Instant,
}

/// How often data are forced to disk.
pub const FLUSH_INTERVAL: Duration = Duration::from_millis(500);
/// Events are written once the samples are this far past them, so `events.csv` is in time
/// order (samples are placed up to a second after they arrive), s.
pub const EVENT_SETTLE_S: f64 = 3.0;
/// Space set aside for the end of a record, bytes.
pub const RESERVE_BYTES: usize = 64 * 1024;
/// The reserve's file name.
const RESERVE_FILE: &str = ".space-reserve";

impl RunWriter {
    /// Create `dir` (its parent must exist or is created; `dir` itself must not exist). A run
    /// that cannot be set up (a disk already full) leaves no directory behind: the name stays
    /// free for the next try.
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
        Self::set_up(dir, meta).inspect_err(|_| {
            let _ = fs::remove_dir_all(dir);
        })
    }

    /// The files of a new run in the empty directory `dir`, and its metadata written.
    fn set_up(dir: &Path, meta: RunMeta) -> Result<RunWriter, RunDirError> {
        let open = |name: &str| {
            let p = dir.join(name);
            File::create_new(&p).map_err(|source| RunDirError::Io {
                path: p.display().to_string(),
                source,
            })
        };
        let raw = BufWriter::new(open(RAW_FILE)?);
        let mut samples = csv::WriterBuilder::new()
            .has_headers(false)
            .from_writer(StopAfterError::new(open(SAMPLES_FILE)?));
        samples
            .write_record(SAMPLES_HEADER.split(','))
            .map_err(|e| csv_err(dir, e))?;
        let mut events = csv::WriterBuilder::new()
            .has_headers(false)
            .from_writer(open(EVENTS_FILE)?);
        events
            .write_record(EVENTS_HEADER)
            .map_err(|e| csv_err(dir, e))?;
        let reserve = dir.join(RESERVE_FILE);
        fs::write(&reserve, vec![0u8; RESERVE_BYTES]).map_err(io_err(&reserve))?;
        let w = RunWriter {
            dir: dir.to_path_buf(),
            raw,
            samples,
            events,
            pending_events: Vec::new(),
            latest_s: 0.0,
            reserve: Some(reserve),
            meta,
            last_flush: Instant::now(),
        };
        w.write_meta()?;
        Ok(w)
    }

    /// Give back the space set aside (before the last writes of a record).
    fn release_reserve(&mut self) {
        if let Some(r) = self.reserve.take() {
            let _ = fs::remove_file(r);
        }
    }

    /// A record that never started: remove its directory, so the name is free again.
    pub fn discard(mut self) {
        self.release_reserve();
        let _ = fs::remove_dir_all(&self.dir);
    }

    /// Close a record whose writing failed (a full disk): the space set aside is given back,
    /// what can still be written is, and `run.toml` says why it ended.
    pub fn finish_after_failure(mut self, reason: &str) -> PathBuf {
        self.release_reserve();
        self.meta.end_reason = Some(reason.into());
        self.meta.finished_utc = Some(utc_now());
        let _ = self.write_events(f64::INFINITY);
        let _ = self.raw.flush();
        // not the samples: a failed CSV write would be retried from its start, tearing a row
        // in the middle; what reached the disk ends in at most one torn row
        let _ = self.events.flush();
        let _ = self.write_meta();
        self.dir
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
            heater_duty_pct: remanent_physics::wire::duty_pct(s.duty),
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
        self.latest_s = self.latest_s.max(p.device_time_s);
        self.meta.counts.samples += 1;
        Ok(())
    }

    /// An event, at its device time (or, without one, the latest sample's); written in time
    /// order once the samples have passed it.
    pub fn event(&mut self, device_time_s: Option<f64>, e: &RunEvent) -> Result<(), RunDirError> {
        let t = device_time_s.unwrap_or(self.latest_s);
        let row = to_row(t, e);
        // events come nearly in order: append, or insert where an earlier one belongs
        if self.pending_events.last().is_none_or(|(u, _)| *u <= t) {
            self.pending_events.push((t, row));
        } else {
            let at = self.pending_events.partition_point(|(u, _)| *u <= t);
            self.pending_events.insert(at, (t, row));
        }
        Ok(())
    }

    /// Write the pending events up to `until_s`, in order.
    fn write_events(&mut self, until_s: f64) -> Result<(), RunDirError> {
        let n = self.pending_events.partition_point(|(u, _)| *u <= until_s);
        for (_, row) in self.pending_events.drain(..n) {
            self.events
                .serialize(row)
                .map_err(|e| csv_err(&self.dir, e))?;
        }
        Ok(())
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
        self.write_events(self.latest_s - EVENT_SETTLE_S)?;
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
        let written = fs::write(&tmp, text)
            .map_err(io_err(&tmp))
            .and_then(|()| fs::rename(&tmp, self.dir.join(META_FILE)).map_err(io_err(&self.dir)));
        if written.is_err() {
            let _ = fs::remove_file(&tmp);
        }
        written
    }

    /// Close the record with the reason it ended.
    pub fn finish(mut self, reason: &str) -> Result<PathBuf, RunDirError> {
        self.release_reserve();
        self.meta.end_reason = Some(reason.into());
        self.meta.finished_utc = Some(utc_now());
        self.write_events(f64::INFINITY)?;
        self.flush()?;
        Ok(self.dir)
    }
}

/// A writer that refuses every write after one has failed. The CSV writer retries a failed
/// buffer from its start (on its next flush, or when dropped), which on a disk that has
/// regained a little space would tear a row in the middle of the file.
pub struct StopAfterError<W> {
    inner: W,
    failed: bool,
}

impl<W> StopAfterError<W> {
    fn new(inner: W) -> Self {
        StopAfterError {
            inner,
            failed: false,
        }
    }
}

impl<W: Write> Write for StopAfterError<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if self.failed {
            return Err(io::Error::other("an earlier write failed"));
        }
        self.inner.write(buf).inspect_err(|_| self.failed = true)
    }
    fn flush(&mut self) -> io::Result<()> {
        if self.failed {
            return Err(io::Error::other("an earlier write failed"));
        }
        self.inner.flush()
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
