//! The reversible model B(T) = b0 + b1·x + b2·x², x = T − 20 °C: fitting it, evaluating it,
//! and the coefficients α and γ with the gradient the uncertainty budget propagates through.

use serde::Serialize;

use super::lsq::{self, Fit, LsqError};

/// The model's reference temperature, °C (α is quoted from here).
pub const REFERENCE_C: f64 = 20.0;

/// B(T) as fitted.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Quadratic {
    /// B at 20 °C, mT.
    #[serde(rename = "b0_mT")]
    pub b0_mt: f64,
    /// Linear term, mT/°C.
    #[serde(rename = "b1_mT_per_C")]
    pub b1_mt_per_c: f64,
    /// Quadratic term, mT/°C².
    #[serde(rename = "b2_mT_per_C2")]
    pub b2_mt_per_c2: f64,
}

impl Quadratic {
    /// The model from a degree-2 fit in x = T − 20.
    pub fn from_fit(f: &Fit) -> Quadratic {
        Quadratic {
            b0_mt: f.coefficients[0],
            b1_mt_per_c: f.coefficients[1],
            b2_mt_per_c2: f.coefficients[2],
        }
    }

    /// Least-squares fit of B against T; the model and the fit's statistics.
    pub fn fit(t_c: &[f64], b_mt: &[f64]) -> Result<(Quadratic, Fit), LsqError> {
        let x: Vec<f64> = t_c.iter().map(|v| v - REFERENCE_C).collect();
        let fit = lsq::polyfit(&x, b_mt, 2)?;
        Ok((Quadratic::from_fit(&fit), fit))
    }

    /// B at `t_c`, mT.
    pub fn eval_mt(&self, t_c: f64) -> f64 {
        let x = t_c - REFERENCE_C;
        self.b0_mt + self.b1_mt_per_c * x + self.b2_mt_per_c2 * x * x
    }

    /// Mean α between 20 °C and `top_c` (the standards' two-point form), %/°C.
    pub fn mean_alpha_pct_per_c(&self, top_c: f64) -> f64 {
        let x_top = top_c - REFERENCE_C;
        (self.b1_mt_per_c + self.b2_mt_per_c2 * x_top) / self.b0_mt * 100.0
    }

    /// ∂α/∂(b0, b1, b2) of [`Quadratic::mean_alpha_pct_per_c`] at `top_c`.
    pub fn mean_alpha_gradient(&self, top_c: f64) -> [f64; 3] {
        let x_top = top_c - REFERENCE_C;
        let b0 = self.b0_mt;
        [
            -(self.b1_mt_per_c + self.b2_mt_per_c2 * x_top) / (b0 * b0) * 100.0,
            100.0 / b0,
            x_top / b0 * 100.0,
        ]
    }

    /// Tangent α at 20 °C (the linear term relative to b0), %/°C.
    pub fn alpha_at_reference_pct_per_c(&self) -> f64 {
        self.b1_mt_per_c / self.b0_mt * 100.0
    }

    /// γ (the quadratic term relative to b0), %/°C².
    pub fn gamma_pct_per_c2(&self) -> f64 {
        self.b2_mt_per_c2 / self.b0_mt * 100.0
    }

    /// Residuals of (t, b) against the model, mT.
    pub fn residuals(&self, t_c: &[f64], b_mt: &[f64]) -> Vec<f64> {
        t_c.iter()
            .zip(b_mt)
            .map(|(t, b)| b - self.eval_mt(*t))
            .collect()
    }
}

/// Lag-1 autocorrelation inflation √((1 + ρ)/(1 − ρ)) of residuals (1 when uncorrelated):
/// neighbouring residuals of a slowly drifting record are correlated, and the fit's own
/// standard error would understate the uncertainty.
pub fn autocorrelation_inflation(residuals: &[f64]) -> f64 {
    let num: f64 = residuals.windows(2).map(|w| w[0] * w[1]).sum();
    let den: f64 = residuals.iter().map(|v| v * v).sum();
    let rho = if den > 0.0 {
        (num / den).clamp(0.0, MAX_AUTOCORRELATION)
    } else {
        0.0
    };
    ((1.0 + rho) / (1.0 - rho)).sqrt()
}

/// Correlation above this is treated as this (the inflation stays finite), common practice.
pub const MAX_AUTOCORRELATION: f64 = 0.95;

/// A quadratic form gᵀ·C·g with a row-major 3×3 covariance.
pub fn propagate(gradient: &[f64; 3], covariance: &[f64]) -> f64 {
    let mut var = 0.0;
    for i in 0..3 {
        for j in 0..3 {
            var += gradient[i] * covariance[i * 3 + j] * gradient[j];
        }
    }
    var
}

#[cfg(test)]
mod tests {
    use super::*;

    /// B = 200 − 0.21·x − 0.00024·x² mT, x = T − 20 °C.
    const Q: Quadratic = Quadratic {
        b0_mt: 200.0,
        b1_mt_per_c: -0.21,
        b2_mt_per_c2: -0.00024,
    };

    #[test]
    fn tangent_and_two_point_alpha_against_hand_values() {
        // tangent at 20 °C: −0.21 / 200 = −0.105 %/°C (by hand)
        assert!((Q.alpha_at_reference_pct_per_c() + 0.105).abs() < 1e-12);
        // two-point to 120 °C (IEC 60404-8-1's mean coefficient): B(120) = 200 − 21 − 2.4 =
        // 176.6 mT, so (176.6 − 200) / (200 · 100) = −0.117 %/°C (by hand)
        assert!((Q.eval_mt(120.0) - 176.6).abs() < 1e-9);
        assert!((Q.mean_alpha_pct_per_c(120.0) + 0.117).abs() < 1e-12);
        // to 80 °C: B = 200 − 12.6 − 0.864 = 186.536, (186.536 − 200) / (200 · 60) = −0.1122
        assert!((Q.mean_alpha_pct_per_c(80.0) + 0.1122).abs() < 1e-12);
        // γ: −0.00024 / 200 = −1.2e-4 %/°C²
        assert!((Q.gamma_pct_per_c2() + 1.2e-4).abs() < 1e-15);
    }

    #[test]
    fn the_gradient_is_the_two_point_alphas_own() {
        let g = Q.mean_alpha_gradient(120.0);
        let h = [1e-4, 1e-7, 1e-9];
        for (i, step) in h.iter().enumerate() {
            let mut p = Q;
            match i {
                0 => p.b0_mt += step,
                1 => p.b1_mt_per_c += step,
                _ => p.b2_mt_per_c2 += step,
            }
            let numeric = (p.mean_alpha_pct_per_c(120.0) - Q.mean_alpha_pct_per_c(120.0)) / step;
            assert!(
                (numeric - g[i]).abs() < 1e-5 * g[i].abs(),
                "∂/∂b{i}: {numeric} against {}",
                g[i]
            );
        }
    }

    #[test]
    fn an_exact_quadratic_is_fitted_back() {
        let t: Vec<f64> = (0..50).map(|i| 20.0 + 2.0 * f64::from(i)).collect();
        let b: Vec<f64> = t.iter().map(|&x| Q.eval_mt(x)).collect();
        let (m, _) = Quadratic::fit(&t, &b).expect("fit");
        assert!((m.b0_mt - 200.0).abs() < 1e-9 && (m.b1_mt_per_c + 0.21).abs() < 1e-11);
        assert!((m.b2_mt_per_c2 + 0.00024).abs() < 1e-13);
    }

    #[test]
    fn propagation_and_inflation_against_hand_values() {
        // identity covariance: gᵀg; a correlated pair doubles the cross term
        assert_eq!(
            propagate(&[1.0, 2.0, 3.0], &[1., 0., 0., 0., 1., 0., 0., 0., 1.]),
            14.0
        );
        assert_eq!(
            propagate(&[1.0, 1.0, 0.0], &[1., 0.5, 0., 0.5, 1., 0., 0., 0., 1.]),
            3.0
        );
        // alternating residuals: ρ < 0 is taken as 0, no inflation
        assert_eq!(autocorrelation_inflation(&[1.0, -1.0, 1.0, -1.0]), 1.0);
        // residuals 1, 1, −1, −1: ρ = (1 − 1 + 1) / 4 = 0.25, √(1.25 / 0.75) (by hand)
        let want = (1.25f64 / 0.75).sqrt();
        assert!((autocorrelation_inflation(&[1.0, 1.0, -1.0, -1.0]) - want).abs() < 1e-12);
    }
}
