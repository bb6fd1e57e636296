//! Control limits for a trend of single measurements (an individuals chart): the centre line
//! and the natural process limits from the average moving range of a baseline, and which
//! points fall outside them.

/// d2 for moving ranges of two: the mean range of two normal samples is 1.128 σ (the
/// constant of every control-chart table; NIST/SEMATECH e-Handbook §6.3.2).
pub const D2_N2: f64 = 1.128;

/// Limits of an individuals chart.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limits {
    /// Mean of the baseline.
    pub centre: f64,
    /// Lower and upper natural process limits: centre ∓ 3 × MR̄ / d2.
    pub lower: f64,
    /// Upper limit.
    pub upper: f64,
    /// Average moving range of the baseline.
    pub mr_bar: f64,
    /// Points in the baseline.
    pub baseline: usize,
}

/// Limits from the first `baseline` finite values (all of them when fewer); None with fewer
/// than two.
pub fn individuals(values: &[f64], baseline: usize) -> Option<Limits> {
    let base: Vec<f64> = values
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .take(baseline.max(2))
        .collect();
    if base.len() < 2 {
        return None;
    }
    let centre = base.iter().sum::<f64>() / base.len() as f64;
    let mr_bar =
        base.windows(2).map(|w| (w[1] - w[0]).abs()).sum::<f64>() / (base.len() - 1) as f64;
    let half = 3.0 * mr_bar / D2_N2;
    Some(Limits {
        centre,
        lower: centre - half,
        upper: centre + half,
        mr_bar,
        baseline: base.len(),
    })
}

impl Limits {
    /// Whether `v` falls outside the limits (beyond rounding: a baseline of equal values has
    /// limits of zero width, and the same value again is not beyond them).
    pub fn outside(&self, v: f64) -> bool {
        let slack = 1e-9 * self.centre.abs();
        v < self.lower - slack || v > self.upper + slack
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limits_follow_the_individuals_chart_formula() {
        // Worked by hand from the published formula (x̄ ± 2.66 MR̄, 2.66 = 3/1.128; NIST/SEMATECH
        // e-Handbook §6.3.2.2): values 10, 12, 11, 13, 12 → x̄ = 11.6, moving ranges 2, 1, 2, 1
        // → MR̄ = 1.5, half-width 3 × 1.5 / 1.128 = 3.98936…
        let l = individuals(&[10.0, 12.0, 11.0, 13.0, 12.0, 40.0], 5).unwrap();
        assert!((l.centre - 11.6).abs() < 1e-12);
        assert!((l.mr_bar - 1.5).abs() < 1e-12);
        assert!((l.upper - (11.6 + 4.5 / 1.128)).abs() < 1e-12);
        assert!((l.lower - (11.6 - 4.5 / 1.128)).abs() < 1e-12);
        assert!(l.outside(40.0) && !l.outside(15.5));
        assert_eq!(l.baseline, 5);
        assert_eq!(individuals(&[1.0, f64::NAN], 20), None);
    }
}
