//! The bench console: a local web page from which a lot is inspected live. It serves the page
//! (every asset inside the binary), streams each rig's state as server-sent events, draws the
//! live charts with the plotting code, and drives the same library the commands do — record,
//! analyse, report, history — through [`rig`]. Loopback only unless told `--listen`, which then
//! needs an access token on every request ([`access`]).

pub mod access;
mod http;
pub mod hub;
pub mod lot;
pub mod rig;
mod view;

use std::net::SocketAddr;
use std::sync::atomic::{AtomicBool, AtomicU64, AtomicUsize, Ordering};
use std::sync::{Arc, Mutex};

use serde_json::{json, Value};

use crate::history::{Location, LotDecision, Store};
use access::Access;
use hub::Hub;
use lot::{LotRequest, LotSession, PartRecord};
use rig::{Bench, Rig};

/// Most pages watching at once (each holds a stream and a thread).
pub const MAX_VIEWERS: usize = 32;

/// How the console runs.
pub struct ConsoleOptions {
    /// The rigs' ports (a bench's serial port, or a virtual rig's path).
    pub ports: Vec<String>,
    /// Where to listen.
    pub listen: SocketAddr,
    /// The access token every request must carry (none: loopback only).
    pub token: Option<String>,
    /// What every part's record needs.
    pub bench: Bench,
    /// Set (by Ctrl-C) to stop every heater and end the console.
    pub shutdown: Arc<AtomicBool>,
}

/// The console could not start.
#[derive(Debug, thiserror::Error)]
pub enum ConsoleError {
    /// Listening failed.
    #[error("cannot listen on {addr}: {reason}")]
    Listen {
        /// Where.
        addr: SocketAddr,
        /// Why.
        reason: String,
    },
    /// Nothing to drive.
    #[error("no rig: name at least one --port")]
    NoRig,
}

/// The running console's state.
pub struct Console {
    rigs: Vec<Rig>,
    lot: Arc<Mutex<Option<LotSession>>>,
    magnet: Mutex<Option<crate::magnets::MagnetFile>>,
    lot_version: AtomicU64,
    bench: Bench,
    access: Access,
    viewers: AtomicUsize,
}

/// A viewer's place among [`MAX_VIEWERS`], given back when dropped.
struct ViewerSlot<'a>(&'a AtomicUsize);

impl Drop for ViewerSlot<'_> {
    fn drop(&mut self) {
        self.0.fetch_sub(1, Ordering::Relaxed);
    }
}

impl Console {
    /// The whole state, as the page is sent it.
    fn state(&self) -> Value {
        let lot = self.lot.lock().unwrap_or_else(|p| p.into_inner());
        let u = &self.bench.look.units;
        json!({
            "units": { "temp": u.temp_symbol(), "flux": u.flux_symbol() },
            "lot": view::lot(lot.as_ref()),
            "rigs": self.rigs.iter().enumerate()
                .map(|(i, r)| view::rig(i, &r.hub.lock(), u))
                .collect::<Vec<_>>(),
        })
    }

    /// Moves whenever anything shown changes.
    fn version(&self) -> u64 {
        self.rigs.iter().map(|r| r.hub.lock().version).sum::<u64>()
            + self.lot_version.load(Ordering::Relaxed)
    }

    fn viewer_slot(&self) -> Option<ViewerSlot<'_>> {
        let before = self.viewers.fetch_add(1, Ordering::Relaxed);
        let slot = ViewerSlot(&self.viewers);
        (before < MAX_VIEWERS).then_some(slot)
    }

    /// Start a lot from the page's form.
    fn start_lot(&self, body: &str) -> Result<Value, String> {
        let req: LotRequest =
            serde_json::from_str(body).map_err(|e| format!("the lot's form: {e}"))?;
        if req.lot.trim().is_empty() || req.supplier.trim().is_empty() {
            return Err("a lot needs its id and its supplier".into());
        }
        // a part on a rig belongs to the lot it was started in
        if let Some(busy) = self.rigs.iter().find(|r| {
            matches!(
                r.hub.lock().phase,
                hub::Phase::Recording | hub::Phase::Reporting
            )
        }) {
            return Err(format!(
                "a part is still on the rig on {}: wait for its verdict (or stop it) before starting another lot",
                busy.port
            ));
        }
        let magnet = crate::magnets::resolve(req.magnet.trim()).map_err(|e| e.to_string())?;
        let mut session = LotSession::start(&req, &magnet.info.grade).map_err(|e| e.to_string())?;
        // what every part will get: the profile held to the safe peak of its grade and shape
        let plan = crate::test_plan::plan("inspect", &magnet.info, &self.bench.specs, false)
            .map_err(|e| e.to_string())?;
        session.test = plan
            .announce(&magnet.info.id)
            .iter()
            .map(|p| p.render(&self.bench.look.units))
            .collect();
        keep_decision(&self.bench.store, &session);
        *self.magnet.lock().unwrap_or_else(|p| p.into_inner()) = Some(magnet);
        *self.lot.lock().unwrap_or_else(|p| p.into_inner()) = Some(session.clone());
        self.lot_version.fetch_add(1, Ordering::Relaxed);
        Ok(view::lot(Some(&session)))
    }

    /// Start a part on rig `i` (`{"part": …, "profile": …}`), or stop it.
    fn rig_action(&self, i: &str, action: &str, body: &str) -> Result<(), String> {
        let rig = i
            .parse::<usize>()
            .ok()
            .and_then(|i| self.rigs.get(i))
            .ok_or("no such rig")?;
        match action {
            "stop" => {
                // the same flag Ctrl-C sets for `record`: the recorder stops the heater
                rig.stop.store(true, Ordering::Relaxed);
                Ok(())
            }
            "start" => {
                let v: Value = serde_json::from_str(body).map_err(|e| format!("start: {e}"))?;
                let part = v["part"].as_str().unwrap_or_default();
                let profile = v["profile"].as_str().unwrap_or("inspect");
                let magnet = self
                    .magnet
                    .lock()
                    .unwrap_or_else(|p| p.into_inner())
                    .clone();
                let magnet = magnet.ok_or_else(|| rig::StartError::NoLot.to_string())?;
                rig.start(&self.bench, &self.lot, &magnet, part, profile)
                    .map_err(|e| e.to_string())
            }
            _ => Err(format!("no action `{action}`")),
        }
    }
}

/// A part's result joins its lot (the one it was started in), and the lot's decision goes to
/// the store.
fn keep_part(store: &Location, lot: &Mutex<Option<LotSession>>, lot_id: &str, part: PartRecord) {
    let mut l = lot.lock().unwrap_or_else(|p| p.into_inner());
    if let Some(s) = l.as_mut().filter(|s| s.lot == lot_id) {
        s.parts.push(part);
        keep_decision(store, s);
    }
}

fn keep_decision(store: &Location, s: &LotSession) {
    if *store == Location::Off {
        return;
    }
    let (judged, defects) = s.counts();
    let d = LotDecision {
        lot: s.lot.clone(),
        supplier: Some(s.supplier.clone()).filter(|v| !v.is_empty()),
        purchase_order: Some(s.order.clone()).filter(|v| !v.is_empty()),
        grade: s.grade.clone(),
        sample_size: s.n,
        acceptance_number: s.c,
        judged,
        defects,
        decision: serde_json::to_value(s.decision())
            .ok()
            .and_then(|v| v.as_str().map(String::from))
            .unwrap_or_default(),
        words: s.decision_words(),
    };
    if let Err(e) = Store::open(store).and_then(|mut st| st.put_lot_decision(&d)) {
        eprintln!("warning: the lot's decision was not stored in the history ({e})");
    }
}

/// Serve the console until the process ends; `announce` gets the page's address (with the
/// token, when one is needed) once it listens.
pub fn serve(opts: ConsoleOptions, announce: impl FnOnce(&str)) -> Result<(), ConsoleError> {
    if opts.ports.is_empty() {
        return Err(ConsoleError::NoRig);
    }
    let server = tiny_http::Server::http(opts.listen).map_err(|e| ConsoleError::Listen {
        addr: opts.listen,
        reason: e.to_string(),
    })?;
    let addr = server.server_addr().to_ip().unwrap_or(opts.listen);
    let access = Access::new(addr, opts.token);
    let url = match access.token() {
        Some(t) => format!("http://{addr}/?token={t}"),
        None => format!("http://{addr}/"),
    };
    announce(&url);
    let console = Arc::new(Console {
        rigs: opts
            .ports
            .iter()
            .map(|p| Rig {
                port: p.clone(),
                hub: Arc::new(Hub::new(p)),
                stop: Arc::new(AtomicBool::new(false)),
            })
            .collect(),
        lot: Arc::new(Mutex::new(None)),
        magnet: Mutex::new(None),
        lot_version: AtomicU64::new(0),
        bench: opts.bench,
        access,
        viewers: AtomicUsize::new(0),
    });
    while !opts.shutdown.load(Ordering::Relaxed) {
        match server.recv_timeout(std::time::Duration::from_millis(200)) {
            Ok(Some(req)) => {
                let c = console.clone();
                std::thread::spawn(move || http::handle(&c, req));
            }
            Ok(None) => {}
            Err(e) => eprintln!("console: a request failed: {e}"),
        }
    }
    // every heater off through its recorder, as Ctrl-C does for `record`
    for r in &console.rigs {
        r.stop.store(true, Ordering::Relaxed);
    }
    let deadline = std::time::Instant::now() + std::time::Duration::from_secs(15);
    while console.rigs.iter().any(|r| {
        matches!(
            r.hub.lock().phase,
            hub::Phase::Recording | hub::Phase::Reporting
        )
    }) && std::time::Instant::now() < deadline
    {
        std::thread::sleep(std::time::Duration::from_millis(100));
    }
    Ok(())
}
