//! What a recording is asked for, what it shows while running, how it ends and how it fails.

use std::path::PathBuf;
use std::sync::atomic::AtomicBool;
use std::sync::Arc;
use std::time::Duration;

use remanent_protocol::{Fault, RunState};

use crate::calibration::Calibration;
use crate::event::Notice;
use crate::link::words::describe_fault;
use crate::link::LinkError;
use crate::magnets::MagnetInfo;
use crate::profiles::ProfileSpec;
use crate::run_dir::{Counts, RunDirError};

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
    /// Whether the bench may measure with it (checked against the device's hello).
    pub policy: crate::calibration::policy::Policy,
    /// New run directory.
    pub out: PathBuf,
    /// The link counts as lost after this long without a byte.
    pub silence_timeout: Duration,
    /// Device time recorded with the heater off before the profile starts, s: a settled
    /// room-temperature reference with the magnet at rest.
    pub preroll_s: f64,
    /// Lot, purchase order, supplier and operator, kept in `run.toml`.
    pub inspection: crate::inspection::Inspection,
    /// End the record once the analysis can state α and the loss to this tolerance (None:
    /// run the profile to its end).
    pub auto_end: Option<super::auto_end::Tolerance>,
    /// Set to stop (Ctrl-C, or a termination or hang-up signal).
    pub stop: Arc<AtomicBool>,
    /// The sampling to ask the device for before recording (None: the board's own, 100 ms).
    pub sampling: Option<remanent_protocol::SamplingConfig>,
}

impl RecordOptions {
    /// A record of `magnet` under `profile` into `out`, converting with `calibration`, with
    /// the defaults: the calibration policy's default, a link lost after 3 s of silence, a
    /// minute at rest before heating, the profile run to its end, no inspection details and a
    /// stop flag of its own.
    pub fn new(
        magnet: MagnetInfo,
        profile: ProfileSpec,
        calibration: Calibration,
        out: PathBuf,
    ) -> RecordOptions {
        RecordOptions {
            port_label: String::new(),
            magnet,
            profile,
            calibration,
            policy: Default::default(),
            out,
            silence_timeout: Duration::from_secs(3),
            preroll_s: 60.0,
            inspection: Default::default(),
            auto_end: None,
            stop: Arc::new(AtomicBool::new(false)),
            sampling: None,
        }
    }
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

/// One sample as it arrives, for a live view (the record keeps every one in samples.csv).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LiveSample {
    /// Device time, s.
    pub device_time_s: f64,
    /// Thermocouple, °C (none: no valid reading).
    pub temp_c: Option<f64>,
    /// Flux density, mT.
    pub flux_mt: Option<f64>,
    /// The setpoint in force, °C (none: heater off).
    pub setpoint_c: Option<f64>,
    /// Heater duty, %.
    pub duty_pct: f64,
    /// The profile has started (before it: the rest at room temperature).
    pub heating: bool,
}

/// Receives progress while recording: the live figures, every sample as it arrives, and typed
/// notices (words for them from [`crate::event::words::notice`], in the receiver's display
/// units). A receiver must not block: the recorder waits for it.
pub trait Progress {
    /// The figures changed.
    fn update(&mut self, status: &LiveStatus);
    /// Something worth telling the user.
    fn notice(&mut self, notice: &Notice);
    /// A sample arrived (placed on the record's timeline).
    fn sample(&mut self, _sample: &LiveSample) {}
}

/// The rate of temperature change over the last `window_s` once it spans more than 5 s, °C/min,
/// with (`t`, `temp_c`) added to `history` and what is older than the window dropped.
pub(super) fn ramp_rate(
    history: &mut std::collections::VecDeque<(f64, f64)>,
    t: f64,
    temp_c: f64,
    window_s: f64,
) -> Option<f64> {
    history.push_back((t, temp_c));
    while history.front().is_some_and(|h| t - h.0 > window_s) {
        history.pop_front();
    }
    let (a, b) = (history.front()?, history.back()?);
    (b.0 - a.0 > 5.0).then(|| (b.1 - a.1) / (b.0 - a.0) * 60.0)
}

/// Progress that goes nowhere.
pub struct Quiet;
impl Progress for Quiet {
    fn update(&mut self, _: &LiveStatus) {}
    fn notice(&mut self, _: &Notice) {}
}

/// How a record ended.
#[derive(Debug, Clone, PartialEq)]
pub enum RecordEnd {
    /// The profile ran to its end.
    Finished,
    /// The analysis, asked during the run, could state α and the loss to the tolerance: the
    /// record ended there (heater off, acknowledged).
    Complete(crate::units::Phrase),
    /// The user stopped it; the device acknowledged the stop.
    Stopped,
    /// The device went idle before its profile could have ended: stopped by something other
    /// than this recorder (another program on the link).
    StoppedElsewhere {
        /// Device time the profile ran, s.
        ran_s: f64,
        /// The shortest the profile can take, s.
        shortest_s: f64,
    },
    /// The device tripped an interlock; its heater is off.
    Fault(Fault),
    /// The device reports a latched fault whose report did not arrive intact; heater off.
    DeviceFaulted,
    /// The link went away; everything received is kept.
    LinkLost(String),
    /// The record could not be written (a full disk); every complete row is kept.
    WriteFailed(String),
}

impl RecordEnd {
    /// Words for the metadata and the user.
    pub fn describe(&self) -> String {
        match self {
            RecordEnd::Finished => "profile finished".into(),
            RecordEnd::Complete(why) => why.to_string(),
            RecordEnd::Stopped => "stopped by the user; heater off (acknowledged)".into(),
            RecordEnd::StoppedElsewhere { ran_s, shortest_s } => format!(
                "stopped by the device after {ran_s:.0} s of a profile that takes at least {shortest_s:.0} s: a Stop from another program on the link, not from this recorder"
            ),
            RecordEnd::Fault(f) => format!("device fault: {}; heater off", describe_fault(*f)),
            RecordEnd::DeviceFaulted => {
                "the device reports a latched fault (report lost on the link): heater off".into()
            }
            RecordEnd::LinkLost(why) => format!("link lost: {why}"),
            RecordEnd::WriteFailed(why) => {
                format!("could not write the record ({why}); every complete row is kept")
            }
        }
    }
}

impl RecordEnd {
    /// [`RecordEnd::describe`] for the user, in the display units `u`.
    pub fn describe_in(&self, u: &crate::units::DisplayUnits) -> String {
        match self {
            RecordEnd::Complete(why) => why.render(u),
            other => other.describe(),
        }
    }

    /// The record has what it was for: the profile ran out, or the analysis ended it.
    pub fn is_complete(&self) -> bool {
        matches!(self, RecordEnd::Finished | RecordEnd::Complete(_))
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
    /// The bench may not measure with this calibration (nothing was started).
    #[error(transparent)]
    Calibration(#[from] crate::calibration::policy::PolicyError),
}
