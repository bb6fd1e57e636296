//! Fault drills on a test build: make the firmware fail as a bug would (a panic, a hung loop)
//! while the heater is on, and check from the device's own words that it came back through a
//! reset, latched, with the heater off, and says why. Boards built for users refuse drills.

use std::io::{Read, Write};
use std::time::{Duration, Instant};

use remanent_protocol::{Command, Drill, ResetCause, RunState};

use crate::calibration::Calibration;
use crate::jobs::selftest::Step;
use crate::link::acquisition::{Acquisition, Event};
use crate::link::words::{describe_boot, describe_refusal};
use crate::link::LinkError;

/// The link may be quiet this long while the device resets.
const SILENCE: Duration = Duration::from_secs(15);

/// What a drill must lead to.
fn expected_reset(drill: Drill) -> ResetCause {
    match drill {
        Drill::Panic => ResetCause::Panic,
        Drill::Hang => ResetCause::Watchdog,
        Drill::StackOverflow => ResetCause::HardFault,
    }
}

/// Run `drill` on the device at `port`: heat, fail, and check the way back.
pub fn run<P: Read + Write>(
    port: P,
    calibration: Calibration,
    drill: Drill,
) -> Result<Vec<Step>, LinkError> {
    let (mut s, hello, _) = Acquisition::connect(port, calibration, SILENCE)?;
    let mut steps = Vec::new();
    if hello.boot.reset != ResetCause::PowerOn {
        s.send(Command::ClearFault)?;
    }
    // heat gently: 5 K above the reading, limit 20 K above
    let first = s.wait_for(
        Duration::from_secs(10),
        |e| matches!(e, Event::Sample { placed, .. } if placed.sample.thermo.fault().is_none()),
    )?;
    let Some(Event::Sample { placed, .. }) = first else {
        return Err(LinkError::NoAnswer("samples"));
    };
    let t0 = placed.sample.thermo.tc_tenth_c();
    s.send(Command::Manual {
        setpoint_tenth_c: t0 + 50,
        limit_tenth_c: t0 + 200,
    })?;
    let heating = s.wait_for(Duration::from_secs(10), |e| {
        matches!(e, Event::Sample { placed, .. }
            if placed.sample.duty > 0 && placed.sample.status.heater_enabled())
    })?;
    steps.push(Step {
        name: "heater on before the drill",
        passed: heating.is_some(),
        detail: if heating.is_some() {
            "heating".into()
        } else {
            "the heater never came on".into()
        },
    });
    let id = s.send(Command::Drill(drill))?;
    let sent = Instant::now();
    // a board that refuses drills answers at once
    let refused = s.wait_for(
        Duration::from_millis(300),
        |e| matches!(e, Event::Reply { id: i, result: Err(_) } if *i == id),
    )?;
    if let Some(Event::Reply { result: Err(r), .. }) = refused {
        steps.push(Step {
            name: "drill carried out",
            passed: false,
            detail: describe_refusal(&r).into(),
        });
        return Ok(steps);
    }
    let again = s.rehandshake(Duration::from_secs(15))?;
    let back_s = sent.elapsed().as_secs_f64();
    let want = expected_reset(drill);
    steps.push(Step {
        name: "reset and says why",
        passed: again.boot.reset == want,
        detail: format!(
            "back after {back_s:.1} s: {}",
            describe_boot(&again.boot).unwrap_or_else(|| "a plain power-on (wrong)".into())
        )
        .into(),
    });
    steps.push(comes_up_latched(&mut s)?);
    let id = s.send(Command::ClearFault)?;
    let cleared = s.wait_for(
        Duration::from_secs(5),
        |e| matches!(e, Event::Reply { id: i, result: Ok(()) } if *i == id),
    )?;
    steps.push(Step {
        name: "cleared near ambient",
        passed: cleared.is_some(),
        detail: if cleared.is_some() {
            "cleared".into()
        } else {
            "clear refused".into()
        },
    });
    Ok(steps)
}

/// After the reset: the state is latched and the samples show the heater off.
fn comes_up_latched<P: Read + Write>(s: &mut Acquisition<P>) -> Result<Step, LinkError> {
    let latched = s.wait_for(
        Duration::from_secs(5),
        |e| matches!(e, Event::Beacon(b) if b.state == RunState::Faulted),
    )?;
    let off = s.wait_for(Duration::from_secs(5), |e| {
        matches!(e, Event::Sample { placed, .. } if {
            let x = placed.sample;
            x.duty == 0 && !x.status.heater_enabled() && x.status.fault_latched()
        })
    })?;
    Ok(Step {
        name: "comes up latched, heater off",
        passed: latched.is_some() && off.is_some(),
        detail: format!(
            "state {}, heater {}",
            if latched.is_some() {
                "latched"
            } else {
                "not latched (wrong)"
            },
            if off.is_some() {
                "off"
            } else {
                "not seen off (wrong)"
            }
        )
        .into(),
    })
}
