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
    /// The baseline's limits (None: fewer than [`MIN_RUNS_FOR_LIMITS`] values).
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

/// Control limits are drawn only from this many runs or more (a preliminary individuals chart;
/// common practice asks 20 to 25 for a settled one): below it the points are shown alone.
pub const MIN_RUNS_FOR_LIMITS: usize = 8;

/// The grades among a trend's runs, each with its count (a run with none counts as "—").
pub fn grades(points: &[TrendPoint]) -> Vec<(String, usize)> {
    let mut out: Vec<(String, usize)> = Vec::new();
    for p in points {
        let g = p.grade.clone().unwrap_or_else(|| "—".into());
        match out.iter_mut().find(|(h, _)| *h == g) {
            Some(e) => e.1 += 1,
            None => out.push((g, 1)),
        }
    }
    out
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
                let t = crate::timestamps::parse_utc(&p.when_utc)?;
                Some((t, v, p.magnet_id.clone().unwrap_or_default()))
            })
            .collect();
        let values: Vec<f64> = pts.iter().map(|p| p.1).collect();
        Panel {
            quantity: quantity.into(),
            limits: (values.len() >= MIN_RUNS_FOR_LIMITS)
                .then(|| individuals(&values, baseline))
                .flatten(),
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{DisplayUnits, FluxUnit, TempUnit};

    #[test]
    fn a_chart_in_display_units_has_the_limits_of_the_converted_values() {
        let points: Vec<TrendPoint> = (0..30)
            .map(|k| TrendPoint {
                when_utc: format!("2026-01-{:02}T08:00:00Z", k % 28 + 1),
                magnet_id: Some(format!("M{k}")),
                lot: None,
                alpha_pct_per_c: Some(-0.11 + 0.001 * f64::from(k % 5)),
                br_t: Some(1.30 + 0.002 * f64::from(k % 3)),
                loss_pct: Some(0.01 * f64::from(k % 4)),
                grade: Some("N42".into()),
            })
            .collect();
        let si = chart("S", None, &points, 25);
        let us = si.shown(&DisplayUnits {
            flux: FluxUnit::Gauss,
            temp: TempUnit::Fahrenheit,
        });
        // the individuals chart's limits are linear in the values (centre ± 2.66 MR̄), so the
        // limits computed from converted values are the converted limits
        for (k, (p_si, p_us)) in si.panels.iter().zip(&us.panels).enumerate() {
            let factor = [1.0 / 1.8, 1e4, 1.0][k];
            let values: Vec<f64> = p_us.points.iter().map(|q| q.1).collect();
            let direct = super::individuals(&values, 25).unwrap();
            let (a, b) = (p_si.limits.unwrap(), p_us.limits.unwrap());
            for (x, y, z) in [
                (a.centre, b.centre, direct.centre),
                (a.lower, b.lower, direct.lower),
                (a.upper, b.upper, direct.upper),
            ] {
                assert!((x * factor - y).abs() <= 1e-9 * y.abs().max(1.0), "{k}");
                assert!((y - z).abs() <= 1e-9 * z.abs().max(1.0), "{k}");
            }
        }
        assert_eq!(us.panels[0].quantity, "α, %/°F");
        assert_eq!(us.panels[1].quantity, "Br, G");
    }
}
