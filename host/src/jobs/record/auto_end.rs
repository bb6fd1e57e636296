//! Ending a record once it has what it was for: during the cool-down the analysis is asked,
//! every so often, whether it can already state α and the irreversible loss to the tolerance;
//! when it can, the record ends there (the fixture is freed) and says why.

use crate::analysis::{analyze, Context};
use crate::calibration::Calibration;
use crate::input::dataset::Series;
use crate::magnets::MagnetInfo;
use crate::specs::SpecTable;

/// What "good enough" is: expanded uncertainties (k = 2) the record must reach.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    /// α's U95 at most this, %/°C.
    pub alpha_u95_pct_per_c: f64,
    /// The loss's U95 at most this, %.
    pub loss_u95_pct: f64,
}

impl Default for Tolerance {
    /// The instrument's accuracy goal: α to ±0.003 %/°C and the loss to ±0.1 %.
    fn default() -> Tolerance {
        Tolerance {
            alpha_u95_pct_per_c: 0.003,
            loss_u95_pct: 0.1,
        }
    }
}

/// The analysis is asked this often during the cool-down, s of device time.
const CHECK_EVERY_S: f64 = 20.0;
/// … once the magnet has come down this fraction of its excursion: back within the 35 % of
/// it that the analysis takes as a return it can refer to the start.
const COOLED_FRACTION: f64 = 0.65;

/// The live series and when to ask next.
pub struct AutoEnd {
    tolerance: Tolerance,
    series: Series,
    context: Context,
    start_c: Option<f64>,
    peak_c: f64,
    next_check_s: f64,
    /// The last check's α and loss: a record ends only when two checks in a row agree.
    last: Option<(f64, f64)>,
}

/// Two checks in a row agree when α moved less than this, %/°C, …
const AGREE_ALPHA: f64 = 0.0005;
/// … and the loss less than this, %.
const AGREE_LOSS: f64 = 0.02;

impl AutoEnd {
    /// For a record of `magnet` converted with `calibration`.
    pub fn new(tolerance: Tolerance, calibration: &Calibration, magnet: &MagnetInfo) -> AutoEnd {
        AutoEnd {
            tolerance,
            series: Series {
                probe_c: Some(Vec::new()),
                ..Default::default()
            },
            context: Context {
                calibration: Some(*calibration),
                magnet: Some(magnet.clone()),
                specs: SpecTable::builtin(),
                default_tc_gain_pct: crate::analysis::DEFAULT_TC_GAIN_PCT,
                reference: None,
            },
            start_c: None,
            peak_c: f64::NEG_INFINITY,
            next_check_s: 0.0,
            last: None,
        }
    }

    /// A converted sample (those without a temperature or a field are left out, as the
    /// analysis of the run directory leaves them out).
    pub fn push(
        &mut self,
        t_s: f64,
        temp_c: Option<f64>,
        flux_mt: Option<f64>,
        probe_c: Option<f64>,
    ) {
        let (Some(tc), Some(b)) = (temp_c, flux_mt) else {
            return;
        };
        if self.series.time_s.last().is_some_and(|&last| t_s <= last) {
            return;
        }
        self.start_c.get_or_insert(tc);
        self.peak_c = self.peak_c.max(tc);
        self.series.time_s.push(t_s);
        self.series.temp_c.push(tc);
        self.series.flux_mt.push(b);
        match (self.series.probe_c.as_mut(), probe_c) {
            (Some(p), Some(v)) => p.push(v),
            // a sample without the probe's temperature: the series goes on without it
            (Some(_), None) => self.series.probe_c = None,
            _ => {}
        }
    }

    fn cooled_enough(&self) -> bool {
        let (Some(start), Some(&now)) = (self.start_c, self.series.temp_c.last()) else {
            return false;
        };
        let excursion = self.peak_c - start;
        excursion > 10.0 && now <= self.peak_c - COOLED_FRACTION * excursion
    }

    /// Whether the record can end now; the words for its end if so.
    pub fn check(&mut self) -> Option<crate::units::Phrase> {
        let now = *self.series.time_s.last()?;
        if now < self.next_check_s || !self.cooled_enough() {
            return None;
        }
        self.next_check_s = now + CHECK_EVERY_S;
        let a = analyze(&self.series, &self.context).ok()?;
        // only a loss between two references at rest: the branches alone cannot tell a loss
        // from a lag on a record cut short
        if a.loss.method_code != Some(crate::analysis::result::LossMethod::References) {
            return None;
        }
        let loss_u = a.loss.u95_pct?;
        let loss = a.loss.pct?;
        let t = &self.tolerance;
        // one good check could be a passing moment of the lag search: the next must agree
        let steady = self
            .last
            .replace((a.alpha.pct_per_c, loss))
            .is_some_and(|(al, lo)| {
                (al - a.alpha.pct_per_c).abs() < AGREE_ALPHA && (lo - loss).abs() < AGREE_LOSS
            });
        let done = steady
            && a.alpha.u95_pct_per_c.is_finite()
            && a.alpha.u95_pct_per_c <= t.alpha_u95_pct_per_c
            && loss_u.is_finite()
            && loss_u <= t.loss_u95_pct;
        done.then(|| {
            use crate::units::alpha;
            crate::phrase![
                "ended by the analysis: α known to ±",
                alpha(a.alpha.u95_pct_per_c, 4),
                format!(" and the loss to ±{loss_u:.3} % (95 %), within ±"),
                alpha(t.alpha_u95_pct_per_c, 4),
                format!(" and ±{} %", t.loss_u95_pct),
            ]
        })
    }
}
