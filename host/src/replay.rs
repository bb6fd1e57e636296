//! Replaying a run's raw byte stream: decode `raw.bin` again, exactly as the recorder did, into
//! a new run directory — with the recorded calibration or a better one. The raw stream is the
//! record of truth; everything else in a run directory can be rebuilt from it.

use std::path::Path;

use remanent_protocol::decoder::DeviceDecoder;
use remanent_protocol::{DeviceMsg, FrameError};

use crate::calibration::Calibration;
use crate::link::Timeline;
use crate::run_dir::{self, Counts, RunDirError, RunWriter, RAW_FILE};

/// Decode `from/raw.bin` into the new run directory `to`; returns the counts.
pub fn replay(
    from: &Path,
    to: &Path,
    calibration: Option<Calibration>,
) -> Result<Counts, RunDirError> {
    let mut meta = run_dir::read_meta(from)?;
    if let Some(c) = calibration {
        meta.calibration = c;
    }
    meta.counts = Counts::default();
    meta.end_reason = None;
    let raw_path = from.join(RAW_FILE);
    let raw = std::fs::read(&raw_path).map_err(|source| RunDirError::Io {
        path: raw_path.display().to_string(),
        source,
    })?;
    let mut w = RunWriter::create(to, meta)?;
    w.raw(&raw)?;
    let mut decoder = DeviceDecoder::for_device_msgs();
    let mut timeline = Timeline::default();
    let mut frames: Vec<Result<DeviceMsg, FrameError>> = Vec::new();
    decoder.feed(&raw, |f| frames.push(f));
    for f in frames {
        match f {
            Ok(DeviceMsg::Beacon(b)) => timeline.beacon(b),
            Ok(DeviceMsg::Sample(s)) => {
                if let Some(p) = timeline.place(s) {
                    let setpoint = timeline
                        .latest_beacon()
                        .filter(|b| b.setpoint_tenth_c != 0)
                        .map(|b| f64::from(b.setpoint_tenth_c) / 10.0);
                    w.sample(&p, setpoint)?;
                }
            }
            Ok(DeviceMsg::Fault(r)) => {
                w.meta.counts.faults += 1;
                w.event(
                    Some(f64::from(r.time_ms) / 1000.0),
                    "fault",
                    &format!(
                        "{:?} at {:.1} °C",
                        r.fault,
                        f64::from(r.temp_tenth_c) / 10.0
                    ),
                )?;
            }
            Ok(DeviceMsg::State(st)) => w.event(
                Some(f64::from(st.time_ms) / 1000.0),
                "state",
                &format!("{:?} (segment {})", st.state, st.segment),
            )?,
            Ok(_) => {}
            Err(FrameError::BadCrc { .. }) => w.meta.counts.frames_bad_crc += 1,
            Err(FrameError::BadCobs) => w.meta.counts.frames_bad_cobs += 1,
            Err(_) => w.meta.counts.frames_other += 1,
        }
    }
    w.meta.counts.gaps = timeline.gaps;
    w.meta.counts.gap_samples = timeline.gap_samples;
    w.meta.counts.device_dropped = timeline.device_dropped;
    let counts = w.meta.counts.clone();
    w.finish(&format!("replayed from {}", from.display()))?;
    Ok(counts)
}
