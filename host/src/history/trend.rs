//! A supplier's trend as a control chart's data: α, Br and loss over time, each with the
//! limits of its baseline and the runs beyond them.

use super::control::{individuals, Limits};
use super::query::TrendPoint;

/// One quantity over time.
#[derive(Debug, Clone, PartialEq)]
pub struct Panel {
    /// What it is, with its unit (`α, %/°C`).
    pub quantity: String,
    /// (seconds since 1970, value, magnet id) of each run that has it, in time order.
    pub points: Vec<(f64, f64, String)>,
    /// The baseline's limits (None: fewer than two values).
    pub limits: Option<Limits>,
}

impl Panel {
    /// The points beyond the limits.
    pub fn outside(&self) -> Vec<&(f64, f64, String)> {
        match &self.limits {
            Some(l) => self.points.iter().filter(|p| l.outside(p.1)).collect(),
            None => Vec::new(),
        }
    }
}

/// The whole chart.
#[derive(Debug, Clone, PartialEq)]
pub struct TrendChart {
    /// Whose material.
    pub supplier: String,
    /// Which grade, if one was asked for.
    pub grade: Option<String>,
    /// Runs in the trend.
    pub runs: usize,
    /// α, Br and loss.
    pub panels: Vec<Panel>,
}

/// Build the chart from the trend's points; limits from the first `baseline` runs of each.
pub fn chart(
    supplier: &str,
    grade: Option<&str>,
    points: &[TrendPoint],
    baseline: usize,
) -> TrendChart {
    let panel = |quantity: &str, pick: fn(&TrendPoint) -> Option<f64>| {
        let pts: Vec<(f64, f64, String)> = points
            .iter()
            .filter_map(|p| {
                let v = pick(p).filter(|v| v.is_finite())?;
                let t = crate::clock::parse_utc(&p.when_utc)?;
                Some((t, v, p.magnet_id.clone().unwrap_or_default()))
            })
            .collect();
        let values: Vec<f64> = pts.iter().map(|p| p.1).collect();
        Panel {
            quantity: quantity.into(),
            limits: individuals(&values, baseline),
            points: pts,
        }
    };
    TrendChart {
        supplier: supplier.into(),
        grade: grade.map(String::from),
        runs: points.len(),
        panels: vec![
            panel("α, %/°C", |p| p.alpha_pct_per_c),
            panel("Br, T", |p| p.br_t),
            panel("irreversible loss, %", |p| p.loss_pct),
        ],
    }
}

impl TrendChart {
    /// The chart in display units: α per shown degree and Br in the shown unit. Both convert
    /// by a factor, so the limits of the converted values are the converted limits.
    pub fn shown(&self, u: &crate::units::DisplayUnits) -> TrendChart {
        let mut c = self.clone();
        let factors = [
            (u.per_degree(1.0), format!("α, {}", u.alpha_symbol())),
            (u.br(1.0), format!("Br, {}", u.br_symbol())),
        ];
        for (p, (k, quantity)) in c.panels.iter_mut().zip(factors) {
            p.quantity = quantity;
            for q in &mut p.points {
                q.1 *= k;
            }
            if let Some(l) = &mut p.limits {
                // a negative factor would swap the limits; these are all positive
                l.centre *= k;
                l.lower *= k;
                l.upper *= k;
                l.mr_bar *= k;
            }
        }
        c
    }
}
