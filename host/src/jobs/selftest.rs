//! The bench self-test: why the device last started, the device answers, every sensor reads
//! sensibly, the heater heats, and an injected fault drives the heater off within one control
//! period and latches until cleared. Run it after building or rewiring a rig (and in CI
//! against the emulated board). It talks to the device through the acquisition engine.

use crate::units::{self, temp_q};
use std::io::{Read, Write};
use std::time::Duration;

use remanent_protocol::{Command, DeviceHello, Fault, RefuseReason, Sample};

use crate::calibration::Calibration;
use crate::conversion::Converted;
use crate::link::acquisition::{Acquisition, Event};
use crate::link::words::{describe_boot, describe_fault, describe_refusal};
use crate::link::LinkError;

/// Steps a complete self-test reports.
pub const STEPS: usize = 7;
/// The heating step sets a target this far above the start, K …
pub const HEAT_BY_K: f64 = 8.0;
/// … and checks that the reading rises by this much toward it, K.
pub const RISE_CHECK_K: f64 = 2.0;
/// The rise must come within this much device time, s.
pub const RISE_WITHIN_S: f64 = 300.0;
/// The run limit sits this far above the heating target, K.
const LIMIT_ABOVE_TARGET_K: f64 = 15.0;
/// The link counts as lost after this long without a byte.
const SILENCE: Duration = Duration::from_secs(5);

/// One step's result.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    /// What was checked.
    pub name: &'static str,
    /// Whether it passed.
    pub passed: bool,
    /// What was seen.
    pub detail: crate::units::Phrase,
}

/// A sample with its converted values and device time.
#[derive(Debug, Clone, Copy)]
struct Seen {
    sample: Sample,
    values: Converted,
    time_s: f64,
}

struct Probe<P> {
    acq: Acquisition<P>,
    replies: Vec<(u16, Result<(), RefuseReason>)>,
    faults: Vec<(Fault, f64)>,
}

impl<P: Read + Write> Probe<P> {
    /// Read until `until` says stop or `max_samples` samples went by.
    fn watch(
        &mut self,
        max_samples: usize,
        mut until: impl FnMut(&Seen) -> bool,
    ) -> Result<Option<Seen>, LinkError> {
        let mut seen = 0;
        while seen < max_samples {
            for e in self.acq.poll()?.events {
                match e {
                    Event::Reply { id, result } => self.replies.push((id, result)),
                    Event::Fault(r) => self.faults.push((r.fault, f64::from(r.time_ms) / 1000.0)),
                    Event::Sample { placed, values, .. } => {
                        seen += 1;
                        let s = Seen {
                            sample: placed.sample,
                            values,
                            time_s: placed.device_time_s,
                        };
                        if until(&s) {
                            return Ok(Some(s));
                        }
                    }
                    _ => {}
                }
            }
        }
        Ok(None)
    }

    /// Whether the device acknowledged command `id` (so far).
    fn acked(&self, id: u16) -> bool {
        self.replies.iter().any(|(i, r)| *i == id && r.is_ok())
    }

    /// The device's answer to command `id`, reading up to `max_samples` samples for it.
    fn reply(
        &mut self,
        id: u16,
        max_samples: usize,
    ) -> Result<Option<Result<(), RefuseReason>>, LinkError> {
        let find = |p: &Self| p.replies.iter().find(|(i, _)| *i == id).map(|(_, r)| *r);
        let mut seen = 0;
        while find(self).is_none() && seen < max_samples {
            self.watch(1, |_| true)?;
            seen += 1;
        }
        Ok(find(self))
    }
}

/// Step 0: why the device last started and what is latched now. A latch the host caused (an
/// emergency stop, a lost heartbeat) is cleared so the test can go on; any other is left for
/// the operator: a heating fault is cleared only by `remanent clear-fault`, after a look at
/// the fixture, never by a test on its own.
fn start_up<P: Read + Write>(p: &mut Probe<P>, hello: &DeviceHello) -> Result<Step, LinkError> {
    use remanent_firmware::safety::latch::{class, FaultClass};
    let boot = describe_boot(&hello.boot);
    let latched = hello
        .latched
        .map(|f| format!("latched: {}", describe_fault(f)));
    let why = match (boot, latched) {
        (None, None) => {
            return Ok(Step {
                name: "start-up",
                passed: true,
                detail: "power-on, nothing latched".into(),
            })
        }
        (Some(b), Some(l)) => format!("{b}; {l}"),
        (Some(x), None) | (None, Some(x)) => x,
    };
    match hello.latched.map(class) {
        None => {
            return Ok(Step {
                name: "start-up",
                passed: true,
                detail: format!("{why}; nothing latched now").into(),
            })
        }
        Some(FaultClass::Host) => {}
        Some(_) => {
            return Ok(Step {
                name: "start-up",
                passed: false,
                detail: format!(
                "{why}; left latched: check the fixture, then clear it with `remanent clear-fault`"
            )
                .into(),
            })
        }
    }
    let id = p.acq.send(Command::ClearFault)?;
    let reply = p.reply(id, 50)?;
    let passed = matches!(
        reply,
        Some(Ok(())) | Some(Err(RefuseReason::NoFaultLatched))
    );
    let detail = match reply {
        Some(Ok(())) => format!("{why}; cleared"),
        Some(Err(RefuseReason::NoFaultLatched)) => format!("{why}; already cleared"),
        Some(Err(r)) => format!("{why}; not cleared: {}", describe_refusal(&r)),
        None => format!("{why}; no answer to the clear"),
    };
    Ok(Step {
        name: "start-up",
        passed,
        detail: detail.into(),
    })
}

/// Steps 1–3: the sensors read sensibly; the thermocouple's temperature.
fn sensors(first: &Seen, steps: &mut Vec<Step>) -> Option<f64> {
    let c = first.values;
    let plausible = |t: Option<f64>| t.is_some_and(|t| (-20.0..80.0).contains(&t));
    steps.push(Step {
        name: "thermocouple",
        passed: plausible(c.temp_c),
        detail: match c.temp_c {
            Some(t) => crate::phrase![
                temp_q(t, 2),
                " (cold junction ",
                temp_q(c.cold_junction_c, 2),
                ")"
            ],
            None => format!(
                "converter fault: {}",
                first
                    .sample
                    .thermo
                    .fault()
                    .map_or("implausible word", crate::conversion::thermo_fault_name)
            )
            .into(),
        },
    });
    steps.push(Step {
        name: "probe thermistor",
        passed: plausible(c.probe_c),
        detail: c
            .probe_c
            .map(|t| crate::phrase![temp_q(t, 2)])
            .unwrap_or_else(|| "open or shorted".into()),
    });
    steps.push(Step {
        name: "Hall probe",
        passed: !c.hall_saturated,
        detail: c
            .flux_mt
            .map(|b| {
                crate::phrase![
                    units::flux(b, 2),
                    format!(" (code {})", first.sample.hall_code)
                ]
            })
            .unwrap_or_default(),
    });
    c.temp_c
}

/// Step 4: the heater raises the temperature by [`RISE_CHECK_K`] toward a target
/// [`HEAT_BY_K`] above the start; the time is counted from the step's own start.
fn heats<P: Read + Write>(p: &mut Probe<P>, t0: f64) -> Result<(Step, f64), LinkError> {
    let target = t0 + HEAT_BY_K;
    let started_s = p.acq.device_now_s();
    let id = p.acq.send(Command::Manual {
        setpoint_tenth_c: remanent_physics::wire::tenths_from_c(target),
        limit_tenth_c: remanent_physics::wire::tenths_from_c(target + LIMIT_ABOVE_TARGET_K),
    })?;
    if let Some(Err(r)) = p.reply(id, 50)? {
        // a latched fault (or another refusal) is named, not mistaken for a weak heater
        let step = Step {
            name: "heater heats",
            passed: false,
            detail: format!("not started: {}", describe_refusal(&r)).into(),
        };
        return Ok((step, target));
    }
    let max_samples = (RISE_WITHIN_S * 10.0) as usize;
    let rose = p.watch(max_samples, |s| {
        s.values.temp_c.is_some_and(|t| t > t0 + RISE_CHECK_K)
    })?;
    let step = Step {
        name: "heater heats",
        passed: rose.is_some() && p.acked(id),
        detail: match rose {
            Some(s) => crate::phrase![
                units::span(RISE_CHECK_K, 0).signed(),
                " (toward ",
                units::span(HEAT_BY_K, 0).signed(),
                format!(
                    ") after {:.0} s at {:.0} % duty",
                    s.time_s - started_s,
                    remanent_physics::wire::duty_pct(s.sample.duty)
                ),
            ],
            None => crate::phrase![
                "no ",
                units::span(RISE_CHECK_K, 0),
                format!(" rise within {RISE_WITHIN_S:.0} s"),
            ],
        },
    };
    Ok((step, target))
}

/// Step 5: an injected fault drives the heater off within one control period.
fn fault_trips<P: Read + Write>(p: &mut Probe<P>, period_s: f64) -> Result<Step, LinkError> {
    let id = p.acq.send(Command::InjectFault)?;
    let off = p.watch(20, |s| {
        let st = s.sample.status;
        s.sample.duty == 0 && !st.heater_enabled() && st.fault_latched()
    })?;
    let tripped = p
        .faults
        .iter()
        .find(|f| f.0 == Fault::Injected)
        .map(|f| f.1);
    // the first sample taken after the trip must already show the heater off
    // (a sample is stamped when taken: its slot plus its lateness)
    let delay = match (off, tripped) {
        (Some(s), Some(t0)) => {
            Some(s.time_s - t0 - f64::from(s.sample.status.lateness_ms()) / 1000.0)
        }
        _ => None,
    };
    Ok(Step {
        name: "fault drives the heater off",
        passed: tripped.is_some() && p.acked(id) && delay.is_some_and(|d| d <= period_s + 1e-6),
        detail: match delay {
            Some(d) => format!("fault reported; heater at 0 % and enable low {:.2} s later (one period is {period_s:.2} s)", d.max(0.0)).into(),
            None => "the heater did not turn off".into(),
        },
    })
}

/// Step 6: the fault stays latched (a new setpoint is refused) until cleared.
fn latches<P: Read + Write>(p: &mut Probe<P>, target: f64) -> Result<Step, LinkError> {
    let id_refused = p.acq.send(Command::Manual {
        setpoint_tenth_c: remanent_physics::wire::tenths_from_c(target),
        limit_tenth_c: remanent_physics::wire::tenths_from_c(target + LIMIT_ABOVE_TARGET_K),
    })?;
    // wait for the device's answer itself: samples already on their way may come first
    let latched = matches!(p.reply(id_refused, 50)?, Some(Err(_)));
    let id = p.acq.send(Command::ClearFault)?;
    p.reply(id, 50)?;
    Ok(Step {
        name: "fault latches until cleared",
        passed: latched && p.acked(id),
        detail: format!(
            "a new setpoint was {}; clear {}",
            if latched {
                "refused"
            } else {
                "accepted (wrong)"
            },
            if p.acked(id) { "accepted" } else { "refused" }
        )
        .into(),
    })
}

/// Run the self-test; the device info and each step.
pub fn run<P: Read + Write>(
    port: P,
    cal: Calibration,
    policy: &crate::calibration::policy::Policy,
) -> Result<(DeviceHello, Vec<Step>), LinkError> {
    let (acq, hello, _) = Acquisition::connect(port, cal, SILENCE)?;
    policy.accept(&hello, &cal, crate::calibration::Stamp::now())?;
    let mut p = Probe {
        acq,
        replies: Vec::new(),
        faults: Vec::new(),
    };
    let mut steps = vec![start_up(&mut p, &hello)?];
    let heating_latched = hello.latched.map(remanent_firmware::safety::latch::class)
        == Some(remanent_firmware::safety::latch::FaultClass::Heating);
    if heating_latched {
        return Ok((hello, steps)); // nothing more may be tried until the operator clears it
    }
    let Some(first) = p.watch(30, |_| true)? else {
        steps.push(Step {
            name: "samples arrive",
            passed: false,
            detail: "no samples after the handshake".into(),
        });
        return Ok((hello, steps));
    };
    let Some(t0) = sensors(&first, &mut steps) else {
        return Ok((hello, steps));
    };
    let (step, target) = heats(&mut p, t0)?;
    steps.push(step);
    let period_s = f64::from(hello.sensors.period_ms) / 1000.0;
    steps.push(fault_trips(&mut p, period_s)?);
    steps.push(latches(&mut p, target)?);
    p.acq.send(Command::Stop)?;
    p.watch(3, |_| false)?;
    Ok((hello, steps))
}
