//! What the console's page is sent: the lot and each rig's state as JSON, every number already
//! in the user's units and every state in words, so the page only places text.

use serde_json::{json, Value};

use super::hub::Live;
use super::lot::LotSession;
use crate::link::words::describe_fault;
use crate::units::{temp_q, DisplayUnits, Kind, Qty};
use remanent_protocol::RunState;

/// The lot's part of the state.
pub fn lot(s: Option<&LotSession>) -> Value {
    let Some(s) = s else {
        return Value::Null;
    };
    let (judged, defects) = s.counts();
    json!({
        "lot": s.lot,
        "supplier": s.supplier,
        "order": s.order,
        "magnet": s.magnet,
        "grade": s.grade,
        "aql_pct": s.aql_pct,
        "rql_pct": s.rql_pct,
        "n": s.n,
        "c": s.c,
        "judged": judged,
        "defects": defects,
        "decision": s.decision(),
        "decision_words": s.decision_words(),
        "test": s.test,
        "parts": s.parts,
    })
}

/// What the heater is doing, in words: off, heading for the setpoint, or holding on it.
fn heater_words(
    temp_c: Option<f64>,
    setpoint_c: f64,
    ramp: Option<f64>,
    u: &DisplayUnits,
) -> String {
    if !setpoint_c.is_finite() {
        return "off".into();
    }
    let sp = temp_q(setpoint_c, 1).render(u);
    let settled =
        temp_c.is_some_and(|t| (t - setpoint_c).abs() < 1.5) && ramp.is_some_and(|r| r.abs() < 1.0);
    match settled {
        true => format!("holding the plateau at {sp}"),
        false => format!("heading for {sp}"),
    }
}

fn state_words(s: RunState) -> &'static str {
    match s {
        RunState::Idle => "idle",
        RunState::Profile => "running its profile",
        RunState::Manual => "manual",
        RunState::Faulted => "faulted: heater off",
    }
}

/// One rig's part of the state.
pub fn rig(index: usize, l: &Live, u: &DisplayUnits) -> Value {
    let setpoint_c = l.points.last().map_or(f64::NAN, |p| p.setpoint_c);
    let status = l.status.as_ref().map(|s| {
        let temp = s.temp_c.map(|t| temp_q(t, 1).render(u));
        let flux = s.flux_mt.map(|b| Qty::one(Kind::Flux, b, 2).render(u));
        let ramp = s
            .ramp_c_per_min
            .map(|r| format!("{}/min", Qty::one(Kind::Span, r, 1).signed().render(u)));
        json!({
            "temp": temp,
            "flux": flux,
            "duty": format!("{:.0} %", s.duty_pct),
            "heater": heater_words(s.temp_c, setpoint_c, s.ramp_c_per_min, u),
            "ramp": ramp,
            "state": s.state.map(state_words),
            "fault": s.fault.map(describe_fault),
            "elapsed_min": s.elapsed_s / 60.0,
            "left": format!("about {:.1} min left", s.remaining_s / 60.0),
        })
    });
    json!({
        "index": index,
        "rig": l.rig,
        "version": l.version,
        "part": l.part,
        "phase": l.phase,
        "plan": l.plan,
        "samples": l.samples,
        "last_received_ms": l.points.last().map(|p| p.received_ms),
        "status": status,
        "notices": l.notices,
        "outcome": l.outcome,
    })
}
