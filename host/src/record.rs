//! Recording one heat cycle: handshake, send the profile, keep the heartbeat, write every byte
//! and every sample as it arrives, report progress, and end cleanly on completion, a fault,
//! a user's stop or a lost link, keeping everything received.

use std::collections::VecDeque;
use std::io::{Read, Write};
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

use remanent_protocol::{Command, DeviceMsg, Fault, FrameError, RefuseReason, RunState};

use crate::calibration::Calibration;
use crate::frame_log::{fault_detail, FrameLog, Logged};
use crate::link::session::{describe_refusal, Received};
use crate::link::{LinkError, Session};
use crate::magnets::MagnetInfo;
use crate::profiles::ProfileSpec;
use crate::run_dir::{utc_now, Counts, DeviceInfo, RunDirError, RunMeta, RunWriter};

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
            RecordEnd::Fault(f) => format!(
                "device fault: {}; heater off",
                crate::link::words::describe_fault(*f)
            ),
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

const HEARTBEAT_WALL: Duration = Duration::from_millis(200);

/// Record one cycle from `port`.
pub fn record<P: Read + Write>(
    port: P,
    opts: RecordOptions,
    progress: &mut dyn Progress,
) -> Result<RecordSummary, RecordError> {
    if opts.out.exists() {
        return Err(RunDirError::Exists(opts.out.display().to_string()).into());
    }
    let mut session = Session::new(port);
    let mut early: Vec<Received> = Vec::new();
    progress.note("connecting…");
    let hello = session.handshake(Duration::from_secs(10), &mut |r| {
        early.push(Received {
            bytes: r.bytes.clone(),
            frames: r.frames.clone(),
        })
    })?;
    progress.note(&format!(
        "connected: board `{}`, firmware {}.{}.{}, ceiling {:.0} °C",
        hello.board.as_str(),
        hello.firmware[0],
        hello.firmware[1],
        hello.firmware[2],
        f64::from(hello.limits.ceiling_tenth_c) / 10.0
    ));
    progress.note(&format!(
        "heater drive: {}",
        crate::link::words::describe_heater(&hello.heater)
    ));
    if let Some(why) = crate::link::words::describe_boot(&hello.boot) {
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
    for r in &early {
        w.raw(&r.bytes)?;
    }
    let mut rec = Recorder::new(&opts);
    // what arrived with the device's hello (its first beacon, often) counts too
    for f in early.into_iter().flat_map(|r| r.frames) {
        rec.handle(f, &mut w, None, progress)?;
    }
    let end = rec.run(&mut session, &mut w, &opts, progress);
    let end = match end {
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
    rec.log.close(&mut w);
    let counts = w.meta.counts.clone();
    let dir = w.finish(&end.describe())?;
    Ok(RecordSummary { dir, end, counts })
}

struct Recorder {
    log: FrameLog,
    status: LiveStatus,
    history: VecDeque<(f64, f64)>,
    start_device_s: Option<f64>,
    first_sample_s: Option<f64>,
    nominal_s: f64,
    silence: Duration,
    stop: Arc<AtomicBool>,
    started: bool,
    idle_beacons: u32,
    resend_start: bool,
}

impl Recorder {
    fn new(opts: &RecordOptions) -> Self {
        Recorder {
            log: FrameLog::default(),
            status: LiveStatus::default(),
            history: VecDeque::new(),
            start_device_s: None,
            first_sample_s: None,
            nominal_s: opts.profile.nominal_duration_s(22.0),
            silence: opts.silence_timeout,
            stop: opts.stop.clone(),
            started: false,
            idle_beacons: 0,
            resend_start: false,
        }
    }

    fn run<P: Read + Write>(
        &mut self,
        session: &mut Session<P>,
        w: &mut RunWriter,
        opts: &RecordOptions,
        progress: &mut dyn Progress,
    ) -> Result<RecordEnd, RecordError> {
        let mut start_id = None;
        if opts.preroll_s > 0.0 {
            progress.note(&format!(
                "recording {:.0} s at rest before heating (room-temperature reference)…",
                opts.preroll_s
            ));
        }
        let mut last_byte = Instant::now();
        let mut last_heartbeat = Instant::now();
        let mut last_heartbeat_device = 0.0;
        let mut last_update = Instant::now();
        loop {
            if self.stop.load(Ordering::Relaxed) {
                progress.note("stopping: heater off…");
                return self.stop_device(session, w);
            }
            // every 200 ms of wall time or 0.5 s of device time, whichever comes first, so an
            // accelerated rig gets its heartbeats too
            let device_now = self.history.back().map(|h| h.0).unwrap_or(0.0);
            if last_heartbeat.elapsed() >= HEARTBEAT_WALL
                || device_now - last_heartbeat_device >= 0.5
            {
                session.send(Command::Heartbeat)?;
                last_heartbeat = Instant::now();
                last_heartbeat_device = device_now;
            }
            let got = session.read()?;
            if got.bytes.is_empty() {
                if last_byte.elapsed() > self.silence {
                    return Err(LinkError::Silent(self.silence.as_secs_f64()).into());
                }
            } else {
                last_byte = Instant::now();
                w.raw(&got.bytes)?;
            }
            // every frame of the chunk is written, even those after the one that ends the
            // record, so the CSV holds exactly what raw.bin holds
            let mut ended = None;
            for frame in got.frames {
                if let Some(end) = self.handle(frame, w, start_id, progress)? {
                    ended.get_or_insert(end);
                }
            }
            if let Some(end) = ended {
                return Ok(end);
            }
            if self.resend_start && !self.started {
                self.resend_start = false;
                w.event(None, "resent", "no answer to the profile: sent again")?;
                start_id = Some(session.send(Command::Start(opts.profile.to_wire()))?);
            }
            if start_id.is_none() && self.rest_s() >= opts.preroll_s {
                start_id = Some(session.send(Command::Start(opts.profile.to_wire()))?);
            }
            w.maybe_flush()?;
            if last_update.elapsed() >= Duration::from_millis(100) {
                progress.update(&self.status);
                last_update = Instant::now();
            }
        }
    }

    fn handle(
        &mut self,
        frame: Result<DeviceMsg, FrameError>,
        w: &mut RunWriter,
        start_id: Option<u16>,
        progress: &mut dyn Progress,
    ) -> Result<Option<RecordEnd>, RecordError> {
        let t = self.history.back().map(|h| h.0);
        match self.log.log(w, frame, t)? {
            Logged::Rejected => self.status.bad_frames += 1,
            Logged::Unplaced => {}
            Logged::Sample {
                sample,
                placed,
                row,
            } => {
                self.status.samples = w.meta.counts.samples;
                self.track(
                    placed.device_time_s,
                    row.temp_c,
                    row.flux_mt,
                    f64::from(sample.duty) / 2.55,
                );
            }
            Logged::Beacon(b) => {
                self.status.state = Some(b.state);
                // a lost acknowledgement: the device's state says the profile runs
                if start_id.is_some() && !self.started && b.state == RunState::Profile {
                    self.started = true;
                    w.event(
                        t,
                        "started",
                        "profile running (acknowledgement lost on the link)",
                    )?;
                }
                // a lost start or refusal: still idle three beacons later, so ask again
                if start_id.is_some() && !self.started && b.state == RunState::Idle {
                    self.idle_beacons += 1;
                    if self.idle_beacons >= 3 {
                        self.idle_beacons = 0;
                        self.resend_start = true;
                    }
                }
                // the beacon repeats the state every second, so a lost state report cannot
                // leave the record running forever
                if self.started && b.state == RunState::Idle {
                    w.event(
                        Some(f64::from(b.epoch_ms) / 1000.0),
                        "state",
                        "Idle (from the beacon)",
                    )?;
                    progress.note("profile finished; heater off");
                    return Ok(Some(RecordEnd::Finished));
                }
                if self.started && b.state == RunState::Faulted {
                    progress.note("the device reports a latched fault (its fault report was lost); heater off");
                    return Ok(Some(RecordEnd::DeviceFaulted));
                }
            }
            Logged::State(st) => {
                self.status.state = Some(st.state);
                if st.state == RunState::Profile && start_id.is_some() && !self.started {
                    self.started = true; // the acknowledgement was lost on the link
                }
                if st.state == RunState::Idle && self.started {
                    progress.note("profile finished; heater off");
                    return Ok(Some(RecordEnd::Finished));
                }
            }
            Logged::Fault(f) => {
                self.status.fault = Some(f.fault);
                progress.note(&format!("device fault: {}; heater off", fault_detail(&f)));
                return Ok(Some(RecordEnd::Fault(f.fault)));
            }
            Logged::Other(DeviceMsg::Ack(a)) if Some(a.id) == start_id => {
                self.started = true;
                w.event(t, "started", "profile accepted")?;
            }
            Logged::Other(DeviceMsg::Refused(r))
                if Some(r.id) == start_id && r.reason == RefuseReason::Busy =>
            {
                // a resent start found the first one running
                self.started = true;
            }
            Logged::Other(DeviceMsg::Refused(r)) if Some(r.id) == start_id => {
                w.event(t, "refused", &describe_refusal(&r.reason))?;
                return Err(LinkError::Refused {
                    command: "the profile",
                    reason: r.reason,
                }
                .into());
            }
            Logged::Other(DeviceMsg::Refused(r)) => {
                w.event(t, "refused", &describe_refusal(&r.reason))?
            }
            Logged::Other(_) => {}
        }
        Ok(None)
    }

    /// Device time covered by samples so far, s.
    fn rest_s(&self) -> f64 {
        match (self.first_sample_s, self.history.back()) {
            (Some(a), Some(b)) => b.0 - a,
            _ => 0.0,
        }
    }

    fn track(&mut self, t: f64, temp_c: Option<f64>, flux_mt: Option<f64>, duty_pct: f64) {
        self.first_sample_s.get_or_insert(t);
        let start = if self.started {
            *self.start_device_s.get_or_insert(t)
        } else {
            t
        };
        self.status.elapsed_s = t - start;
        self.status.remaining_s = (self.nominal_s - self.status.elapsed_s).max(0.0);
        self.status.temp_c = temp_c;
        self.status.flux_mt = flux_mt;
        self.status.duty_pct = duty_pct;
        self.status.gap_samples = self.log.timeline.gap_samples;
        if let Some(tc) = temp_c {
            self.history.push_back((t, tc));
            while self.history.front().is_some_and(|h| t - h.0 > 30.0) {
                self.history.pop_front();
            }
            if let (Some(a), Some(b)) = (self.history.front(), self.history.back()) {
                if b.0 - a.0 > 5.0 {
                    self.status.ramp_c_per_min = Some((b.1 - a.1) / (b.0 - a.0) * 60.0);
                }
            }
        }
    }

    fn stop_device<P: Read + Write>(
        &mut self,
        session: &mut Session<P>,
        w: &mut RunWriter,
    ) -> Result<RecordEnd, RecordError> {
        let id = session.send(Command::Stop)?;
        let deadline = Instant::now() + Duration::from_secs(3);
        while Instant::now() < deadline {
            let got = session.read()?;
            w.raw(&got.bytes)?;
            let mut acked = false;
            for f in got.frames {
                if matches!(&f, Ok(DeviceMsg::Ack(a)) if a.id == id) {
                    acked = true;
                    w.event(None, "stopped", "stop acknowledged; heater off")?;
                }
                let _ = self.handle(f, w, None, &mut Quiet)?;
            }
            if acked {
                return Ok(RecordEnd::Stopped);
            }
        }
        Err(LinkError::NoAnswer("stop").into())
    }
}
