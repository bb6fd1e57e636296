//! Recording one heat cycle: handshake, send the profile, keep the heartbeat, write every byte
//! and every sample as it arrives, report progress, and end cleanly on completion, a fault,
//! a user's stop or a lost link, keeping everything received.

mod recorder;

use std::io::{Read, Write};
use std::path::PathBuf;
use std::sync::atomic::AtomicBool;
use std::sync::Arc;
use std::time::Duration;

use remanent_protocol::{Fault, RunState};

use crate::calibration::Calibration;
use crate::frame_log;
use crate::link::acquisition::Acquisition;
use crate::link::words::{describe_boot, describe_fault, describe_heater};
use crate::link::LinkError;
use crate::magnets::MagnetInfo;
use crate::profiles::ProfileSpec;
use crate::run_dir::{utc_now, Counts, DeviceInfo, RunDirError, RunMeta, RunWriter};
use recorder::Recorder;

/// What to record.
#[derive(Debug, Clone)]
pub struct RecordOptions {
    /// Port name, for the metadata.
    pub port_label: String,
    /// The magnet.
    pub magnet: MagnetInfo,
    /// The profile.
    pub profile: ProfileSpec,
    /// Calibration for the converted columns.
    pub calibration: Calibration,
    /// New run directory.
    pub out: PathBuf,
    /// The link counts as lost after this long without a byte.
    pub silence_timeout: Duration,
    /// Device time recorded with the heater off before the profile starts, s: a settled
    /// room-temperature reference with the magnet at rest.
    pub preroll_s: f64,
    /// Set to stop (Ctrl-C).
    pub stop: Arc<AtomicBool>,
}

/// Live figures for a progress display.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LiveStatus {
    /// Device time since the profile started, s.
    pub elapsed_s: f64,
    /// Estimated time left, s.
    pub remaining_s: f64,
    /// Thermocouple, °C.
    pub temp_c: Option<f64>,
    /// Flux density, mT.
    pub flux_mt: Option<f64>,
    /// Heater duty, %.
    pub duty_pct: f64,
    /// Rate of temperature change over the last 30 s, °C/min.
    pub ramp_c_per_min: Option<f64>,
    /// Device state.
    pub state: Option<RunState>,
    /// Latest fault.
    pub fault: Option<Fault>,
    /// Samples so far.
    pub samples: u64,
    /// Samples missing.
    pub gap_samples: u64,
    /// Frames rejected.
    pub bad_frames: u64,
}

/// Receives progress while recording.
pub trait Progress {
    /// The figures changed.
    fn update(&mut self, status: &LiveStatus);
    /// Something worth telling the user.
    fn note(&mut self, message: &str);
}

/// Progress that goes nowhere.
pub struct Quiet;
impl Progress for Quiet {
    fn update(&mut self, _: &LiveStatus) {}
    fn note(&mut self, _: &str) {}
}

/// How a record ended.
#[derive(Debug, Clone, PartialEq)]
pub enum RecordEnd {
    /// The profile ran to its end.
    Finished,
    /// The user stopped it; the device acknowledged the stop.
    Stopped,
    /// The device tripped an interlock; its heater is off.
    Fault(Fault),
    /// The device reports a latched fault whose report did not arrive intact; heater off.
    DeviceFaulted,
    /// The link went away; everything received is kept.
    LinkLost(String),
}

impl RecordEnd {
    /// Words for the metadata and the user.
    pub fn describe(&self) -> String {
        match self {
            RecordEnd::Finished => "profile finished".into(),
            RecordEnd::Stopped => "stopped by the user; heater off (acknowledged)".into(),
            RecordEnd::Fault(f) => format!("device fault: {}; heater off", describe_fault(*f)),
            RecordEnd::DeviceFaulted => {
                "the device reports a latched fault (report lost on the link): heater off".into()
            }
            RecordEnd::LinkLost(why) => format!("link lost: {why}"),
        }
    }
}

/// The outcome.
#[derive(Debug, Clone)]
pub struct RecordSummary {
    /// The run directory.
    pub dir: PathBuf,
    /// How it ended.
    pub end: RecordEnd,
    /// Counts.
    pub counts: Counts,
}

/// Recording could not start or could not write.
#[derive(Debug, thiserror::Error)]
pub enum RecordError {
    /// The link failed before recording began.
    #[error(transparent)]
    Link(#[from] LinkError),
    /// Writing the run failed.
    #[error(transparent)]
    RunDir(#[from] RunDirError),
}

/// Record one cycle from `port`.
pub fn record<P: Read + Write>(
    port: P,
    opts: RecordOptions,
    progress: &mut dyn Progress,
) -> Result<RecordSummary, RecordError> {
    if opts.out.exists() {
        return Err(RunDirError::Exists(opts.out.display().to_string()).into());
    }
    progress.note("connecting…");
    let (mut acq, hello, early) =
        Acquisition::connect(port, opts.calibration, opts.silence_timeout)?;
    progress.note(&format!(
        "connected: board `{}`, firmware {}.{}.{}, ceiling {:.0} °C",
        hello.board.as_str(),
        hello.firmware[0],
        hello.firmware[1],
        hello.firmware[2],
        f64::from(hello.limits.ceiling_tenth_c) / 10.0
    ));
    progress.note(&format!("heater drive: {}", describe_heater(&hello.heater)));
    if let Some(why) = describe_boot(&hello.boot) {
        progress.note(&why);
    }
    let meta = RunMeta {
        software: format!("remanent {}", env!("CARGO_PKG_VERSION")),
        started_utc: utc_now(),
        finished_utc: None,
        end_reason: None,
        port: opts.port_label.clone(),
        magnet: opts.magnet.clone(),
        device: Some(DeviceInfo::from_hello(&hello)),
        profile: opts.profile.clone(),
        calibration: opts.calibration,
        counts: Counts::default(),
    };
    let mut w = RunWriter::create(&opts.out, meta)?;
    w.raw(&early.bytes)?;
    let mut rec = Recorder::new(&opts);
    // what arrived with the device's hello (its first beacon, often) counts too
    for e in &early.events {
        rec.handle(e, &mut w, progress)?;
    }
    let end = match rec.run(&mut acq, &mut w, &opts, progress) {
        Ok(end) => end,
        Err(RecordError::Link(e @ LinkError::Refused { .. })) => {
            w.finish(&format!("not started: {e}"))?;
            return Err(e.into());
        }
        Err(RecordError::Link(e)) => RecordEnd::LinkLost(e.to_string()),
        Err(e) => {
            let _ = w.flush();
            return Err(e);
        }
    };
    frame_log::close(&acq.ingest.timeline, &mut w);
    let counts = w.meta.counts.clone();
    let dir = w.finish(&end.describe())?;
    Ok(RecordSummary { dir, end, counts })
}
