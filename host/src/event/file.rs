//! A record's `events.csv`, written and read with the csv crate: one row an event, with the
//! device time, the kind, the code of what it names (a fault, a state, a refusal), a number
//! where it has one (the temperature of a fault, the samples a gap lost, a profile segment)
//! and the event's words in SI units for a person reading the file.
//!
//! Files from before events were typed have only the time, the kind and the words; they read
//! back as [`RunEvent::Untyped`] rows, a fault among them as a [`FaultMark`] with its words.

use std::path::Path;

use remanent_protocol::{Fault, RunState};
use serde::de::{DeserializeOwned, IntoDeserializer};
use serde::{Deserialize, Serialize};

use super::{words, FaultMark, Rejection, RunEvent, StartSeen};

/// The header of `events.csv`.
pub const HEADER: [&str; 5] = ["device_time_s", "kind", "code", "value", "detail"];

/// One row of `events.csv`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EventRow {
    /// Device time, s.
    pub device_time_s: f64,
    /// What kind of event.
    pub kind: String,
    /// What it names, by its code (a fault's, a state's, a refusal's).
    #[serde(default)]
    pub code: String,
    /// Its number (a fault's temperature in °C, a gap's missing samples, a segment).
    #[serde(default)]
    pub value: Option<f64>,
    /// Its words, in SI units.
    #[serde(default)]
    pub detail: String,
}

fn row(t: f64, kind: &str, code: String, value: Option<f64>, e: &RunEvent) -> EventRow {
    EventRow {
        device_time_s: (t * 1000.0).round() / 1000.0,
        kind: kind.into(),
        code,
        value,
        detail: words::event(e).to_string(),
    }
}

/// The row of event `e` at device time `t`.
pub fn to_row(t: f64, e: &RunEvent) -> EventRow {
    let none = String::new;
    match e {
        RunEvent::FrameRejected { rejection, .. } => {
            row(t, "frame_rejected", format!("{rejection:?}"), None, e)
        }
        RunEvent::Gap {
            missing,
            before_seq,
        } => row(t, "gap", before_seq.to_string(), Some(*missing as f64), e),
        RunEvent::State {
            state,
            segment,
            from_beacon,
        } => {
            let kind = if *from_beacon {
                "state_beacon"
            } else {
                "state"
            };
            row(t, kind, format!("{state:?}"), Some(f64::from(*segment)), e)
        }
        RunEvent::Fault { fault, temp_c } => {
            row(t, "fault", format!("{fault:?}"), Some(*temp_c), e)
        }
        RunEvent::Started(how) => row(t, "started", format!("{how:?}"), None, e),
        RunEvent::Refused(r) => row(t, "refused", format!("{r:?}"), None, e),
        RunEvent::Complete(_) => row(t, "complete", none(), None, e),
        RunEvent::Resent => row(t, "resent", none(), None, e),
        RunEvent::StopRequested => row(t, "stop", none(), None, e),
        RunEvent::Stopped => row(t, "stopped", none(), None, e),
        RunEvent::SettleFailed(_) => row(t, "settle", none(), None, e),
        RunEvent::Resampled(r) => row(
            t,
            "resampled",
            format!("{}-{}", r.period_before_ms, r.period_ms),
            Some(f64::from(r.from_seq)),
            e,
        ),
        RunEvent::Untyped { kind, .. } => row(t, kind, none(), None, e),
    }
}

/// A unit variant by its name (`OverTemperature`), as the code column has it.
fn named<T: DeserializeOwned>(code: &str) -> Option<T> {
    let d: serde::de::value::StrDeserializer<'_, serde::de::value::Error> =
        code.into_deserializer();
    T::deserialize(d).ok()
}

/// The event a row holds: typed where the row says enough, [`RunEvent::Untyped`] otherwise.
pub fn from_row(r: &EventRow) -> RunEvent {
    let untyped = || RunEvent::Untyped {
        kind: r.kind.clone(),
        detail: r.detail.clone(),
    };
    let typed = match r.kind.as_str() {
        "fault" => named::<Fault>(&r.code)
            .zip(r.value)
            .map(|(fault, temp_c)| RunEvent::Fault { fault, temp_c }),
        "gap" => r
            .code
            .parse()
            .ok()
            .zip(r.value)
            .map(|(before_seq, m)| RunEvent::Gap {
                missing: m as u64,
                before_seq,
            }),
        "resampled" => r
            .code
            .split_once('-')
            .and_then(|(a, b)| Some((a.parse().ok()?, b.parse().ok()?)))
            .zip(r.value)
            .map(|((period_before_ms, period_ms), seq)| {
                RunEvent::Resampled(crate::link::Resampled {
                    period_before_ms,
                    period_ms,
                    from_seq: seq as u32,
                })
            }),
        "state" | "state_beacon" => named::<RunState>(&r.code).map(|state| RunEvent::State {
            state,
            segment: r.value.unwrap_or(0.0) as u8,
            from_beacon: r.kind == "state_beacon",
        }),
        "started" => match r.code.as_str() {
            "Acknowledged" => Some(RunEvent::Started(StartSeen::Acknowledged)),
            "Reported" => Some(RunEvent::Started(StartSeen::Reported)),
            "Beacon" => Some(RunEvent::Started(StartSeen::Beacon)),
            _ => None,
        },
        "frame_rejected" => {
            let rejection = match r.code.as_str() {
                "BadCrc" => Some(Rejection::BadCrc),
                "BadCobs" => Some(Rejection::BadCobs),
                "Other" => Some(Rejection::Other),
                _ => None,
            };
            rejection.map(|rejection| RunEvent::FrameRejected {
                rejection,
                detail: r.detail.clone(),
            })
        }
        "resent" => Some(RunEvent::Resent),
        "stop" => Some(RunEvent::StopRequested),
        "stopped" => Some(RunEvent::Stopped),
        _ => None,
    };
    typed.unwrap_or_else(untyped)
}

/// Every row of an events file, in the order written.
pub fn read(path: &Path) -> Result<Vec<EventRow>, csv::Error> {
    let mut rdr = csv::ReaderBuilder::new().flexible(true).from_path(path)?;
    rdr.deserialize().collect()
}

/// The faults an events file lists, with their device times (a missing or unreadable file:
/// none).
pub fn faults(path: &Path) -> Vec<(f64, FaultMark)> {
    let Ok(rows) = read(path) else {
        return Vec::new();
    };
    rows.iter()
        .filter(|r| r.kind == "fault")
        .map(|r| {
            let (fault, temp_c) = match from_row(r) {
                RunEvent::Fault { fault, temp_c } => (Some(fault), Some(temp_c)),
                _ => (None, None),
            };
            let mark = FaultMark {
                fault,
                temp_c,
                detail: r.detail.clone(),
            };
            (r.device_time_s, mark)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use remanent_protocol::RefuseReason;

    #[test]
    fn every_typed_event_reads_back_as_written_and_an_older_files_rows_keep_their_words() {
        let events = [
            RunEvent::Fault {
                fault: Fault::NoHeatingResponse,
                temp_c: 151.2,
            },
            RunEvent::Gap {
                missing: 12,
                before_seq: 3400,
            },
            RunEvent::State {
                state: RunState::Idle,
                segment: 3,
                from_beacon: true,
            },
            RunEvent::Started(StartSeen::Beacon),
            RunEvent::FrameRejected {
                rejection: Rejection::BadCrc,
                detail: "bad CRC".into(),
            },
            RunEvent::Resent,
            RunEvent::StopRequested,
            RunEvent::Stopped,
        ];
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("events.csv");
        let mut w = csv::WriterBuilder::new()
            .has_headers(false)
            .from_path(&path)
            .unwrap();
        w.write_record(HEADER).unwrap();
        for (i, e) in events.iter().enumerate() {
            w.serialize(to_row(i as f64 * 1.5, e)).unwrap();
        }
        w.serialize(to_row(20.0, &RunEvent::Refused(RefuseReason::Busy)))
            .unwrap();
        drop(w);
        let rows = read(&path).unwrap();
        for (e, r) in events.iter().zip(&rows) {
            assert_eq!(&from_row(r), e, "{r:?}");
        }
        // a refusal keeps its words, not its fields
        assert!(
            matches!(from_row(&rows[8]), RunEvent::Untyped { ref kind, .. } if kind == "refused")
        );
        let f = faults(&path);
        assert_eq!(f.len(), 1);
        assert_eq!(f[0].1.fault, Some(Fault::NoHeatingResponse));
        assert_eq!(f[0].1.temp_c, Some(151.2));
        // an events file as records wrote it before events were typed
        std::fs::write(
            &path,
            "device_time_s,kind,detail\n12.500,fault,\"thermocouple open circuit at 80.0 °C\"\n",
        )
        .unwrap();
        let f = faults(&path);
        assert_eq!(f.len(), 1);
        assert_eq!(f[0].0, 12.5);
        assert_eq!(f[0].1.fault, None);
        assert_eq!(f[0].1.detail, "thermocouple open circuit at 80.0 °C");
    }
}
