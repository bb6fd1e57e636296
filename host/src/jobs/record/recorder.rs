//! The recorder's loop: events from the acquisition written as they arrive, the profile
//! started after the rest pre-roll through an explicit start handshake, and the record ended
//! on completion, a fault, a user's stop or a lost link.

use std::collections::VecDeque;
use std::io::{Read, Write};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

use remanent_protocol::{Command, RefuseReason, RunState};

use super::types::{
    LiveSample, LiveStatus, Progress, Quiet, RecordEnd, RecordError, RecordOptions,
};
use crate::event::{Notice, RunEvent, StartSeen};
use crate::frame_log;
use crate::link::acquisition::{Acquisition, Event};
use crate::link::LinkError;
use crate::run_dir::RunWriter;

/// Beacons that may still say idle after the start before it is sent again (a lost start).
const IDLE_BEACONS_BEFORE_RESEND: u32 = 3;
/// The ramp shown is over this much device time, s.
const RAMP_WINDOW_S: f64 = 30.0;

mod rest;
/// Progress is shown this often.
const PROGRESS_EVERY: Duration = Duration::from_millis(100);
/// … or after this much device time, whichever comes first: a fast virtual rig runs minutes of
/// device time in a tenth of a second, and its live status (and a stop decided on it) must
/// not skip them, s.
const PROGRESS_EVERY_DEVICE_S: f64 = 1.0;
/// A profile that goes idle more than this short of its shortest duration was stopped from
/// elsewhere, s.
const FOREIGN_STOP_SLACK_S: f64 = 5.0;
/// A stop is given this long to be acknowledged.
const STOP_TIMEOUT: Duration = Duration::from_secs(3);
/// After the end, a beacon to settle the last samples is waited for this long (one comes every
/// second of device time).
const SETTLE_TIMEOUT: Duration = Duration::from_millis(2500);

/// Where the start of the profile stands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Start {
    /// Recording the rest pre-roll; nothing sent yet.
    Resting,
    /// The start was sent as command `id`; `idle_beacons` beacons have said idle since.
    Sent {
        /// The command's id.
        id: u16,
        /// Idle beacons seen since.
        idle_beacons: u32,
    },
    /// The device runs the profile (acknowledged, or seen in its state).
    Running,
}

pub(super) struct Recorder {
    status: LiveStatus,
    history: VecDeque<(f64, f64)>,
    start_device_s: Option<f64>,
    first_sample_s: Option<f64>,
    nominal_s: f64,
    told_settling: bool,
    shortest_s: f64,
    stop: Arc<AtomicBool>,
    start: Start,
    resend: bool,
    auto: Option<super::auto_end::AutoEnd>,
}

impl Recorder {
    pub(super) fn new(opts: &RecordOptions) -> Self {
        Recorder {
            status: LiveStatus::default(),
            history: VecDeque::new(),
            start_device_s: None,
            first_sample_s: None,
            told_settling: false,
            nominal_s: opts.profile.nominal_duration_s(22.0),
            shortest_s: opts.profile.shortest_duration_s(),
            stop: opts.stop.clone(),
            start: Start::Resting,
            resend: false,
            auto: opts
                .auto_end
                .map(|t| super::auto_end::AutoEnd::new(t, &opts.calibration, &opts.magnet)),
        }
    }

    fn running(&self) -> bool {
        self.start == Start::Running
    }

    fn send_start<P: Read + Write>(
        &mut self,
        acq: &mut Acquisition<P>,
        opts: &RecordOptions,
    ) -> Result<(), LinkError> {
        let id = acq.send(Command::Start(opts.profile.to_wire()))?;
        self.start = Start::Sent {
            id,
            idle_beacons: 0,
        };
        Ok(())
    }

    pub(super) fn run<P: Read + Write>(
        &mut self,
        acq: &mut Acquisition<P>,
        w: &mut RunWriter,
        opts: &RecordOptions,
        progress: &mut dyn Progress,
    ) -> Result<RecordEnd, RecordError> {
        if opts.preroll_s > 0.0 {
            progress.notice(&Notice::Preroll {
                seconds: opts.preroll_s,
            });
        }
        let mut last_update = Instant::now();
        let mut last_update_device_s = acq.device_now_s();
        loop {
            if self.stop.load(Ordering::Relaxed) {
                progress.notice(&Notice::Stopping);
                return self.stop_device(acq, w);
            }
            let batch = acq.poll()?;
            w.raw(&batch.bytes)?;
            // every event of the chunk is written, even those after the one that ends the
            // record, so the CSV holds exactly what raw.bin holds
            let mut ended = None;
            for e in &batch.events {
                if let Some(end) = self.handle(e, w, progress)? {
                    ended.get_or_insert(end);
                }
            }
            if let Some(end) = ended {
                return Ok(end);
            }
            if let Some(words) = self.complete() {
                progress.notice(&Notice::Complete(words.clone()));
                self.stop_device(acq, w)?;
                w.event(None, &RunEvent::Complete(words.clone()))?;
                return Ok(RecordEnd::Complete(words));
            }
            if self.resend {
                self.resend = false;
                w.event(None, &RunEvent::Resent)?;
                self.send_start(acq, opts)?;
            }
            if self.start == Start::Resting && self.rest_over(opts.preroll_s, progress) {
                self.send_start(acq, opts)?;
            }
            w.maybe_flush()?;
            if last_update.elapsed() >= PROGRESS_EVERY
                || acq.device_now_s() - last_update_device_s >= PROGRESS_EVERY_DEVICE_S
            {
                progress.update(&self.status);
                last_update = Instant::now();
                last_update_device_s = acq.device_now_s();
            }
        }
    }

    pub(super) fn handle(
        &mut self,
        e: &Event,
        w: &mut RunWriter,
        progress: &mut dyn Progress,
    ) -> Result<Option<RecordEnd>, RecordError> {
        let t = self.history.back().map(|h| h.0);
        frame_log::log(w, e, t)?;
        match e {
            Event::Rejected(_) => self.status.bad_frames += 1,
            Event::Sample {
                placed,
                values,
                missing_before,
                setpoint_c,
            } => {
                self.status.samples = w.meta.counts.samples;
                self.status.gap_samples += missing_before;
                let duty = remanent_physics::wire::duty_pct(placed.sample.duty);
                if let (Some(a), true) = (self.auto.as_mut(), self.start == Start::Running) {
                    a.push(
                        placed.device_time_s,
                        values.temp_c,
                        values.flux_mt,
                        values.probe_c,
                    );
                }
                self.track(placed.device_time_s, values.temp_c, values.flux_mt, duty);
                progress.sample(&LiveSample {
                    device_time_s: placed.device_time_s,
                    temp_c: values.temp_c,
                    flux_mt: values.flux_mt,
                    setpoint_c: *setpoint_c,
                    duty_pct: duty,
                    heating: self.start == Start::Running,
                });
            }
            Event::Beacon(b) => {
                self.status.state = Some(b.state);
                // the time of the beacon's newest sample: when the device said it
                let slot_ms = f64::from(b.epoch_ms)
                    + f64::from(b.seq.wrapping_sub(b.epoch_seq)) * f64::from(b.period_ms);
                let at = Some(slot_ms / 1000.0);
                return self.on_state(b.state, true, at, w, progress);
            }
            Event::State(st) => {
                self.status.state = Some(st.state);
                let at = Some(f64::from(st.time_ms) / 1000.0);
                return self.on_state(st.state, false, at, w, progress);
            }
            Event::Fault(f) => {
                self.status.fault = Some(f.fault);
                progress.notice(&Notice::DeviceFault(*f));
                return Ok(Some(RecordEnd::Fault(f.fault)));
            }
            Event::Reply { id, result } => return self.on_reply(*id, result, t, w),
            Event::Resampled(r) => progress.notice(&Notice::Resampled(*r)),
            Event::Hello(_) => {}
        }
        Ok(None)
    }

    /// A state from a report or (every second) from a beacon (`t`: the beacon's epoch): a lost
    /// acknowledgement, a lost start, and a lost end all show here, so a noisy link cannot
    /// leave the record hanging.
    fn on_state(
        &mut self,
        state: RunState,
        from_beacon: bool,
        t: Option<f64>,
        w: &mut RunWriter,
        progress: &mut dyn Progress,
    ) -> Result<Option<RecordEnd>, RecordError> {
        if let Start::Sent { idle_beacons, .. } = &mut self.start {
            match state {
                RunState::Profile => {
                    self.start = Start::Running;
                    let how = if from_beacon {
                        StartSeen::Beacon
                    } else {
                        StartSeen::Reported
                    };
                    w.event(t, &RunEvent::Started(how))?;
                }
                RunState::Idle if from_beacon => {
                    *idle_beacons += 1;
                    if *idle_beacons >= IDLE_BEACONS_BEFORE_RESEND {
                        *idle_beacons = 0;
                        self.resend = true;
                    }
                }
                _ => {}
            }
            return Ok(None);
        }
        if !self.running() {
            return Ok(None);
        }
        match state {
            RunState::Idle => {
                if from_beacon {
                    let idle = RunEvent::State {
                        state,
                        segment: 0,
                        from_beacon,
                    };
                    w.event(t, &idle)?;
                }
                let (ran_s, shortest_s) = (self.status.elapsed_s, self.shortest_s);
                if ran_s + FOREIGN_STOP_SLACK_S < shortest_s {
                    progress.notice(&Notice::StoppedElsewhere { ran_s, shortest_s });
                    return Ok(Some(RecordEnd::StoppedElsewhere { ran_s, shortest_s }));
                }
                progress.notice(&Notice::ProfileFinished);
                Ok(Some(RecordEnd::Finished))
            }
            RunState::Faulted if from_beacon => {
                progress.notice(&Notice::FaultReportLost);
                Ok(Some(RecordEnd::DeviceFaulted))
            }
            _ => Ok(None),
        }
    }

    fn on_reply(
        &mut self,
        id: u16,
        result: &Result<(), RefuseReason>,
        t: Option<f64>,
        w: &mut RunWriter,
    ) -> Result<Option<RecordEnd>, RecordError> {
        let ours = matches!(self.start, Start::Sent { id: sent, .. } if sent == id);
        match result {
            Ok(()) if ours => {
                self.start = Start::Running;
                w.event(t, &RunEvent::Started(StartSeen::Acknowledged))?;
            }
            // a resent start found the first one running
            Err(RefuseReason::Busy) if ours => self.start = Start::Running,
            Err(r) if ours => {
                w.event(t, &RunEvent::Refused(*r))?;
                return Err(LinkError::Refused {
                    command: "the profile",
                    reason: *r,
                }
                .into());
            }
            Err(r) => w.event(t, &RunEvent::Refused(*r))?,
            Ok(()) => {}
        }
        Ok(None)
    }

    /// After the end: read on until a beacon settles the samples still held, writing all.
    pub(super) fn settle<P: Read + Write>(
        &mut self,
        acq: &mut Acquisition<P>,
        w: &mut RunWriter,
    ) -> Result<(), RecordError> {
        let deadline = Instant::now() + SETTLE_TIMEOUT;
        while Instant::now() < deadline && acq.ingest.timeline.holding() > 0 {
            let batch = acq.poll()?;
            w.raw(&batch.bytes)?;
            let t = self.history.back().map(|h| h.0);
            let mut settled = false;
            for e in &batch.events {
                frame_log::log(w, e, t)?;
                settled |= matches!(e, Event::Beacon(_));
            }
            if settled {
                return Ok(());
            }
        }
        Ok(())
    }

    /// Whether the analysis can already state what the record is for.
    fn complete(&mut self) -> Option<crate::units::Phrase> {
        if self.start != Start::Running {
            return None;
        }
        self.auto.as_mut()?.check()
    }

    fn stop_device<P: Read + Write>(
        &mut self,
        acq: &mut Acquisition<P>,
        w: &mut RunWriter,
    ) -> Result<RecordEnd, RecordError> {
        let id = acq.send(Command::Stop)?;
        let deadline = Instant::now() + STOP_TIMEOUT;
        while Instant::now() < deadline {
            let batch = acq.poll()?;
            w.raw(&batch.bytes)?;
            let mut acked = false;
            for e in &batch.events {
                if matches!(e, Event::Reply { id: a, result: Ok(()) } if *a == id) {
                    acked = true;
                    w.event(None, &RunEvent::Stopped)?;
                }
                let _ = self.handle(e, w, &mut Quiet)?;
            }
            if acked {
                return Ok(RecordEnd::Stopped);
            }
        }
        Err(LinkError::NoAnswer("stop").into())
    }
}
