//! Replaying a run's raw byte stream: decode `raw.bin` again, exactly as the recorder did, into
//! a new run directory — with the recorded calibration or a better one. The raw stream is the
//! record of truth; everything else in a run directory can be rebuilt from it.

use std::path::Path;

use remanent_protocol::decoder::DeviceDecoder;
use remanent_protocol::{DeviceMsg, FrameError, PROTOCOL_VERSION};

use crate::calibration::Calibration;
use crate::frame_log;
use crate::link::acquisition::{Event, Ingest};
use crate::run_dir::{self, Counts, RunDirError, RunWriter, RAW_FILE};

/// Decode `from/raw.bin` into the new run directory `to`; returns the counts.
pub fn replay(
    from: &Path,
    to: &Path,
    calibration: Option<Calibration>,
) -> Result<Counts, RunDirError> {
    let mut meta = run_dir::read_meta(from)?;
    let refuse = |reason: String| RunDirError::Replay {
        path: from.display().to_string(),
        reason,
    };
    if let Some(d) = meta
        .device
        .as_ref()
        .filter(|d| d.protocol != PROTOCOL_VERSION)
    {
        return Err(refuse(format!(
            "its raw stream was recorded in protocol {} (firmware {}); this build decodes protocol {PROTOCOL_VERSION}: replay it with a remanent of that protocol",
            d.protocol, d.firmware
        )));
    }
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
    let mut ingest = Ingest::new(meta.calibration);
    let mut w = RunWriter::create(to, meta)?;
    w.raw(&raw)?;
    let mut decoder = DeviceDecoder::for_device_msgs();
    let mut frames: Vec<Result<DeviceMsg, FrameError>> = Vec::new();
    decoder.feed(&raw, |f| frames.push(f));
    let mut last_t = None;
    let mut events = Vec::new();
    for f in frames {
        events.clear();
        ingest.frame_into(f, &mut events);
        for e in &events {
            frame_log::log(&mut w, e, last_t)?;
            if let Event::Sample { placed, .. } = e {
                last_t = Some(placed.device_time_s);
            }
        }
    }
    frame_log::close(&mut ingest.timeline, &mut w);
    let counts = w.meta.counts.clone();
    if counts.samples == 0 {
        w.discard();
        return Err(refuse(
            "no sample could be rebuilt from its raw stream (nothing written)".into(),
        ));
    }
    w.finish(&format!("replayed from {}", from.display()))?;
    Ok(counts)
}
