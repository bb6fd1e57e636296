//! A shipment: per-magnet results, the lot's spread, robust outliers and pass/fail counts.
//!
//! Outliers use the modified z-score of Iglewicz and Hoaglin (1993),
//! M = 0.6745·(x − median)/MAD, flagged when |M| > 3.5 — and only when the difference from the
//! median also exceeds what the measurement can resolve (the magnet's own U95 for α and loss,
//! 0.3 % for the room-temperature flux), so a tight lot does not make noise look like outliers.

use serde::Serialize;

use crate::analysis::verdict::Outcome;
use crate::analysis::Analysis;

/// One magnet of the lot.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LotRow {
    /// Magnet id.
    pub id: String,
    /// Stated grade.
    pub grade: String,
    /// α(Br), %/°C.
    #[serde(rename = "alpha_pct_per_C")]
    pub alpha: f64,
    /// Its U95, %/°C.
    #[serde(rename = "alpha_u95_pct_per_C")]
    pub alpha_u95: f64,
    /// Irreversible loss, %.
    pub loss_pct: Option<f64>,
    /// Its U95, %.
    pub loss_u95_pct: Option<f64>,
    /// Room-temperature flux (fitted B at 20 °C), mT.
    #[serde(rename = "b20_mT")]
    pub b20_mt: f64,
    /// Br from geometry, T (none: no shape, or not found).
    #[serde(rename = "br_T")]
    pub br_t: Option<f64>,
    /// The magnet's verdict.
    pub verdict: Outcome,
    /// The verdict found heat damage (a loss above the threshold by more than its U95).
    #[serde(skip)]
    pub heat_damaged: bool,
    /// Robust outlier in α, loss or room-temperature flux.
    pub outlier: Vec<Outlier>,
}

impl LotRow {
    /// A row from an analysis.
    pub fn new(id: &str, grade: &str, a: &Analysis) -> Self {
        LotRow {
            id: id.into(),
            grade: grade.into(),
            alpha: a.alpha.pct_per_c,
            alpha_u95: a.alpha.u95_pct_per_c,
            loss_pct: a.loss.pct,
            loss_u95_pct: a.loss.u95_pct,
            b20_mt: a.alpha.b20_mt,
            br_t: a.remanence.estimate.as_ref().map(|b| b.br_t),
            verdict: a.judgement.verdict,
            heat_damaged: a.judgement.heat_damaged,
            outlier: Vec::new(),
        }
    }
}

/// A quantity in which a magnet stands out from its lot.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum OutlierIn {
    /// α(Br).
    Alpha,
    /// The irreversible loss.
    Loss,
    /// The room-temperature flux.
    RoomFlux,
}

/// A robust outlier: the quantity and its modified z-score M (words: `report::lot`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Outlier {
    /// Where it stands out.
    pub quantity: OutlierIn,
    /// Its modified z-score against the lot.
    pub m: f64,
}

/// Centre and spread of one quantity.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Spread {
    /// Mean.
    pub mean: f64,
    /// Sample standard deviation.
    pub sd: f64,
    /// Median.
    pub median: f64,
    /// Median absolute deviation (unscaled).
    pub mad: f64,
    /// Values.
    pub n: usize,
}

/// The median of `v`.
pub fn median(v: &[f64]) -> f64 {
    let mut s: Vec<f64> = v.to_vec();
    s.sort_by(f64::total_cmp);
    let n = s.len();
    if n == 0 {
        return f64::NAN;
    }
    if n % 2 == 1 {
        s[n / 2]
    } else {
        0.5 * (s[n / 2 - 1] + s[n / 2])
    }
}

/// Mean, sd, median and MAD.
pub fn spread(v: &[f64]) -> Spread {
    let n = v.len();
    let mean = v.iter().sum::<f64>() / n.max(1) as f64;
    let sd = if n > 1 {
        (v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64).sqrt()
    } else {
        0.0
    };
    let med = median(v);
    let dev: Vec<f64> = v.iter().map(|x| (x - med).abs()).collect();
    Spread {
        mean,
        sd,
        median: med,
        mad: median(&dev),
        n,
    }
}

/// Modified z-scores (Iglewicz and Hoaglin): 0.6745·(x − median)/MAD (0 when MAD is 0).
pub fn modified_z(v: &[f64]) -> Vec<f64> {
    modified_z_resolved(v, 0.0)
}

/// Modified z-scores whose MAD is never taken below what the measurement resolves: a small
/// lot whose values agree more closely than their standard uncertainty `u` (two parts alike to
/// the last digit) would otherwise give a score of thousands for a difference of a few `u`.
/// The floor is the MAD a normal scatter of `u` has, 0.6745·u.
pub fn modified_z_resolved(v: &[f64], u: f64) -> Vec<f64> {
    let s = spread(v);
    let mad = s.mad.max(0.6745 * u.max(0.0));
    v.iter()
        .map(|x| {
            if mad > 0.0 {
                0.6745 * (x - s.median) / mad
            } else {
                0.0
            }
        })
        .collect()
}

/// The threshold on |M| above which a value is an outlier.
pub const OUTLIER_Z: f64 = 3.5;
/// Smallest relative difference in room-temperature flux treated as real (common practice:
/// repeat placements of one magnet agree to about 0.1 %).
pub const FLUX_RESOLUTION: f64 = 0.003;

/// The lot summary.
#[derive(Debug, Clone, Serialize)]
pub struct LotSummary {
    /// Per magnet, ranked by room-temperature flux (highest first).
    pub rows: Vec<LotRow>,
    /// α spread.
    pub alpha: Spread,
    /// Loss spread (magnets with a loss).
    pub loss: Option<Spread>,
    /// Room-temperature flux spread.
    pub b20: Spread,
    /// Br spread, T (magnets with a Br).
    pub br: Option<Spread>,
    /// Verdict counts.
    pub passed: usize,
    /// Failed.
    pub failed: usize,
    /// Indeterminate.
    pub indeterminate: usize,
}

/// Summarise a lot.
pub fn summarise(mut rows: Vec<LotRow>) -> LotSummary {
    let alphas: Vec<f64> = rows.iter().map(|r| r.alpha).collect();
    let b20: Vec<f64> = rows.iter().map(|r| r.b20_mt).collect();
    let alpha_med = median(&alphas);
    // each quantity's scores against what the measurement resolves (half its typical U95)
    let alpha_u = median(&rows.iter().map(|r| r.alpha_u95).collect::<Vec<_>>()) / 2.0;
    for (i, z) in modified_z_resolved(&alphas, alpha_u)
        .into_iter()
        .enumerate()
    {
        if z.abs() > OUTLIER_Z && (rows[i].alpha - alpha_med).abs() > rows[i].alpha_u95 {
            rows[i].outlier.push(Outlier {
                quantity: OutlierIn::Alpha,
                m: z,
            });
        }
    }
    let b20_med = median(&b20);
    let b20_u = FLUX_RESOLUTION * b20_med.abs() / 2.0;
    for (i, z) in modified_z_resolved(&b20, b20_u).into_iter().enumerate() {
        let real = (rows[i].b20_mt - b20_med).abs() > FLUX_RESOLUTION * b20_med.abs();
        if z.abs() > OUTLIER_Z && real {
            rows[i].outlier.push(Outlier {
                quantity: OutlierIn::RoomFlux,
                m: z,
            });
        }
    }
    let with_loss: Vec<(usize, f64)> = rows
        .iter()
        .enumerate()
        .filter_map(|(i, r)| r.loss_pct.map(|l| (i, l)))
        .collect();
    let losses: Vec<f64> = with_loss.iter().map(|x| x.1).collect();
    let loss_med = median(&losses);
    let loss_u = median(
        &with_loss
            .iter()
            .map(|(i, _)| rows[*i].loss_u95_pct.unwrap_or(0.0))
            .collect::<Vec<_>>(),
    ) / 2.0;
    for ((i, l), z) in with_loss.iter().zip(modified_z_resolved(&losses, loss_u)) {
        if z.abs() > OUTLIER_Z && (l - loss_med).abs() > rows[*i].loss_u95_pct.unwrap_or(0.0) {
            rows[*i].outlier.push(Outlier {
                quantity: OutlierIn::Loss,
                m: z,
            });
        }
    }
    let brs: Vec<f64> = rows.iter().filter_map(|r| r.br_t).collect();
    let count = |o: Outcome| rows.iter().filter(|r| r.verdict == o).count();
    let (passed, failed, indeterminate) = (
        count(Outcome::Pass),
        count(Outcome::Fail),
        count(Outcome::Indeterminate),
    );
    rows.sort_by(|a, b| b.b20_mt.total_cmp(&a.b20_mt));
    LotSummary {
        alpha: spread(&alphas),
        loss: (!losses.is_empty()).then(|| spread(&losses)),
        b20: spread(&b20),
        br: (!brs.is_empty()).then(|| spread(&brs)),
        rows,
        passed,
        failed,
        indeterminate,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_lot_of_three_scores_a_real_difference_in_units_of_its_uncertainty_not_thousands() {
        // two parts alike to the last digit and one 0.005 %/°C away, each known to ±0.0016
        let row = |id: &str, alpha: f64| LotRow {
            id: id.into(),
            grade: "N42".into(),
            alpha,
            alpha_u95: 0.0016,
            loss_pct: None,
            loss_u95_pct: None,
            b20_mt: 200.0,
            br_t: None,
            verdict: Outcome::Pass,
            heat_damaged: false,
            outlier: Vec::new(),
        };
        let s = summarise(vec![
            row("a", -0.1200),
            row("b", -0.1200),
            row("c", -0.1150),
        ]);
        let c = s.rows.iter().find(|r| r.id == "c").unwrap();
        // the MAD is 0: without a floor there is no score at all (and a digit apart, a score
        // of thousands); with it, 0.6745·0.005/(0.6745·0.0008) = 6.25
        assert!(
            matches!(&c.outlier[..], [o] if o.quantity == OutlierIn::Alpha && (o.m - 6.25).abs() < 1e-9),
            "{:?}",
            c.outlier
        );
        // the textbook case is untouched when the scatter exceeds the floor
        let v = [2.0, 2.5, 3.0, 2.5, 2.0, 3.0, 9.0];
        assert_eq!(modified_z_resolved(&v, 0.1), modified_z(&v));
    }

    #[test]
    fn modified_z_flags_the_textbook_outlier() {
        // Iglewicz & Hoaglin's rule on a small set with one wild value: median 2.5, MAD 0.5
        let v = [2.0, 2.5, 3.0, 2.5, 2.0, 3.0, 9.0];
        let z = modified_z(&v);
        assert!((z[6] - 0.6745 * (9.0 - 2.5) / 0.5).abs() < 1e-12);
        assert!(z[6] > OUTLIER_Z && z[..6].iter().all(|x| x.abs() < OUTLIER_Z));
    }
}
