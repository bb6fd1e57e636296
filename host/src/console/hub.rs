//! A rig's live state, shared between its recorder and the console's viewers: every sample of
//! the part on the fixture (as it arrived, with the wall-clock time it did), the latest figures,
//! the notices in the user's words, and how the part ended. The recorder only appends under a
//! short lock and never waits for a viewer; viewers poll the version, copy what they need and
//! render outside the lock.

use std::sync::{Mutex, MutexGuard};
use std::time::{SystemTime, UNIX_EPOCH};

use serde::Serialize;

use crate::event::words;
use crate::jobs::record::{LiveSample, LiveStatus, Progress};
use crate::units::DisplayUnits;

/// One sample as a viewer draws it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Point {
    /// Device time, s.
    pub t_s: f64,
    /// Thermocouple, °C.
    pub temp_c: f64,
    /// Flux density, mT.
    pub flux_mt: f64,
    /// The setpoint, °C (NaN: heater off).
    pub setpoint_c: f64,
    /// The profile had started.
    pub heating: bool,
    /// When it reached the host, ms since the Unix epoch.
    pub received_ms: f64,
}

/// What a rig is doing.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Phase {
    /// Free for the next part.
    #[default]
    Idle,
    /// Recording a part.
    Recording,
    /// Analysing and writing the certificate.
    Reporting,
    /// The part's result is in.
    Done,
}

/// The outcome of a part, for the screen.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Outcome {
    /// The verdict (shown as PASS, FAIL, INDETERMINATE), or none when the record came to none.
    #[serde(serialize_with = "in_words")]
    pub verdict: Option<crate::analysis::verdict::Outcome>,
    /// Why, in words (the checks, or how the record ended).
    pub reasons: Vec<String>,
    /// The certificate's number, when one was written.
    pub certificate: Option<String>,
}

/// A verdict as the page shows it: its word in capitals (null for none).
fn in_words<S: serde::Serializer>(
    v: &Option<crate::analysis::verdict::Outcome>,
    s: S,
) -> Result<S::Ok, S::Error> {
    match v {
        Some(o) => s.collect_str(o),
        None => s.serialize_none(),
    }
}

/// The live state of one rig.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Live {
    /// Raised on every change.
    pub version: u64,
    /// The rig's name (its port).
    pub rig: String,
    /// The part on the fixture.
    pub part: Option<String>,
    /// Its run directory.
    #[serde(skip)]
    pub run_dir: Option<std::path::PathBuf>,
    /// What the rig is doing.
    pub phase: Phase,
    /// The test about to run or running, in words (profile, safe peak).
    pub plan: Vec<String>,
    /// Every sample of the part.
    #[serde(skip)]
    pub points: Vec<Point>,
    /// Samples so far.
    pub samples: usize,
    /// The latest figures.
    #[serde(skip)]
    pub status: Option<LiveStatus>,
    /// Notices, in the user's words, oldest first.
    pub notices: Vec<String>,
    /// How the part came out.
    pub outcome: Option<Outcome>,
}

/// A rig's live state behind its lock.
#[derive(Debug, Default)]
pub struct Hub {
    live: Mutex<Live>,
}

/// Now, ms since the Unix epoch.
pub fn now_ms() -> f64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map_or(0.0, |d| d.as_secs_f64() * 1000.0)
}

impl Hub {
    /// A hub for the rig named `rig`.
    pub fn new(rig: &str) -> Hub {
        Hub {
            live: Mutex::new(Live {
                rig: rig.into(),
                ..Default::default()
            }),
        }
    }

    /// The state, locked (a poisoned lock still holds the last state written).
    pub fn lock(&self) -> MutexGuard<'_, Live> {
        self.live.lock().unwrap_or_else(|p| p.into_inner())
    }

    /// Change the state (viewers see the version move).
    pub fn change(&self, f: impl FnOnce(&mut Live)) {
        let mut l = self.lock();
        f(&mut l);
        l.version += 1;
    }
}

/// The recorder's progress into a hub, its notices in the console's units.
pub struct HubProgress<'a> {
    /// The hub.
    pub hub: &'a Hub,
    /// The console's display units.
    pub units: DisplayUnits,
}

impl Progress for HubProgress<'_> {
    fn update(&mut self, status: &LiveStatus) {
        let s = status.clone();
        self.hub.change(|l| l.status = Some(s));
    }

    fn notice(&mut self, notice: &crate::event::Notice) {
        let text = words::notice(notice).render(&self.units);
        self.hub.change(|l| l.notices.push(text));
    }

    fn sample(&mut self, s: &LiveSample) {
        let (Some(temp_c), Some(flux_mt)) = (s.temp_c, s.flux_mt) else {
            return;
        };
        let p = Point {
            t_s: s.device_time_s,
            temp_c,
            flux_mt,
            setpoint_c: s.setpoint_c.unwrap_or(f64::NAN),
            heating: s.heating,
            received_ms: now_ms(),
        };
        self.hub.change(|l| {
            l.points.push(p);
            l.samples = l.points.len();
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::verdict::Outcome as Verdict;

    #[test]
    fn the_page_gets_a_verdict_as_its_word_in_capitals() {
        let json = |verdict| {
            serde_json::to_value(Outcome {
                verdict,
                ..Default::default()
            })
        };
        assert_eq!(json(Some(Verdict::Pass)).unwrap()["verdict"], "PASS");
        assert_eq!(
            json(Some(Verdict::Indeterminate)).unwrap()["verdict"],
            "INDETERMINATE"
        );
        assert!(json(None).unwrap()["verdict"].is_null());
    }
}
