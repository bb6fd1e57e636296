//! One rig at the console: a part started from the page is recorded, analysed, reported with
//! its certificate and kept in the history store by the same library functions the commands
//! use (`record`, `jobs::report`, `jobs::history`), on a thread of its own, its progress going
//! to the rig's [`Hub`]. The Stop control sets the same flag Ctrl-C sets for `record`.

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};

use super::hub::{Hub, HubProgress, Outcome, Phase};
use super::lot::{LotSession, PartRecord};
use crate::calibration::policy::Policy;
use crate::history::Location;
use crate::jobs::record::{record, RecordEnd, RecordOptions};
use crate::jobs::{history, report, Judging};
use crate::magnets::MagnetFile;
use crate::report::Look;
use crate::specs::SpecTable;

/// What every part's record needs from the console.
#[derive(Clone)]
pub struct Bench {
    /// Where run directories go (one folder per lot).
    pub out: PathBuf,
    /// The history store.
    pub store: Location,
    /// The calibration policy (a virtual rig hands over its own constants).
    pub policy: Policy,
    /// How parts are judged.
    pub judging: Judging,
    /// The grade table for safe peaks.
    pub specs: SpecTable,
    /// Units and paper of the certificate.
    pub look: Look,
}

/// A rig the console drives.
pub struct Rig {
    /// The port it is on.
    pub port: String,
    /// Its live state.
    pub hub: Arc<Hub>,
    /// The Stop control (and Ctrl-C) set it.
    pub stop: Arc<AtomicBool>,
}

/// A part could not be started.
#[derive(Debug, thiserror::Error)]
pub enum StartError {
    /// The rig is busy with another part.
    #[error("the rig on {0} is busy with part {1}: wait for its verdict or press Stop")]
    Busy(String, String),
    /// No lot has been started.
    #[error("start a lot first: its grade and shape set the test")]
    NoLot,
    /// The part id is not usable.
    #[error("part id `{0}`: letters, digits, '-', '_' and '.' only, 1 to 64 of them")]
    BadId(String),
    /// The test could not be planned.
    #[error("{0}")]
    Plan(String),
}

/// A part id that can name a folder: letters, digits, `-`, `_`, `.`; not `.` or `..`.
pub fn check_id(id: &str) -> Result<String, StartError> {
    let id = id.trim();
    let ok = (1..=64).contains(&id.len())
        && id
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_.".contains(c))
        && !id.starts_with('.');
    ok.then(|| id.to_string())
        .ok_or_else(|| StartError::BadId(id.into()))
}

/// A folder name for a lot as the operator typed it: letters, digits, `-`, `_` and `.` kept,
/// anything else (a `/`, a space) made `_`, and never `.`-first (so never `..`).
pub fn folder_name(lot: &str) -> String {
    let name: String = lot
        .trim()
        .chars()
        .map(|c| match c.is_ascii_alphanumeric() || "-_.".contains(c) {
            true => c,
            false => '_',
        })
        .collect();
    match name.is_empty() || name.starts_with('.') {
        true => format!("lot-{name}"),
        false => name,
    }
}

/// A new run directory for `id` in `lot_dir`: `id`, or `id-2`, `id-3`… for a retest.
fn run_dir_for(lot_dir: &Path, id: &str) -> PathBuf {
    (1..)
        .map(|k| match k {
            1 => lot_dir.join(id),
            k => lot_dir.join(format!("{id}-{k}")),
        })
        .find(|p| !p.exists())
        .expect("a free name")
}

impl Rig {
    /// Start recording part `id` of `lot` on this rig with `profile` (held to the part's safe
    /// peak); the record, its report and its certificate follow on a thread of their own.
    pub fn start(
        &self,
        bench: &Bench,
        lot: &Arc<Mutex<Option<LotSession>>>,
        magnet: &MagnetFile,
        id: &str,
        profile: &str,
    ) -> Result<(), StartError> {
        let id = check_id(id)?;
        let session = lot.lock().unwrap_or_else(|p| p.into_inner()).clone();
        let session = session.ok_or(StartError::NoLot)?;
        let mut info = magnet.info.clone();
        info.id = id.clone();
        let plan = crate::test_plan::plan(profile, &info, &bench.specs, false)
            .map_err(|e| StartError::Plan(e.to_string()))?;
        let calibration =
            (bench.policy.provisional()).map_err(|e| StartError::Plan(e.to_string()))?;
        {
            let mut l = self.hub.lock();
            if matches!(l.phase, Phase::Recording | Phase::Reporting) {
                let part = l.part.clone().unwrap_or_default();
                return Err(StartError::Busy(self.port.clone(), part));
            }
            // claimed before the lock is let go: a second start is refused
            l.phase = Phase::Recording;
        }
        let dir = run_dir_for(&bench.out.join(folder_name(&session.lot)), &id);
        let words: Vec<String> = plan
            .announce(&id)
            .iter()
            .map(|p| p.render(&bench.look.units))
            .collect();
        self.hub.change(|l| {
            l.part = Some(id.clone());
            l.run_dir = Some(dir.clone());
            l.plan = words;
            l.points.clear();
            l.samples = 0;
            l.status = None;
            l.notices.clear();
            l.outcome = None;
        });
        self.stop.store(false, Ordering::Relaxed);
        let opts = RecordOptions {
            inspection: session.inspection(),
            auto_end: Some(Default::default()),
            port_label: self.port.clone(),
            policy: bench.policy.clone(),
            stop: self.stop.clone(),
            ..RecordOptions::new(info, plan.profile, calibration, dir)
        };
        let lot_id = session.lot.clone();
        let (hub, port, bench, lot) = (
            self.hub.clone(),
            self.port.clone(),
            bench.clone(),
            lot.clone(),
        );
        std::thread::spawn(move || {
            let outcome = run_part(&hub, &port, &bench, opts);
            let part = PartRecord {
                id,
                run: hub
                    .lock()
                    .run_dir
                    .clone()
                    .unwrap_or_default()
                    .display()
                    .to_string(),
                verdict: outcome.verdict,
                note: outcome
                    .certificate
                    .clone()
                    .unwrap_or_else(|| outcome.reasons.join("; ")),
            };
            super::keep_part(&bench.store, &lot, &lot_id, part);
            hub.change(|l| {
                l.phase = Phase::Done;
                l.outcome = Some(outcome);
            });
        });
        Ok(())
    }
}

/// Record, report and store one part; how it came out, in words.
fn run_part(hub: &Hub, port: &str, bench: &Bench, opts: RecordOptions) -> Outcome {
    let failed = |why: String| Outcome {
        verdict: None,
        reasons: vec![why],
        certificate: None,
    };
    let link = match crate::link::port::open(port) {
        Ok(l) => l,
        Err(e) => return failed(e.to_string()),
    };
    let mut progress = HubProgress {
        hub,
        units: bench.look.units,
    };
    let summary = match record(link, opts, &mut progress) {
        Ok(s) => s,
        Err(e) => return failed(e.to_string()),
    };
    let _ = history::store_record(&bench.store, &summary.dir);
    if !matches!(summary.end, RecordEnd::Finished | RecordEnd::Complete(_)) {
        return failed(format!(
            "no verdict: {}; everything received is kept in {}",
            summary.end.describe_in(&bench.look.units),
            summary.dir.display()
        ));
    }
    hub.change(|l| l.phase = Phase::Reporting);
    let r = match report::run(&summary.dir, &bench.judging, false, &bench.look) {
        Ok(r) => r,
        Err(e) => return failed(e.to_string()),
    };
    let Some(a) = r.analysis else {
        return failed(r.not_analysed.unwrap_or_default());
    };
    let _ = history::store_reported(&bench.store, &summary.dir, &a, &r.written);
    let certificate = crate::report::seal::read_seal(&summary.dir)
        .ok()
        .map(|(s, _)| s.number);
    Outcome {
        verdict: Some(a.judgement.verdict),
        reasons: a
            .judgement
            .checks
            .iter()
            .map(|c| {
                format!(
                    "{}: {} — {}",
                    c.what,
                    c.outcome,
                    c.reason.render(&bench.look.units)
                )
            })
            .collect(),
        certificate,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_lot_or_part_name_cannot_leave_the_consoles_folder() {
        assert_eq!(folder_name("DEMO-LOT-26-20"), "DEMO-LOT-26-20");
        assert_eq!(folder_name("L 2611/A"), "L_2611_A");
        assert_eq!(folder_name("../../etc"), "lot-.._.._etc");
        assert_eq!(folder_name(""), "lot-");
        assert!(check_id("P-001").is_ok());
        for bad in ["../x", ".hidden", "a/b", "", "a b"] {
            assert!(check_id(bad).is_err(), "{bad}");
        }
    }
}
