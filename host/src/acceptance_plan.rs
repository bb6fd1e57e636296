//! Single sampling plans for lot acceptance: sample n magnets from a lot of N, accept the lot
//! if at most c fail. The plan is the smallest n (and its c) whose operating characteristic
//! accepts a lot at the acceptable quality level with probability at least 1 − α (producer's
//! risk) and a lot at the rejectable quality level with probability at most β (consumer's
//! risk), by the binomial or, for a finite lot, the hypergeometric distribution.

use serde::Serialize;

/// Which distribution the OC curve uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Model {
    /// Infinite lot (or sampling with replacement).
    Binomial,
    /// Finite lot of the given size, sampling without replacement.
    Hypergeometric(u64),
}

/// A plan and its achieved risks.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Plan {
    /// Sample size.
    pub n: u64,
    /// Acceptance number.
    pub c: u64,
    /// Probability of accepting at the acceptable quality level.
    pub accept_at_aql: f64,
    /// Probability of accepting at the rejectable quality level.
    pub accept_at_rql: f64,
}

fn ln_choose(n: u64, k: u64) -> f64 {
    ln_gamma(n as f64 + 1.0) - ln_gamma(k as f64 + 1.0) - ln_gamma((n - k) as f64 + 1.0)
}

/// ln Γ(x) by the Lanczos approximation (g = 7, n = 9; Numerical Recipes' coefficients).
fn ln_gamma(x: f64) -> f64 {
    const C: [f64; 9] = [
        0.999_999_999_999_809_9,
        676.520_368_121_885_1,
        -1_259.139_216_722_402_8,
        771.323_428_777_653_1,
        -176.615_029_162_140_6,
        12.507_343_278_686_905,
        -0.138_571_095_265_720_12,
        9.984_369_578_019_572e-6,
        1.505_632_735_149_311_6e-7,
    ];
    if x < 0.5 {
        return (std::f64::consts::PI / (std::f64::consts::PI * x).sin()).ln() - ln_gamma(1.0 - x);
    }
    let x = x - 1.0;
    let mut a = C[0];
    let t = x + 7.5;
    for (i, &c) in C.iter().enumerate().skip(1) {
        a += c / (x + i as f64);
    }
    0.5 * (2.0 * std::f64::consts::PI).ln() + (x + 0.5) * t.ln() - t + a.ln()
}

/// Probability of accepting (at most `c` defectives in `n`) when the fraction defective is `p`.
pub fn accept_probability(model: Model, n: u64, c: u64, p: f64) -> f64 {
    match model {
        Model::Binomial => {
            if p <= 0.0 {
                return 1.0;
            }
            if p >= 1.0 {
                return if c >= n { 1.0 } else { 0.0 };
            }
            (0..=c.min(n))
                .map(|k| {
                    (ln_choose(n, k) + k as f64 * p.ln() + (n - k) as f64 * (1.0 - p).ln()).exp()
                })
                .sum::<f64>()
                .min(1.0)
        }
        Model::Hypergeometric(lot) => {
            let d = (p * lot as f64).round() as u64;
            (0..=c.min(n).min(d))
                .filter(|&k| n - k <= lot - d)
                .map(|k| (ln_choose(d, k) + ln_choose(lot - d, n - k) - ln_choose(lot, n)).exp())
                .sum::<f64>()
                .min(1.0)
        }
    }
}

/// The plan could not be designed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// Inputs out of range.
    #[error("need 0 < AQL < RQL < 1 and risks in (0, 0.5): got AQL {aql}, RQL {rql}, α {alpha}, β {beta}")]
    Inputs {
        /// AQL.
        aql: f64,
        /// RQL.
        rql: f64,
        /// Producer's risk.
        alpha: f64,
        /// Consumer's risk.
        beta: f64,
    },
    /// No plan with n up to the lot size meets both risks.
    #[error("no single sampling plan up to n = {0} meets both risks: inspect every magnet")]
    NoPlan(u64),
}

/// The smallest plan meeting both risks.
pub fn design(model: Model, aql: f64, rql: f64, alpha: f64, beta: f64) -> Result<Plan, PlanError> {
    if !(0.0 < aql
        && aql < rql
        && rql < 1.0
        && 0.0 < alpha
        && alpha < 0.5
        && 0.0 < beta
        && beta < 0.5)
    {
        return Err(PlanError::Inputs {
            aql,
            rql,
            alpha,
            beta,
        });
    }
    let max_n = match model {
        Model::Binomial => 5000,
        Model::Hypergeometric(lot) => lot,
    };
    for n in 1..=max_n {
        // the largest c that still protects the consumer at this n
        let mut best = None;
        for c in 0..n {
            if accept_probability(model, n, c, rql) <= beta {
                best = Some(c);
            } else {
                break;
            }
        }
        if let Some(c) = best {
            let pa = accept_probability(model, n, c, aql);
            if pa >= 1.0 - alpha {
                return Ok(Plan {
                    n,
                    c,
                    accept_at_aql: pa,
                    accept_at_rql: accept_probability(model, n, c, rql),
                });
            }
        }
    }
    Err(PlanError::NoPlan(max_n))
}
