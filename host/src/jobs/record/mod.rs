//! Recording one heat cycle: handshake, send the profile, keep the heartbeat, write every byte
//! and every sample as it arrives, report progress, and end cleanly on completion, a fault,
//! a user's stop or a lost link, keeping everything received — or as soon as the analysis
//! can state what the record is for (`auto_end`).

pub mod auto_end;
mod recorder;
mod types;

use crate::calibration::policy::Basis;
pub use types::{
    LiveSample, LiveStatus, Progress, Quiet, RecordEnd, RecordError, RecordOptions, RecordSummary,
};

use std::io::{Read, Write};

use remanent_protocol::Command;

use crate::event::{Notice, RunEvent};
use crate::frame_log;
use crate::link::acquisition::Acquisition;
use crate::link::words::describe_boot;
use crate::link::LinkError;
use crate::run_dir::{utc_now, Counts, DeviceInfo, RunDirError, RunMeta, RunWriter};
use recorder::Recorder;

/// A device capping its duty at this or less is running its model-free limits.
const MODEL_FREE_CAP_PCT: u8 = 20;

/// Record one cycle from `port`.
pub fn record<P: Read + Write>(
    port: P,
    opts: RecordOptions,
    progress: &mut dyn Progress,
) -> Result<RecordSummary, RecordError> {
    if opts.out.exists() {
        return Err(RunDirError::Exists(opts.out.display().to_string()).into());
    }
    progress.notice(&Notice::Connecting);
    let (mut acq, hello, mut early) =
        Acquisition::connect(port, opts.calibration, opts.silence_timeout)?;
    let ceiling_c = remanent_physics::wire::c_from_tenths(hello.limits.ceiling_tenth_c);
    progress.notice(&Notice::Connected {
        board: hello.board.as_str().to_string(),
        firmware: hello.firmware,
        ceiling_c,
    });
    progress.notice(&Notice::HeaterDrive(hello.heater));
    if opts.calibration.fixture.is_none() && hello.limits.duty_cap_pct <= MODEL_FREE_CAP_PCT {
        progress.notice(&Notice::FixtureUnidentified {
            duty_cap_pct: hello.limits.duty_cap_pct,
            ceiling_c,
        });
    }
    if describe_boot(&hello.boot).is_some() {
        progress.notice(&Notice::Boot(hello.boot));
    }
    let basis = opts
        .policy
        .accept(&hello, &opts.calibration, crate::calibration::Stamp::now())?;
    match basis {
        Basis::Uncalibrated => progress.notice(&Notice::Uncalibrated),
        Basis::VirtualRig => progress.notice(&Notice::VirtualRigConstants),
        Basis::Calibrated => {}
    }
    if let Some(cfg) = opts.sampling {
        // asked before anything is written: a refusal leaves no run directory behind
        acq.ask(Command::Configure(cfg), "the sampling period", &mut early)?;
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
        calibration_basis: Some(basis),
        counts: Counts::default(),
        inspection: opts.inspection.clone(),
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
            // nothing was recorded: leave no directory behind to block the name
            let _ = acq.send(Command::Stop);
            w.discard();
            return Err(e.into());
        }
        Err(RecordError::Link(e)) => RecordEnd::LinkLost(e.to_string()),
        Err(RecordError::RunDir(e)) => RecordEnd::WriteFailed(e.to_string()),
        Err(e @ RecordError::Calibration(_)) => {
            let _ = acq.send(Command::Stop);
            w.discard();
            return Err(e);
        }
    };
    // the heater goes off on every way out, not only when the device says it did
    if !matches!(end, RecordEnd::Stopped | RecordEnd::Complete(_))
        && acq.send(Command::Stop).is_ok()
    {
        let t = acq.device_now_s();
        let _ = w.event(Some(t), &RunEvent::StopRequested);
    }
    if let RecordEnd::WriteFailed(_) = &end {
        frame_log::close(&mut acq.ingest.timeline, &mut w);
        let counts = w.meta.counts.clone();
        let dir = w.finish_after_failure(&end.describe());
        return Ok(RecordSummary { dir, end, counts });
    }
    if !matches!(end, RecordEnd::LinkLost(_)) {
        // the samples since the last beacon wait for the next one to settle their numbers
        if let Err(e) = rec.settle(&mut acq, &mut w) {
            let _ = w.event(None, &RunEvent::SettleFailed(e.to_string()));
        }
    }
    frame_log::close(&mut acq.ingest.timeline, &mut w);
    let counts = w.meta.counts.clone();
    let dir = w.finish(&end.describe())?;
    Ok(RecordSummary { dir, end, counts })
}
