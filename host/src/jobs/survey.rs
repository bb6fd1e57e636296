//! The room-temperature survey: many magnets read one after another without heating, each
//! when the user confirms placement or when a stable reading is detected, then ranked against
//! the set's median to find the damaged ones (a rotor set, a bin of salvaged parts).

use crate::event::Notice;
use std::io::{Read, Write};
use std::sync::mpsc::Receiver;
use std::time::{Duration, Instant};

use crate::calibration::Calibration;
use crate::link::acquisition::{Acquisition, Event};
use crate::link::LinkError;
pub use crate::survey_rank::{rank, Ranked, Reading, MIN_FLAG_PCT};

/// How readings are taken.
#[derive(Debug, Clone)]
pub struct SurveyOptions {
    /// Calibration for the flux.
    pub calibration: Calibration,
    /// Stop after this many magnets.
    pub count: usize,
    /// A reading is stable when this long a window …, s
    pub window_s: f64,
    /// … has a relative standard deviation below this.
    pub max_rel_sd: f64,
    /// Below this the fixture counts as empty, mT.
    pub empty_mt: f64,
    /// α to refer readings to 20 °C, %/°C (None: as measured).
    pub alpha_pct_per_c: Option<f64>,
    /// Give up after this long without a new reading (wall clock).
    pub idle_timeout: Duration,
    /// Whether the bench may measure with the calibration.
    pub policy: crate::calibration::policy::Policy,
}

impl SurveyOptions {
    /// Defaults: 3 s windows, 0.05 % scatter, 5 mT empty threshold.
    pub fn new(calibration: Calibration, count: usize) -> Self {
        SurveyOptions {
            calibration,
            count,
            window_s: 3.0,
            max_rel_sd: 0.0005,
            empty_mt: 5.0,
            alpha_pct_per_c: None,
            idle_timeout: Duration::from_secs(120),
            policy: Default::default(),
        }
    }
}

/// The link may be silent this much longer than the idle timeout before it counts as lost.
const SILENCE_MARGIN: Duration = Duration::from_secs(10);

/// Receives readings as they are taken.
pub trait SurveyProgress {
    /// A magnet was read.
    fn reading(&mut self, r: &Reading);
    /// Something worth telling the user (words from [`crate::event::words::notice`]).
    fn notice(&mut self, notice: &Notice);
}

#[derive(Debug, PartialEq)]
enum State {
    Empty,
    Settling,
    Taken,
}

/// Run a survey on a session (handshake done by this function).
pub fn run<P: Read + Write>(
    port: P,
    opts: &SurveyOptions,
    confirm: Option<Receiver<()>>,
    progress: &mut dyn SurveyProgress,
) -> Result<Vec<Reading>, LinkError> {
    let (mut acq, hello, _) =
        Acquisition::connect(port, opts.calibration, opts.idle_timeout + SILENCE_MARGIN)?;
    let uncalibrated =
        opts.policy
            .accept(&hello, &opts.calibration, crate::calibration::Stamp::now())?
            == crate::calibration::policy::Basis::Uncalibrated;
    if uncalibrated {
        progress.notice(&Notice::SurveyUncalibrated);
    }
    let mut window: Vec<(f64, f64, f64)> = Vec::new();
    let mut state = State::Empty;
    let mut readings = Vec::new();
    let mut last_progress = Instant::now();
    let mut pending_confirm: Option<f64> = None;
    progress.notice(&Notice::PlaceMagnets {
        confirm: confirm.is_some(),
    });
    while readings.len() < opts.count {
        if last_progress.elapsed() > opts.idle_timeout {
            progress.notice(&Notice::SurveyIdle);
            break;
        }
        for e in acq.poll()?.events {
            let Event::Sample {
                placed: p, values, ..
            } = e
            else {
                continue;
            };
            let (Some(t), Some(mut b)) = (values.temp_c, values.flux_mt) else {
                continue;
            };
            if let Some(a) = opts.alpha_pct_per_c {
                b = remanent_physics::reversible::refer_to_20c(b, t, a);
            }
            let now = p.device_time_s;
            if confirm.as_ref().is_some_and(|rx| rx.try_recv().is_ok()) {
                pending_confirm = Some(now);
                window.clear();
            }
            if b.abs() < opts.empty_mt {
                state = State::Empty;
                window.clear();
                continue;
            }
            if state == State::Empty {
                state = State::Settling;
                window.clear();
            }
            window.push((now, b, t));
            window.retain(|w| now - w.0 <= opts.window_s);
            let span = now - window[0].0;
            let n = window.len() as f64;
            let mean = window.iter().map(|w| w.1).sum::<f64>() / n;
            let sd = (window.iter().map(|w| (w.1 - mean).powi(2)).sum::<f64>()
                / (n - 1.0).max(1.0))
            .sqrt();
            let rel_sd = sd / mean.abs();
            let take = match (confirm.is_some(), pending_confirm) {
                (true, Some(at)) => now - at >= opts.window_s.min(2.0),
                (true, None) => false,
                (false, _) => {
                    state == State::Settling
                        && span >= opts.window_s * 0.95
                        && rel_sd < opts.max_rel_sd
                }
            };
            if take {
                let temp_c = window.iter().map(|w| w.2).sum::<f64>() / n;
                let r = Reading {
                    index: readings.len() + 1,
                    flux_mt: mean,
                    rel_sd,
                    temp_c,
                    time_s: now,
                    uncalibrated,
                };
                progress.reading(&r);
                readings.push(r);
                last_progress = Instant::now();
                state = State::Taken;
                pending_confirm = None;
                if readings.len() >= opts.count {
                    break;
                }
            }
        }
    }
    Ok(readings)
}
