//! What a run reports, typed: a [`Notice`] is what a workflow tells its user while it runs, a
//! [`RunEvent`] what a record keeps in `events.csv` (written and read with the csv crate in
//! [`file`]). Neither carries a sentence: words for both come from one place, [`words`], in the
//! user's display units.

pub mod file;
pub mod words;

use remanent_protocol::{BootReport, Fault, FaultReport, HeaterDrive, RefuseReason, RunState};

use crate::units::Phrase;

/// How a frame failed its check.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rejection {
    /// Its CRC did not match.
    BadCrc,
    /// Its COBS framing was broken.
    BadCobs,
    /// Anything else (too long, an unknown message, bad fields).
    Other,
}

/// How the recorder learnt that the profile started.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StartSeen {
    /// The device acknowledged the command.
    Acknowledged,
    /// The device reported its state as running the profile.
    Reported,
    /// A beacon showed it running (the acknowledgement was lost on the link).
    Beacon,
}

/// Something a record keeps in its events file, at a device time.
#[derive(Debug, Clone, PartialEq)]
pub enum RunEvent {
    /// A frame failed its check and was dropped.
    FrameRejected {
        /// How.
        rejection: Rejection,
        /// The decoder's account, as it gave it.
        detail: String,
    },
    /// Samples were missing before sequence number `before_seq`.
    Gap {
        /// How many.
        missing: u64,
        /// The first sample after the gap.
        before_seq: u32,
    },
    /// The device's run state: from its report, or from a beacon (`from_beacon`).
    State {
        /// The state.
        state: RunState,
        /// The profile segment.
        segment: u8,
        /// Seen in a beacon rather than reported.
        from_beacon: bool,
    },
    /// An interlock tripped.
    Fault {
        /// Which.
        fault: Fault,
        /// The thermocouple's reading then, °C.
        temp_c: f64,
    },
    /// The profile started.
    Started(StartSeen),
    /// The device refused a command.
    Refused(RefuseReason),
    /// The analysis, asked during the run, could state what the record is for.
    Complete(Phrase),
    /// The profile had no answer and was sent again.
    Resent,
    /// The heater was asked off as the record ended.
    StopRequested,
    /// The user's stop, acknowledged by the device.
    Stopped,
    /// The last samples could not be settled after the end.
    SettleFailed(String),
    /// The device's sampling changed during the record (a Configure the recorder never sends).
    Resampled(crate::link::Resampled),
    /// A row of an events file written before events were typed: its kind and words.
    Untyped {
        /// The kind column.
        kind: String,
        /// The detail column.
        detail: String,
    },
}

impl RunEvent {
    /// The event of a device's fault report.
    pub fn fault(f: &FaultReport) -> RunEvent {
        RunEvent::Fault {
            fault: f.fault,
            temp_c: remanent_physics::wire::c_from_tenths(f.temp_tenth_c),
        }
    }
}

/// A fault as a record's events file keeps it: typed when the file says which, and its words
/// for a file from before events were typed.
#[derive(Debug, Clone, PartialEq)]
pub struct FaultMark {
    /// The fault, when the file names it.
    pub fault: Option<Fault>,
    /// The thermocouple's reading then, °C, when the file gives it.
    pub temp_c: Option<f64>,
    /// The file's own words (an older file's only account).
    pub detail: String,
}

/// A calibration step, by what it calibrates (for its words).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CalStep {
    /// The Hall probe's zero.
    Zero,
    /// The zero's drift with the probe's temperature.
    OffsetDrift,
    /// The probe's sensitivity.
    Sensitivity,
    /// The sensitivity's temperature coefficient.
    ProbeTc,
    /// The thermocouple at the ice point.
    IcePoint,
    /// The thermocouple at the boiling point.
    BoilingPoint,
    /// The fixture's gap.
    Gap,
}

/// What a workflow tells its user while it runs.
#[derive(Debug, Clone, PartialEq)]
pub enum Notice {
    /// Opening the link and asking for the device's hello.
    Connecting,
    /// The device answered.
    Connected {
        /// Its board's name.
        board: String,
        /// Its firmware's version.
        firmware: [u8; 3],
        /// The highest temperature it will heat to, °C.
        ceiling_c: f64,
    },
    /// How the device drives its heater.
    HeaterDrive(HeaterDrive),
    /// The bench's fixture is not identified: the device heats under its model-free limits.
    FixtureUnidentified {
        /// Its duty cap, %.
        duty_cap_pct: u8,
        /// Its ceiling, °C.
        ceiling_c: f64,
    },
    /// Why the device last started, when that is news (a reset, a latch, a lock).
    Boot(BootReport),
    /// Measuring without a valid calibration, as the user asked.
    Uncalibrated,
    /// The virtual rig's own constants convert the readings.
    VirtualRigConstants,
    /// Recording at rest before heating, for `seconds`.
    Preroll {
        /// How long, s.
        seconds: f64,
    },
    /// The fixture is still warming or cooling: the rest goes on until it is steady.
    Settling {
        /// How fast it moves, °C/min.
        c_per_min: f64,
    },
    /// The user asked to stop: the heater is going off.
    Stopping,
    /// The device tripped an interlock; its heater is off.
    DeviceFault(FaultReport),
    /// The profile ran to its end; the heater is off.
    ProfileFinished,
    /// The device went idle before its profile could have ended: a Stop the recorder did not
    /// send (another program on the link).
    StoppedElsewhere {
        /// Device time the profile ran, s.
        ran_s: f64,
        /// The shortest the profile can take, s.
        shortest_s: f64,
    },
    /// The device reports a latched fault whose report was lost on the link.
    FaultReportLost,
    /// The device's sampling changed: another program configured it.
    Resampled(crate::link::Resampled),
    /// The analysis could state what the record is for: it ends here.
    Complete(Phrase),
    /// A survey reads from a bench without a valid calibration, as the user asked.
    SurveyUncalibrated,
    /// A survey waits for magnets: `confirm`, each read when the user presses Enter;
    /// otherwise each once its field is stable.
    PlaceMagnets {
        /// The user confirms each placement.
        confirm: bool,
    },
    /// No new magnet came for a while: the survey ends.
    SurveyIdle,
    /// What the person at the bench does before a calibration step reads.
    StepInstructions(CalStep),
    /// The step waits for Enter once its set-up is in place.
    PressEnterWhenPlaced,
    /// The virtual rig put the step's set-up in place.
    VirtualSetUp,
    /// A step found its constant.
    StepFound {
        /// The constant, with its value and standard uncertainty.
        summary: Phrase,
        /// A check that failed.
        warning: Option<Phrase>,
    },
}
