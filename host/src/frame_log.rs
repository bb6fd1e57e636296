//! Writing a record's events into a run directory: what the recorder and the replay share.
//!
//! Every placed sample is written with its converted values and the setpoint then in force;
//! gaps, state changes, faults and rejected frames become events and counts. Deciding what an
//! event *means* for a running record (started, finished, faulted) stays with the recorder.

use remanent_protocol::FrameError;

use crate::event::{Rejection, RunEvent};
use crate::link::acquisition::Event;
use crate::link::Timeline;
use crate::run_dir::{RunDirError, RunWriter};

/// Write one event; `t` is the device time of the latest sample, for events that carry none
/// of their own.
pub fn log(w: &mut RunWriter, e: &Event, t: Option<f64>) -> Result<(), RunDirError> {
    match e {
        Event::Rejected(err) => {
            let rejection = match err {
                FrameError::BadCrc { .. } => {
                    w.meta.counts.frames_bad_crc += 1;
                    Rejection::BadCrc
                }
                FrameError::BadCobs => {
                    w.meta.counts.frames_bad_cobs += 1;
                    Rejection::BadCobs
                }
                _ => {
                    w.meta.counts.frames_other += 1;
                    Rejection::Other
                }
            };
            let detail = err.to_string();
            w.event(t, &RunEvent::FrameRejected { rejection, detail })
        }
        Event::Sample {
            placed,
            values,
            missing_before,
            setpoint_c,
        } => {
            if *missing_before > 0 {
                let gap = RunEvent::Gap {
                    missing: *missing_before,
                    before_seq: placed.seq,
                };
                w.event(Some(placed.device_time_s), &gap)?;
            }
            w.sample(placed, values, *setpoint_c)
        }
        Event::State(st) => {
            let state = RunEvent::State {
                state: st.state,
                segment: st.segment,
                from_beacon: false,
            };
            w.event(Some(f64::from(st.time_ms) / 1000.0), &state)
        }
        Event::Resampled(r) => w.event(t, &RunEvent::Resampled(*r)),
        Event::Fault(f) => {
            w.meta.counts.faults += 1;
            w.event(Some(f64::from(f.time_ms) / 1000.0), &RunEvent::fault(f))
        }
        _ => Ok(()),
    }
}

/// Discard what no beacon settled, and copy the timeline's counts into the run's metadata.
pub fn close(timeline: &mut Timeline, w: &mut RunWriter) {
    timeline.finish();
    let c = &mut w.meta.counts;
    c.gaps = timeline.gaps;
    c.gap_samples = timeline.gap_samples;
    c.device_dropped = timeline.device_dropped;
    // samples before any beacon (after the hello) are left out the same way as stale ones
    c.stale_samples = timeline.stale + timeline.unplaced;
    c.unsettled_samples = timeline.unsettled;
}
