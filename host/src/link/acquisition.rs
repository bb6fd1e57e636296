//! The one acquisition engine every command that talks to a device uses (record, survey,
//! self-test, drills) and that replay runs over a saved byte stream: frames become typed
//! [`Event`]s — samples placed on the timeline and converted with the calibration, beacons,
//! state changes, faults, replies — and a live [`Acquisition`] keeps the heartbeat going and
//! notices a silent link.

use std::io::{Read, Write};
use std::time::{Duration, Instant};

use remanent_protocol::{
    Beacon, Command, DeviceHello, DeviceMsg, FaultReport, FixtureModel, FrameError, RefuseReason,
    StateReport,
};

use super::session::{LinkError, Received, Session};
use super::timeline::{PlacedSample, Timeline};
use crate::calibration::Calibration;
use crate::conversion::{self, Converted};

/// A heartbeat goes out this often in wall time …
pub const HEARTBEAT_WALL: Duration = Duration::from_millis(200);
/// … or this often in device time, whichever comes first (an accelerated rig needs them too).
pub const HEARTBEAT_DEVICE_S: f64 = 0.5;

/// What one frame meant.
#[derive(Debug, Clone)]
pub enum Event {
    /// A sample, placed on the timeline and converted.
    Sample {
        /// Its place in the record.
        placed: PlacedSample,
        /// Its values.
        values: Converted,
        /// Samples found missing just before it.
        missing_before: u64,
        /// The setpoint in force (from the latest beacon; `None` while the heater is off), °C.
        setpoint_c: Option<f64>,
    },
    /// A beacon (the timeline has taken it).
    Beacon(Beacon),
    /// A state change.
    State(StateReport),
    /// A tripped interlock.
    Fault(FaultReport),
    /// The answer to command `id`.
    Reply {
        /// The command.
        id: u16,
        /// Carried out, or refused with the reason.
        result: Result<(), RefuseReason>,
    },
    /// The device's hello.
    Hello(DeviceHello),
    /// A frame the decoder rejected.
    Rejected(FrameError),
    /// The device's sampling changed (a Configure from another program).
    Resampled(super::Resampled),
}

/// Where a session stands: a record holds only what the device sent after its hello.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Phase {
    /// Before the device's hello: anything here is from an earlier session (dropped).
    BeforeHello,
    /// After the hello, before the first beacon that says which samples are new.
    AwaitingBeacon,
    /// Recording.
    Running,
}

/// Frames to events: the timeline and the calibration.
#[derive(Debug)]
pub struct Ingest {
    /// Sequence numbers, device times and gap counts.
    pub timeline: Timeline,
    calibration: Calibration,
    phase: Phase,
    /// This side asked the device to change its sampling: the next change is its own.
    own_configure: bool,
}

impl Ingest {
    /// A fresh timeline converting with `calibration`.
    pub fn new(calibration: Calibration) -> Ingest {
        Ingest {
            timeline: Timeline::default(),
            calibration,
            phase: Phase::BeforeHello,
            own_configure: false,
        }
    }

    /// The device's hello was taken by someone else (a renewed handshake): start anew after it.
    pub fn restart_after_hello(&mut self) {
        self.timeline = Timeline::default();
        self.phase = Phase::AwaitingBeacon;
    }

    /// One decoded frame: the events it makes (a beacon settles the held samples) into `out`.
    pub fn frame_into(&mut self, frame: Result<DeviceMsg, FrameError>, out: &mut Vec<Event>) {
        let msg = match frame {
            Ok(m) => m,
            Err(e) => {
                out.push(Event::Rejected(e));
                return;
            }
        };
        match (self.phase, &msg) {
            (Phase::BeforeHello, DeviceMsg::Hello(_)) => self.phase = Phase::AwaitingBeacon,
            // an earlier session's frames: not this record's
            (Phase::BeforeHello, _) => return,
            _ => {}
        }
        match msg {
            DeviceMsg::Sample(s) => self.timeline.hold(s),
            DeviceMsg::Beacon(b) => {
                let settled = self.timeline.beacon(b);
                if self.phase == Phase::AwaitingBeacon {
                    self.timeline.start_after_latest_beacon();
                    self.phase = Phase::Running;
                }
                for placed in settled {
                    out.push(self.sample_event(placed));
                }
                if let Some(r) = self.timeline.take_resampled() {
                    // the recorder's own Configure is no news; anyone else's is
                    if !std::mem::take(&mut self.own_configure) {
                        out.push(Event::Resampled(r));
                    }
                }
                out.push(Event::Beacon(b));
            }
            DeviceMsg::State(st) => out.push(Event::State(st)),
            DeviceMsg::Fault(f) => out.push(Event::Fault(f)),
            DeviceMsg::Ack(a) => out.push(Event::Reply {
                id: a.id,
                result: Ok(()),
            }),
            DeviceMsg::Refused(r) => out.push(Event::Reply {
                id: r.id,
                result: Err(r.reason),
            }),
            DeviceMsg::Hello(h) => out.push(Event::Hello(h)),
        }
    }

    fn sample_event(&self, placed: PlacedSample) -> Event {
        let s = placed.sample;
        Event::Sample {
            values: conversion::convert(s.hall_code, s.probe_code, s.thermo, &self.calibration),
            missing_before: placed.missing_before,
            setpoint_c: (placed.setpoint_tenth_c != 0)
                .then(|| remanent_physics::wire::c_from_tenths(placed.setpoint_tenth_c)),
            placed,
        }
    }
}

/// What one poll of the link brought.
#[derive(Debug, Default)]
pub struct Batch {
    /// The bytes, exactly as read (the raw record).
    pub bytes: Vec<u8>,
    /// What they meant, in order.
    pub events: Vec<Event>,
}

/// A live acquisition from a device.
pub struct Acquisition<P> {
    session: Session<P>,
    /// Frames to events.
    pub ingest: Ingest,
    silence: Duration,
    last_byte: Instant,
    last_beat: Instant,
    last_beat_device_s: f64,
    device_now_s: f64,
    empty_reads: u32,
    /// The fixture's identification, given again after every handshake.
    fixture: Option<FixtureModel>,
}

/// While nothing arrives, a heartbeat goes out every this many empty reads too: device time
/// cannot be seen then, and a device-to-host outage must not cost the heartbeat.
pub const HEARTBEAT_EMPTY_READS: u32 = 5;

impl<P: Read + Write> Acquisition<P> {
    /// Handshake on `port`; the device's hello and what arrived with it, ingested.
    pub fn connect(
        port: P,
        calibration: Calibration,
        silence: Duration,
    ) -> Result<(Acquisition<P>, DeviceHello, Batch), LinkError> {
        let mut session = Session::new(port);
        let mut early: Vec<Received> = Vec::new();
        let hello = session.handshake(Duration::from_secs(10), &mut |r| {
            early.push(Received {
                bytes: r.bytes.clone(),
                frames: r.frames.clone(),
            })
        })?;
        let mut acq = Acquisition {
            session,
            ingest: Ingest::new(calibration),
            silence,
            last_byte: Instant::now(),
            last_beat: Instant::now(),
            last_beat_device_s: 0.0,
            device_now_s: 0.0,
            empty_reads: 0,
            fixture: calibration.fixture.map(|f| f.model()),
        };
        let mut batch = Batch::default();
        for r in early {
            batch.bytes.extend(r.bytes);
            for f in r.frames {
                acq.take(f, &mut batch.events);
            }
        }
        if let Some(f) = calibration.fixture {
            acq.ask(
                Command::Fixture(f.model()),
                "the fixture's identification",
                &mut batch,
            )?;
        }
        Ok((acq, hello, batch))
    }

    /// Send `command` (`what` it is, for messages) and wait for its answer, keeping every byte
    /// and event that arrives meanwhile in `batch`; a refusal is an error. A change of sampling
    /// asked for here is not reported as another program's.
    pub fn ask(
        &mut self,
        command: Command,
        what: &'static str,
        batch: &mut Batch,
    ) -> Result<(), LinkError> {
        self.ingest.own_configure |= matches!(command, Command::Configure(_));
        let id = self.send(command)?;
        let start = Instant::now();
        while start.elapsed() < Duration::from_secs(5) {
            let b = self.poll()?;
            batch.bytes.extend(b.bytes);
            for e in b.events {
                let answer = match &e {
                    Event::Reply { id: i, result } if *i == id => Some(*result),
                    _ => None,
                };
                batch.events.push(e);
                match answer {
                    Some(Ok(())) => return Ok(()),
                    Some(Err(reason)) => {
                        return Err(LinkError::Refused {
                            command: what,
                            reason,
                        })
                    }
                    None => {}
                }
            }
        }
        Err(LinkError::NoAnswer(what))
    }

    /// Ingest one frame. Device time moves on one period with every sample that arrives (its
    /// number is settled later, by a beacon), and never lags what has been placed: the
    /// heartbeat's device-time clock must not wait for beacons.
    fn take(&mut self, f: Result<DeviceMsg, FrameError>, out: &mut Vec<Event>) {
        if let (Ok(DeviceMsg::Sample(_)), Some(b)) = (&f, self.ingest.timeline.latest_beacon()) {
            self.device_now_s += f64::from(b.period_ms) / 1000.0;
        }
        let from = out.len();
        self.ingest.frame_into(f, out);
        for e in &out[from..] {
            if let Event::Sample { placed, .. } = e {
                self.device_now_s = self.device_now_s.max(placed.device_time_s);
            }
        }
    }

    /// Send a command; its id.
    pub fn send(&mut self, command: Command) -> Result<u16, LinkError> {
        self.session.send(command)
    }

    /// Device time of the latest sample, s.
    pub fn device_now_s(&self) -> f64 {
        self.device_now_s
    }

    /// Heartbeat when due, then one read. A link silent for longer than the timeout is an
    /// error ([`LinkError::Silent`]).
    pub fn poll(&mut self) -> Result<Batch, LinkError> {
        if self.last_beat.elapsed() >= HEARTBEAT_WALL
            || self.device_now_s - self.last_beat_device_s >= HEARTBEAT_DEVICE_S
            || self.empty_reads >= HEARTBEAT_EMPTY_READS
        {
            self.empty_reads = 0;
            self.session.send(Command::Heartbeat)?;
            self.last_beat = Instant::now();
            self.last_beat_device_s = self.device_now_s;
        }
        let got = self.session.read()?;
        if got.bytes.is_empty() {
            self.empty_reads += 1;
            if self.last_byte.elapsed() > self.silence {
                return Err(LinkError::Silent(self.silence.as_secs_f64()));
            }
        } else {
            self.empty_reads = 0;
            self.last_byte = Instant::now();
        }
        let mut batch = Batch {
            bytes: got.bytes,
            events: Vec::with_capacity(got.frames.len()),
        };
        for f in got.frames {
            self.take(f, &mut batch.events);
        }
        Ok(batch)
    }

    /// Poll until `until` holds for an event or `timeout` passes; that event.
    pub fn wait_for(
        &mut self,
        timeout: Duration,
        mut until: impl FnMut(&Event) -> bool,
    ) -> Result<Option<Event>, LinkError> {
        let start = Instant::now();
        while start.elapsed() < timeout {
            for e in self.poll()?.events {
                if until(&e) {
                    return Ok(Some(e));
                }
            }
        }
        Ok(None)
    }

    /// Handshake again (after the device reset).
    pub fn rehandshake(&mut self, timeout: Duration) -> Result<DeviceHello, LinkError> {
        let hello = self.session.handshake(timeout, &mut |_| {})?;
        self.ingest.restart_after_hello();
        self.last_byte = Instant::now();
        // a reset forgets the identification: the device is told again
        if let Some(model) = self.fixture {
            self.send(Command::Fixture(model))?;
        }
        Ok(hello)
    }
}
