//! Uncertainty budgets: one contribution per line, with how its knowledge is spread, combined
//! in quadrature and expanded to a 95.45 % coverage interval (GUM).

use serde::Serialize;

/// How a contribution's knowledge is spread: what the coverage interval is computed from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Distribution {
    /// A standard deviation of a normal distribution (every type A term, most type B ones).
    Normal,
    /// Bounds known, nothing between them preferred: u = half-width / √3.
    Rectangular,
}

/// One contribution to an uncertainty budget.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BudgetLine {
    /// What it is.
    pub source: String,
    /// Type A (statistics) or B (other knowledge).
    pub kind: char,
    /// Standard uncertainty, in the result's unit.
    pub u: f64,
    /// How it is spread.
    pub distribution: Distribution,
}

impl BudgetLine {
    /// A type A (statistical) contribution.
    pub fn a(source: impl Into<String>, u: f64) -> BudgetLine {
        BudgetLine {
            source: source.into(),
            kind: 'A',
            u,
            distribution: Distribution::Normal,
        }
    }

    /// A type B contribution given as a normal standard deviation.
    pub fn b(source: impl Into<String>, u: f64) -> BudgetLine {
        BudgetLine {
            source: source.into(),
            kind: 'B',
            u,
            distribution: Distribution::Normal,
        }
    }

    /// A type B contribution known by its bounds (rectangular; `u` is half-width / √3).
    pub fn rectangular(source: impl Into<String>, u: f64) -> BudgetLine {
        BudgetLine {
            distribution: Distribution::Rectangular,
            ..BudgetLine::b(source, u)
        }
    }

    /// Root sum of squares of a budget: the combined standard uncertainty.
    pub fn combined(lines: &[BudgetLine]) -> f64 {
        lines.iter().map(|l| l.u * l.u).sum::<f64>().sqrt()
    }

    /// The expanded uncertainty of a budget: the half-width of its 95.45 % coverage interval
    /// (k = 2 for normal terms alone; see [`super::coverage`]).
    pub fn expanded(lines: &[BudgetLine]) -> f64 {
        let normal = lines
            .iter()
            .filter(|l| l.distribution == Distribution::Normal)
            .map(|l| l.u * l.u)
            .sum::<f64>()
            .sqrt();
        let rect: Vec<f64> = lines
            .iter()
            .filter(|l| l.distribution == Distribution::Rectangular)
            .map(|l| l.u)
            .collect();
        super::coverage::half_width(normal, &rect)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_budget_combines_in_quadrature_and_expands_by_its_distribution() {
        // 3 and 4 combine to 5 (GUM 5.1.2, uncorrelated inputs, unit sensitivities)
        let normal = [BudgetLine::a("a", 3.0), BudgetLine::b("b", 4.0)];
        assert_eq!(BudgetLine::combined(&normal), 5.0);
        // normal terms alone: k = 2
        assert_eq!(BudgetLine::expanded(&normal), 10.0);
        // one rectangular term alone: 95.45 % of its half-width √3·u (by hand: u = 1/√3
        // gives a half-width of 1, so 0.9545)
        let rect = [BudgetLine::rectangular("r", 1.0 / 3f64.sqrt())];
        assert!((BudgetLine::expanded(&rect) - 0.9545).abs() < 1e-3);
        // the combined standard uncertainty is the same whatever the distribution
        assert!((BudgetLine::combined(&rect) - 1.0 / 3f64.sqrt()).abs() < 1e-12);
    }
}
