//! The one acquisition engine every command that talks to a device uses (record, survey,
//! self-test, drills) and that replay runs over a saved byte stream: frames become typed
//! [`Event`]s — samples placed on the timeline and converted with the calibration, beacons,
//! state changes, faults, replies — and a live [`Acquisition`] keeps the heartbeat going and
//! notices a silent link.

use std::io::{Read, Write};
use std::time::{Duration, Instant};

use remanent_protocol::{
    Beacon, Command, DeviceHello, DeviceMsg, FaultReport, FrameError, RefuseReason, Sample,
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
    /// A sample that cannot be placed yet (no beacon so far).
    Unplaced(Sample),
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
}

/// Frames to events: the timeline and the calibration.
#[derive(Debug)]
pub struct Ingest {
    /// Sequence numbers, device times and gap counts.
    pub timeline: Timeline,
    calibration: Calibration,
}

impl Ingest {
    /// A fresh timeline converting with `calibration`.
    pub fn new(calibration: Calibration) -> Ingest {
        Ingest {
            timeline: Timeline::default(),
            calibration,
        }
    }

    /// The calibration in use.
    pub fn calibration(&self) -> &Calibration {
        &self.calibration
    }

    /// One decoded frame.
    pub fn frame(&mut self, frame: Result<DeviceMsg, FrameError>) -> Event {
        let msg = match frame {
            Ok(m) => m,
            Err(e) => return Event::Rejected(e),
        };
        match msg {
            DeviceMsg::Sample(s) => {
                let gaps_before = self.timeline.gap_samples;
                let Some(placed) = self.timeline.place(s) else {
                    return Event::Unplaced(s);
                };
                let setpoint_c = self
                    .timeline
                    .latest_beacon()
                    .filter(|b| b.setpoint_tenth_c != 0)
                    .map(|b| f64::from(b.setpoint_tenth_c) / 10.0);
                let cal = &self.calibration;
                Event::Sample {
                    values: conversion::convert(s.hall_code, s.probe_code, s.thermo, cal),
                    placed,
                    missing_before: self.timeline.gap_samples - gaps_before,
                    setpoint_c,
                }
            }
            DeviceMsg::Beacon(b) => {
                self.timeline.beacon(b);
                Event::Beacon(b)
            }
            DeviceMsg::State(st) => Event::State(st),
            DeviceMsg::Fault(f) => Event::Fault(f),
            DeviceMsg::Ack(a) => Event::Reply {
                id: a.id,
                result: Ok(()),
            },
            DeviceMsg::Refused(r) => Event::Reply {
                id: r.id,
                result: Err(r.reason),
            },
            DeviceMsg::Hello(h) => Event::Hello(h),
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
}

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
        };
        let mut batch = Batch::default();
        for r in early {
            batch.bytes.extend(r.bytes);
            for f in r.frames {
                let e = acq.take(f);
                batch.events.push(e);
            }
        }
        Ok((acq, hello, batch))
    }

    fn take(&mut self, f: Result<DeviceMsg, FrameError>) -> Event {
        let e = self.ingest.frame(f);
        if let Event::Sample { placed, .. } = &e {
            self.device_now_s = placed.device_time_s;
        }
        e
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
        {
            self.session.send(Command::Heartbeat)?;
            self.last_beat = Instant::now();
            self.last_beat_device_s = self.device_now_s;
        }
        let got = self.session.read()?;
        if got.bytes.is_empty() {
            if self.last_byte.elapsed() > self.silence {
                return Err(LinkError::Silent(self.silence.as_secs_f64()));
            }
        } else {
            self.last_byte = Instant::now();
        }
        let mut batch = Batch {
            bytes: got.bytes,
            events: Vec::with_capacity(got.frames.len()),
        };
        for f in got.frames {
            let e = self.take(f);
            batch.events.push(e);
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
        self.ingest.timeline = Timeline::default();
        self.last_byte = Instant::now();
        Ok(hello)
    }
}
