//! Words for what a run reports: every sentence a user reads about a record's progress and its
//! events is made here, as a [`Phrase`] whose quantities render in the user's display units.
//! The device's own vocabulary (faults, refusals, states, boots, heater drives) comes from
//! [`crate::link::words`].

use remanent_protocol::RunState;

use super::{CalStep, FaultMark, Notice, RunEvent, StartSeen};
use crate::link::words::{
    describe_boot, describe_fault, describe_heater, describe_refusal, describe_state,
};
use crate::phrase;
use crate::units::{temp_q, Phrase};

/// Words for an event of a record.
pub fn event(e: &RunEvent) -> Phrase {
    match e {
        // the decoder's own account names the check that failed
        RunEvent::FrameRejected { detail, .. } => phrase!(detail.as_str()),
        RunEvent::Gap {
            missing,
            before_seq,
        } => phrase!(format!("{missing} samples missing before seq {before_seq}")),
        RunEvent::State {
            state,
            segment,
            from_beacon,
        } => {
            let name = describe_state(*state);
            match (from_beacon, state) {
                (true, _) => phrase!(format!("{name} (from the beacon)")),
                (false, RunState::Profile) => phrase!(format!("{name} (segment {segment})")),
                (false, _) => phrase!(name),
            }
        }
        RunEvent::Fault { fault, temp_c } => fault_words(Some(*fault), Some(*temp_c), ""),
        RunEvent::Started(how) => phrase!(match how {
            StartSeen::Acknowledged => "profile accepted",
            StartSeen::Reported => "profile accepted: the device reports it running",
            StartSeen::Beacon => "profile running (acknowledgement lost on the link)",
        }),
        RunEvent::Refused(r) => phrase!(describe_refusal(r)),
        RunEvent::Complete(why) => why.clone(),
        RunEvent::Resent => phrase!("no answer to the profile: sent again"),
        RunEvent::StopRequested => phrase!("heater off requested as the record ends"),
        RunEvent::Stopped => phrase!("stop acknowledged; heater off"),
        RunEvent::SettleFailed(why) => phrase!("after the end: ", why.as_str()),
        RunEvent::Resampled(r) => resampled(r),
        RunEvent::Untyped { detail, .. } => phrase!(detail.as_str()),
    }
}

fn resampled(r: &crate::link::Resampled) -> Phrase {
    phrase!(format!(
        "the device's sampling changed from {} ms to {} ms at seq {}: a Configure the recorder did not send (another program on the link); each sample is timed by the sampling in force when it was taken",
        r.period_before_ms, r.period_ms, r.from_seq
    ))
}

fn fault_words(
    fault: Option<remanent_protocol::Fault>,
    temp_c: Option<f64>,
    detail: &str,
) -> Phrase {
    match (fault, temp_c) {
        (Some(f), Some(t)) => phrase!(describe_fault(f), " at ", temp_q(t, 1)),
        (Some(f), None) => phrase!(describe_fault(f)),
        _ => phrase!(detail),
    }
}

/// Words for a fault an events file lists.
pub fn fault_mark(m: &FaultMark) -> Phrase {
    fault_words(m.fault, m.temp_c, &m.detail)
}

/// Words for what a workflow tells its user.
pub fn notice(n: &Notice) -> Phrase {
    match n {
        Notice::Connecting => phrase!("connecting…"),
        Notice::Connected {
            board,
            firmware,
            ceiling_c,
        } => phrase!(
            format!(
                "connected: board `{board}`, firmware {}.{}.{}, ceiling ",
                firmware[0], firmware[1], firmware[2]
            ),
            temp_q(*ceiling_c, 0)
        ),
        Notice::HeaterDrive(d) => phrase!("heater drive: ", describe_heater(d)),
        Notice::FixtureUnidentified {
            duty_cap_pct,
            ceiling_c,
        } => phrase!(
            format!("this bench's fixture is not identified: the device heats at most {duty_cap_pct} % and to "),
            temp_q(*ceiling_c, 0),
            " until `remanent calibrate fixture` has run (hardware-notes/fixtures.md)"
        ),
        Notice::Boot(b) => phrase!(describe_boot(b).unwrap_or_else(|| "the device started".into())),
        Notice::Uncalibrated => phrase!(
            "UNCALIBRATED: measuring without a valid calibration, as asked; every output of this run says so"
        ),
        Notice::VirtualRigConstants => phrase!("virtual rig: converting with its own constants"),
        Notice::Preroll { seconds } => phrase!(format!(
            "recording {seconds:.0} s at rest before heating (room-temperature reference)…"
        )),
        Notice::Stopping => phrase!("stopping: heater off…"),
        Notice::DeviceFault(f) => {
            let at = remanent_physics::wire::c_from_tenths(f.temp_tenth_c);
            let mut p = phrase!("device fault: ");
            p.extend(fault_words(Some(f.fault), Some(at), ""));
            p.push("; heater off");
            p
        }
        Notice::ProfileFinished => phrase!("profile finished; heater off"),
        Notice::StoppedElsewhere { ran_s, shortest_s } => phrase!(format!(
            "the device stopped after {ran_s:.0} s of a profile that takes at least {shortest_s:.0} s: a Stop the recorder did not send (another program on the link?); heater off"
        )),
        Notice::Resampled(r) => resampled(r),
        Notice::Settling { c_per_min } => phrase!(
            "the fixture is still moving (",
            crate::units::Qty::one(crate::units::Kind::Span, *c_per_min, 1).signed(),
            " a minute): the room-temperature reference waits until it is steady (at most 15 min)"
        ),
        Notice::FaultReportLost => phrase!(
            "the device reports a latched fault (its fault report was lost); heater off"
        ),
        Notice::Complete(why) => why.clone(),
        Notice::SurveyUncalibrated => phrase!(
            "UNCALIBRATED: readings from a bench without a valid calibration, as asked"
        ),
        Notice::PlaceMagnets { confirm: true } => {
            phrase!("place a magnet and press Enter to read it")
        }
        Notice::PlaceMagnets { confirm: false } => phrase!(
            "place the magnets one after another; each is read once its field is stable"
        ),
        Notice::SurveyIdle => phrase!("no new magnet for a while: ending the survey"),
        Notice::StepInstructions(step) => phrase!(instructions(*step)),
        Notice::PressEnterWhenPlaced => phrase!("press Enter when it is in place"),
        Notice::VirtualSetUp => phrase!("virtual rig: set-up in place"),
        Notice::StepFound { summary, warning } => {
            let mut p = summary.clone();
            if let Some(w) = warning {
                p.push("\nwarning: ");
                p.extend(w.clone());
            }
            p
        }
    }
}

/// A calibration step's name.
pub fn step_name(step: CalStep) -> &'static str {
    match step {
        CalStep::Zero => "the probe's zero",
        CalStep::OffsetDrift => "the zero's drift",
        CalStep::Sensitivity => "the probe's sensitivity",
        CalStep::ProbeTc => "the sensitivity's temperature coefficient",
        CalStep::IcePoint => "the ice point",
        CalStep::BoilingPoint => "the boiling point",
        CalStep::Gap => "the fixture's gap",
    }
}

/// What the person at the bench does before a calibration step reads.
fn instructions(step: CalStep) -> &'static str {
    match step {
        CalStep::Zero => "put the Hall probe in the closed zero-field (mu-metal) can, away from steel and magnets",
        CalStep::OffsetDrift => "keep the probe in the zero-field can and warm the probe alone (the resistor on its standoff) by 20–30 K; the step reads for the whole warming",
        CalStep::Sensitivity => "put the probe at the centre of the coil pair, its axis along the coils', and drive the measured current",
        CalStep::ProbeTc => "keep the probe at the coil's centre with the same current and warm the probe alone by 20–30 K; the step reads for the whole warming",
        CalStep::IcePoint => "put the thermocouple at least 10 cm deep in a stirred slush of crushed ice and clean water",
        CalStep::BoilingPoint => "put the thermocouple in rolling-boiling water, not touching the pot (boiling water and steam scald: use a stable pot and keep hands clear)",
        CalStep::Gap => "clamp the reference magnet in the fixture at room temperature with the heater off",
    }
}
