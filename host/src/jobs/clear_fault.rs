//! Clearing a latched fault on purpose: say which fault is latched and why the heater is off,
//! ask the device to clear it, and report its answer (it refuses while the cause persists, or
//! until the fixture is back near ambient, or when heating is locked).

use std::io::{Read, Write};
use std::time::Duration;

use remanent_protocol::{Command, DeviceHello, Fault, RefuseReason};

use crate::calibration::Calibration;
use crate::link::acquisition::{Acquisition, Event};
use crate::link::LinkError;

/// What happened.
#[derive(Debug, Clone, PartialEq)]
pub enum Cleared {
    /// Nothing was latched.
    NothingLatched,
    /// The fault was cleared.
    Cleared(Fault),
    /// The device refused, with its reason.
    Refused(Fault, RefuseReason),
}

/// Connect, show the device's latched fault, and ask it to clear it.
pub fn run<P: Read + Write>(
    port: P,
    calibration: Calibration,
) -> Result<(DeviceHello, Cleared), LinkError> {
    let (mut acq, hello, _) = Acquisition::connect(port, calibration, Duration::from_secs(5))?;
    let Some(fault) = hello.latched else {
        return Ok((hello, Cleared::NothingLatched));
    };
    let id = acq.send(Command::ClearFault)?;
    let reply = acq.wait_for(
        Duration::from_secs(5),
        |e| matches!(e, Event::Reply { id: i, .. } if *i == id),
    )?;
    let outcome = match reply {
        Some(Event::Reply { result: Ok(()), .. }) => Cleared::Cleared(fault),
        Some(Event::Reply {
            result: Err(RefuseReason::NoFaultLatched),
            ..
        }) => Cleared::NothingLatched,
        Some(Event::Reply { result: Err(r), .. }) => Cleared::Refused(fault, r),
        _ => return Err(LinkError::NoAnswer("clear-fault")),
    };
    Ok((hello, outcome))
}
