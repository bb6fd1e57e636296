//! Fault drills on a test build: make the firmware fail as a bug would (a panic, a hung loop)
//! while the heater is on, and check from the device's own words that it came back through a
//! reset, latched, with the heater off, and says why. Boards built for users refuse drills.

use std::io::{Read, Write};
use std::time::{Duration, Instant};

use remanent_protocol::{Command, DeviceMsg, Drill, ResetCause, RunState};

use crate::link::words::{describe_boot, describe_refusal};
use crate::link::{LinkError, Session};
use crate::selftest::Step;

/// What a drill must lead to.
fn expected_reset(drill: Drill) -> ResetCause {
    match drill {
        Drill::Panic => ResetCause::Panic,
        Drill::Hang => ResetCause::Watchdog,
        Drill::StackOverflow => ResetCause::HardFault,
    }
}

/// Read until `until` holds for a message or `timeout` passes (heartbeats on the way).
fn read_until<P: Read + Write>(
    s: &mut Session<P>,
    timeout: Duration,
    mut until: impl FnMut(&DeviceMsg) -> bool,
) -> Result<Option<DeviceMsg>, LinkError> {
    let start = Instant::now();
    let mut beat = Instant::now();
    while start.elapsed() < timeout {
        if beat.elapsed() > Duration::from_millis(500) {
            s.send(Command::Heartbeat)?;
            beat = Instant::now();
        }
        for m in s.read()?.frames.into_iter().flatten() {
            if until(&m) {
                return Ok(Some(m));
            }
        }
    }
    Ok(None)
}

/// Run `drill` on the device at `port`: heat, fail, and check the way back.
pub fn run<P: Read + Write>(port: P, drill: Drill) -> Result<Vec<Step>, LinkError> {
    let mut s = Session::new(port);
    let hello = s.handshake(Duration::from_secs(10), &mut |_| {})?;
    let mut steps = Vec::new();
    if hello.boot.reset != ResetCause::PowerOn {
        s.send(Command::ClearFault)?;
    }
    // heat gently: 5 K above the reading, limit 20 K above
    let first = read_until(
        &mut s,
        Duration::from_secs(10),
        |m| matches!(m, DeviceMsg::Sample(x) if x.thermo.fault().is_none()),
    )?;
    let Some(DeviceMsg::Sample(first)) = first else {
        return Err(LinkError::NoAnswer("samples"));
    };
    let t0 = first.thermo.tc_tenth_c();
    s.send(Command::Manual {
        setpoint_tenth_c: t0 + 50,
        limit_tenth_c: t0 + 200,
    })?;
    let heating = read_until(
        &mut s,
        Duration::from_secs(10),
        |m| matches!(m, DeviceMsg::Sample(x) if x.duty > 0 && x.status.heater_enabled()),
    )?;
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
    let refused = read_until(
        &mut s,
        Duration::from_millis(300),
        |m| matches!(m, DeviceMsg::Refused(r) if r.id == id),
    )?;
    if let Some(DeviceMsg::Refused(r)) = refused {
        steps.push(Step {
            name: "drill carried out",
            passed: false,
            detail: describe_refusal(&r.reason),
        });
        return Ok(steps);
    }
    let again = s.handshake(Duration::from_secs(15), &mut |_| {})?;
    let back_s = sent.elapsed().as_secs_f64();
    let want = expected_reset(drill);
    steps.push(Step {
        name: "reset and says why",
        passed: again.boot.reset == want,
        detail: format!(
            "back after {back_s:.1} s: {}",
            describe_boot(&again.boot).unwrap_or_else(|| "a plain power-on (wrong)".into())
        ),
    });
    let latched = read_until(
        &mut s,
        Duration::from_secs(5),
        |m| matches!(m, DeviceMsg::Beacon(b) if b.state == RunState::Faulted),
    )?;
    let off = read_until(
        &mut s,
        Duration::from_secs(5),
        |m| matches!(m, DeviceMsg::Sample(x) if x.duty == 0 && !x.status.heater_enabled() && x.status.fault_latched()),
    )?;
    steps.push(Step {
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
        ),
    });
    let id = s.send(Command::ClearFault)?;
    let cleared = read_until(
        &mut s,
        Duration::from_secs(5),
        |m| matches!(m, DeviceMsg::Ack(a) if a.id == id),
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
