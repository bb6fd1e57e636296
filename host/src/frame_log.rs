//! Writing decoded frames into a run directory: what the recorder and the replay share.
//!
//! Every sample is placed on the timeline and written with the setpoint then in force; gaps,
//! state changes, faults and rejected frames become events and counts. Deciding what a frame
//! *means* for a running record (started, finished, faulted) stays with the recorder.

use remanent_protocol::{Beacon, DeviceMsg, FaultReport, FrameError, Sample, StateReport};

use crate::link::{PlacedSample, Timeline};
use crate::run_dir::{ConvertedRow, RunDirError, RunWriter};

/// What a frame was, once written.
#[derive(Debug, Clone)]
pub enum Logged {
    /// Rejected by the decoder (counted, and listed in the events).
    Rejected,
    /// A sample, placed and written.
    Sample {
        /// The raw sample.
        sample: Sample,
        /// Its place in the record.
        placed: PlacedSample,
        /// Its converted values.
        row: ConvertedRow,
    },
    /// A sample that could not be placed yet (no beacon) or repeated one.
    Unplaced,
    /// A beacon (the timeline has taken it).
    Beacon(Beacon),
    /// A state change (written as an event).
    State(StateReport),
    /// A fault report (counted and written as an event).
    Fault(FaultReport),
    /// Anything else: hello, acknowledgements, refusals.
    Other(DeviceMsg),
}

/// Words for a fault report.
pub fn fault_detail(f: &FaultReport) -> String {
    format!(
        "{:?} at {:.1} °C",
        f.fault,
        f64::from(f.temp_tenth_c) / 10.0
    )
}

/// The frame log of one run.
#[derive(Debug, Default)]
pub struct FrameLog {
    /// Sequence numbers, device times and gap counts.
    pub timeline: Timeline,
}

impl FrameLog {
    /// Write one decoded frame; `t` is the device time of the latest sample, for events that
    /// carry none of their own.
    pub fn log(
        &mut self,
        w: &mut RunWriter,
        frame: Result<DeviceMsg, FrameError>,
        t: Option<f64>,
    ) -> Result<Logged, RunDirError> {
        let msg = match frame {
            Ok(m) => m,
            Err(e) => {
                match e {
                    FrameError::BadCrc { .. } => w.meta.counts.frames_bad_crc += 1,
                    FrameError::BadCobs => w.meta.counts.frames_bad_cobs += 1,
                    _ => w.meta.counts.frames_other += 1,
                }
                w.event(t, "frame_rejected", &e.to_string())?;
                return Ok(Logged::Rejected);
            }
        };
        Ok(match msg {
            DeviceMsg::Sample(sample) => {
                let gaps_before = self.timeline.gap_samples;
                let Some(placed) = self.timeline.place(sample) else {
                    return Ok(Logged::Unplaced);
                };
                if self.timeline.gap_samples > gaps_before {
                    let missing = self.timeline.gap_samples - gaps_before;
                    w.event(
                        Some(placed.device_time_s),
                        "gap",
                        &format!("{missing} samples missing before seq {}", placed.seq),
                    )?;
                }
                let setpoint = self
                    .timeline
                    .latest_beacon()
                    .filter(|b| b.setpoint_tenth_c != 0)
                    .map(|b| f64::from(b.setpoint_tenth_c) / 10.0);
                let row = w.sample(&placed, setpoint)?;
                Logged::Sample {
                    sample,
                    placed,
                    row,
                }
            }
            DeviceMsg::Beacon(b) => {
                self.timeline.beacon(b);
                Logged::Beacon(b)
            }
            DeviceMsg::State(st) => {
                w.event(
                    Some(f64::from(st.time_ms) / 1000.0),
                    "state",
                    &format!("{:?} (segment {})", st.state, st.segment),
                )?;
                Logged::State(st)
            }
            DeviceMsg::Fault(f) => {
                w.meta.counts.faults += 1;
                w.event(
                    Some(f64::from(f.time_ms) / 1000.0),
                    "fault",
                    &fault_detail(&f),
                )?;
                Logged::Fault(f)
            }
            other => Logged::Other(other),
        })
    }

    /// Copy the timeline's gap and drop counts into the run's metadata.
    pub fn close(&self, w: &mut RunWriter) {
        w.meta.counts.gaps = self.timeline.gaps;
        w.meta.counts.gap_samples = self.timeline.gap_samples;
        w.meta.counts.device_dropped = self.timeline.device_dropped;
    }
}
