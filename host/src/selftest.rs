//! The bench self-test: the device answers, every sensor reads sensibly, the heater heats,
//! and an injected fault drives the heater off within one control period and latches until
//! cleared. Run it after building or rewiring a rig (and in CI against the emulated board).

use std::io::{Read, Write};
use std::time::Duration;

use remanent_protocol::{Command, DeviceHello, DeviceMsg, Fault, RefuseReason, RunState, Sample};

use crate::calibration::Calibration;
use crate::conversion;
use crate::link::{LinkError, Session, Timeline};

/// Steps a complete self-test reports.
pub const STEPS: usize = 7;

/// One step's result.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    /// What was checked.
    pub name: &'static str,
    /// Whether it passed.
    pub passed: bool,
    /// What was seen.
    pub detail: String,
}

struct Probe<P> {
    s: Session<P>,
    timeline: Timeline,
    cal: Calibration,
    replies: Vec<(u16, Result<(), RefuseReason>)>,
    faults: Vec<(Fault, f64)>,
    states: Vec<RunState>,
}

impl<P: Read + Write> Probe<P> {
    /// Read until `until` says stop or `max_samples` samples went by; heartbeats on the way.
    fn watch(
        &mut self,
        max_samples: usize,
        mut until: impl FnMut(&Sample, f64) -> bool,
    ) -> Result<Option<(Sample, f64)>, LinkError> {
        let mut seen = 0;
        while seen < max_samples {
            let got = self.s.read()?;
            for f in got.frames.into_iter().flatten() {
                match f {
                    DeviceMsg::Beacon(b) => self.timeline.beacon(b),
                    DeviceMsg::Ack(a) => self.replies.push((a.id, Ok(()))),
                    DeviceMsg::Refused(r) => self.replies.push((r.id, Err(r.reason))),
                    DeviceMsg::Fault(r) => {
                        self.faults.push((r.fault, f64::from(r.time_ms) / 1000.0))
                    }
                    DeviceMsg::State(st) => self.states.push(st.state),
                    DeviceMsg::Sample(smp) => {
                        if let Some(p) = self.timeline.place(smp) {
                            seen += 1;
                            if seen % 4 == 0 {
                                self.s.send(Command::Heartbeat)?;
                            }
                            if until(&smp, p.device_time_s) {
                                return Ok(Some((smp, p.device_time_s)));
                            }
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
        if find(self).is_none() {
            let mut seen = 0;
            while find(self).is_none() && seen < max_samples {
                self.watch(1, |_, _| true)?;
                seen += 1;
            }
        }
        Ok(find(self))
    }

    fn temp(&self, s: &Sample) -> Option<f64> {
        conversion::thermocouple_c(s.thermo, &self.cal)
    }
}

/// Step 0: why the device last started; a latch left by a reset is cleared if it may be.
fn start_up<P: Read + Write>(p: &mut Probe<P>, hello: &DeviceHello) -> Result<Step, LinkError> {
    let Some(why) = crate::link::words::describe_boot(&hello.boot) else {
        return Ok(Step {
            name: "start-up",
            passed: true,
            detail: "power-on, nothing latched".into(),
        });
    };
    let id = p.s.send(Command::ClearFault)?;
    let reply = p.reply(id, 50)?;
    let passed = matches!(
        reply,
        Some(Ok(())) | Some(Err(RefuseReason::NoFaultLatched))
    );
    let detail = match reply {
        Some(Ok(())) => format!("{why}; cleared"),
        Some(Err(RefuseReason::NoFaultLatched)) => format!("{why}; already cleared"),
        Some(Err(r)) => format!(
            "{why}; not cleared: {}",
            crate::link::words::describe_refusal(&r)
        ),
        None => format!("{why}; no answer to the clear"),
    };
    Ok(Step {
        name: "start-up",
        passed,
        detail,
    })
}

/// Run the self-test; the device info and each step.
pub fn run<P: Read + Write>(
    port: P,
    cal: Calibration,
) -> Result<(DeviceHello, Vec<Step>), LinkError> {
    let mut s = Session::new(port);
    let hello = s.handshake(Duration::from_secs(10), &mut |_| {})?;
    let mut p = Probe {
        s,
        timeline: Timeline::default(),
        cal,
        replies: Vec::new(),
        faults: Vec::new(),
        states: Vec::new(),
    };
    let mut steps = vec![start_up(&mut p, &hello)?];
    // 1. sensors
    let first = p.watch(30, |_, _| true)?;
    let Some((smp, _)) = first else {
        steps.push(Step {
            name: "samples arrive",
            passed: false,
            detail: "no samples after the handshake".into(),
        });
        return Ok((hello, steps));
    };
    let t0 = p.temp(&smp);
    let probe = conversion::probe_c(smp.probe_code, &p.cal.ntc);
    let flux = probe.map(|tp| conversion::flux_mt(smp.hall_code, tp, &p.cal.hall));
    steps.push(Step {
        name: "thermocouple",
        passed: t0.is_some_and(|t| (-20.0..80.0).contains(&t)),
        detail: match t0 {
            Some(t) => format!(
                "{t:.2} °C (cold junction {:.2} °C)",
                conversion::cold_junction_c(smp.thermo)
            ),
            None => format!("fault {:?}", smp.thermo.fault()),
        },
    });
    steps.push(Step {
        name: "probe thermistor",
        passed: probe.is_some_and(|t| (-20.0..80.0).contains(&t)),
        detail: probe
            .map(|t| format!("{t:.2} °C"))
            .unwrap_or_else(|| "open or shorted".into()),
    });
    steps.push(Step {
        name: "Hall probe",
        passed: !conversion::hall_saturated(smp.hall_code),
        detail: flux
            .map(|b| format!("{b:.2} mT (code {})", smp.hall_code))
            .unwrap_or_default(),
    });
    let Some(t0) = t0 else {
        return Ok((hello, steps));
    };
    // 2. heating response: 8 K above the start
    let target = t0 + 8.0;
    let id = p.s.send(Command::Manual {
        setpoint_tenth_c: (target * 10.0) as i16,
        limit_tenth_c: ((target + 15.0) * 10.0) as i16,
    })?;
    let cal = p.cal;
    let rose = p.watch(3000, |smp, _| {
        conversion::thermocouple_c(smp.thermo, &cal).is_some_and(|t| t > t0 + 2.0)
    })?;
    steps.push(Step {
        name: "heater heats",
        passed: rose.is_some() && p.acked(id),
        detail: match rose {
            Some((smp, t)) => format!(
                "+2 K after {:.0} s at {:.0} % duty",
                t,
                f64::from(smp.duty) / 2.55
            ),
            None => "no 2 K rise within 300 s".into(),
        },
    });
    // 3. injected fault: heater off within one control period, latched
    let id = p.s.send(Command::InjectFault)?;
    let off = p.watch(20, |smp, _| {
        smp.duty == 0 && !smp.status.heater_enabled() && smp.status.fault_latched()
    })?;
    let period = f64::from(hello.sensors.period_ms) / 1000.0;
    let tripped = p
        .faults
        .iter()
        .find(|f| f.0 == Fault::Injected)
        .map(|f| f.1);
    // the first sample taken after the trip must already show the heater off
    // (a sample is stamped when taken: its slot plus its lateness)
    let delay = match (off, tripped) {
        (Some((smp, t)), Some(t0)) => Some(t - t0 - f64::from(smp.status.lateness_ms()) / 1000.0),
        _ => None,
    };
    steps.push(Step {
        name: "fault drives the heater off",
        passed: tripped.is_some() && p.acked(id) && delay.is_some_and(|d| d <= period + 1e-6),
        detail: match delay {
            Some(d) => format!("fault reported; heater at 0 % and enable low {:.2} s later (one period is {period:.2} s)", d.max(0.0)),
            None => "the heater did not turn off".into(),
        },
    });
    let id_refused = p.s.send(Command::Manual {
        setpoint_tenth_c: (target * 10.0) as i16,
        limit_tenth_c: ((target + 15.0) * 10.0) as i16,
    })?;
    // wait for the device's answer itself: samples already on their way may come first
    let latched = matches!(p.reply(id_refused, 50)?, Some(Err(_)));
    let id = p.s.send(Command::ClearFault)?;
    p.reply(id, 50)?;
    steps.push(Step {
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
        ),
    });
    p.s.send(Command::Stop)?;
    p.watch(3, |_, _| false)?;
    Ok((hello, steps))
}
