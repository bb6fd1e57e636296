//! Linear least squares by Householder QR, with parameter standard deviations.
//!
//! The design matrix is never squared (no normal equations), so ill-conditioned polynomial
//! fits keep their digits; callers should still centre and scale their abscissae.

// Index loops read like the textbook algorithms they implement.
#![allow(clippy::needless_range_loop)]

/// A least-squares solution.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    /// Estimated parameters.
    pub coefficients: Vec<f64>,
    /// Their standard deviations.
    pub std_errors: Vec<f64>,
    /// Parameter covariance matrix (row-major, p × p).
    pub covariance: Vec<f64>,
    /// Residual standard deviation, √(RSS / (n − p)).
    pub residual_sd: f64,
    /// Coefficient of determination (with an intercept column).
    pub r_squared: f64,
    /// Residual sum of squares.
    pub rss: f64,
    /// Observations.
    pub n: usize,
}

/// The fit is impossible.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LsqError {
    /// Fewer observations than parameters plus one.
    #[error("{n} points are too few to fit {p} parameters")]
    TooFewPoints {
        /// Observations.
        n: usize,
        /// Parameters.
        p: usize,
    },
    /// A column is (numerically) a combination of the others.
    #[error("the fit is degenerate: the data do not determine every parameter (all x equal?)")]
    RankDeficient,
}

/// Solve min ‖X b − y‖ where `rows(i)` fills row i of X (p columns).
pub fn solve(
    n: usize,
    p: usize,
    mut rows: impl FnMut(usize, &mut [f64]) -> f64,
) -> Result<Fit, LsqError> {
    if n <= p {
        return Err(LsqError::TooFewPoints { n, p });
    }
    // column-major copy of X, and y
    let mut a = vec![0.0; n * p];
    let mut y = vec![0.0; n];
    let mut row = vec![0.0; p];
    for i in 0..n {
        y[i] = rows(i, &mut row);
        for j in 0..p {
            a[j * n + i] = row[j];
        }
    }
    let y_orig = y.clone();
    let mut diag = vec![0.0; p];
    for k in 0..p {
        let col = &mut a[k * n..(k + 1) * n];
        let norm = col[k..].iter().map(|v| v * v).sum::<f64>().sqrt();
        if norm == 0.0 {
            return Err(LsqError::RankDeficient);
        }
        let alpha = if col[k] > 0.0 { -norm } else { norm };
        col[k] -= alpha;
        let vnorm2 = col[k..].iter().map(|v| v * v).sum::<f64>();
        diag[k] = alpha;
        if vnorm2 == 0.0 {
            continue;
        }
        // apply H = I − 2 v vᵀ / (vᵀ v) to the remaining columns and to y
        let v: Vec<f64> = col[k..].to_vec();
        for j in k + 1..p {
            let cj = &mut a[j * n..(j + 1) * n];
            let dot: f64 = v.iter().zip(&cj[k..]).map(|(a, b)| a * b).sum();
            let f = 2.0 * dot / vnorm2;
            for (c, vi) in cj[k..].iter_mut().zip(&v) {
                *c -= f * vi;
            }
        }
        let dot: f64 = v.iter().zip(&y[k..]).map(|(a, b)| a * b).sum();
        let f = 2.0 * dot / vnorm2;
        for (c, vi) in y[k..].iter_mut().zip(&v) {
            *c -= f * vi;
        }
    }
    // R: diag on the diagonal, a[j*n+i] above it
    let r = |i: usize, j: usize| if i == j { diag[i] } else { a[j * n + i] };
    let scale = (0..p).map(|i| diag[i].abs()).fold(0.0, f64::max);
    if (0..p).any(|i| diag[i].abs() <= scale * 1e-13) {
        return Err(LsqError::RankDeficient);
    }
    let mut b = vec![0.0; p];
    for i in (0..p).rev() {
        let s: f64 = (i + 1..p).map(|j| r(i, j) * b[j]).sum();
        b[i] = (y[i] - s) / r(i, i);
    }
    // residuals from the original data, for accuracy
    let mut rss = 0.0;
    for i in 0..n {
        let pred: f64 = {
            rows(i, &mut row);
            row.iter().zip(&b).map(|(x, c)| x * c).sum()
        };
        let e = y_orig[i] - pred;
        rss += e * e;
    }
    let dof = (n - p) as f64;
    let s2 = rss / dof;
    // R⁻¹ (upper triangular), then cov = s² R⁻¹ R⁻ᵀ
    let mut rinv = vec![0.0; p * p];
    for j in 0..p {
        rinv[j * p + j] = 1.0 / r(j, j);
        for i in (0..j).rev() {
            let s: f64 = (i + 1..=j).map(|k| r(i, k) * rinv[k * p + j]).sum();
            rinv[i * p + j] = -s / r(i, i);
        }
    }
    let mut cov = vec![0.0; p * p];
    for i in 0..p {
        for j in 0..p {
            cov[i * p + j] = s2
                * (0..p)
                    .map(|k| rinv[i * p + k] * rinv[j * p + k])
                    .sum::<f64>();
        }
    }
    let mean_y = y_orig.iter().sum::<f64>() / n as f64;
    let tss: f64 = y_orig.iter().map(|v| (v - mean_y) * (v - mean_y)).sum();
    Ok(Fit {
        std_errors: (0..p).map(|i| cov[i * p + i].sqrt()).collect(),
        coefficients: b,
        covariance: cov,
        residual_sd: s2.sqrt(),
        r_squared: if tss > 0.0 { 1.0 - rss / tss } else { 1.0 },
        rss,
        n,
    })
}

/// Polynomial fit y = Σ c_k x^k, k = 0..=degree, with x centred and scaled internally; the
/// coefficients and their covariance are returned for the original x.
pub fn polyfit(x: &[f64], y: &[f64], degree: usize) -> Result<Fit, LsqError> {
    let n = x.len();
    let p = degree + 1;
    let mean = x.iter().sum::<f64>() / n.max(1) as f64;
    let half = x.iter().map(|v| (v - mean).abs()).fold(0.0, f64::max);
    let scale = if half > 0.0 { half } else { 1.0 };
    let fit = solve(n, p, |i, row| {
        let u = (x[i] - mean) / scale;
        let mut v = 1.0;
        for r in row.iter_mut() {
            *r = v;
            v *= u;
        }
        y[i]
    })?;
    // x = mean + scale·u: coefficients in x are T·c_u with T the change-of-basis matrix
    // (binomial expansion of ((x − mean)/scale)^k); covariance transforms as T C Tᵀ.
    let mut t = vec![0.0; p * p]; // t[j*p + k]: coefficient of x^j in u^k
    for k in 0..p {
        for j in 0..=k {
            let binom = (0..j).fold(1.0, |acc, i| acc * (k - i) as f64 / (i + 1) as f64);
            t[j * p + k] = binom * (-mean).powi((k - j) as i32) / scale.powi(k as i32);
        }
    }
    let coeffs: Vec<f64> = (0..p)
        .map(|j| (0..p).map(|k| t[j * p + k] * fit.coefficients[k]).sum())
        .collect();
    let mut cov = vec![0.0; p * p];
    for i in 0..p {
        for j in 0..p {
            let mut s = 0.0;
            for a in 0..p {
                for b in 0..p {
                    s += t[i * p + a] * fit.covariance[a * p + b] * t[j * p + b];
                }
            }
            cov[i * p + j] = s;
        }
    }
    Ok(Fit {
        std_errors: (0..p).map(|i| cov[i * p + i].sqrt()).collect(),
        coefficients: coeffs,
        covariance: cov,
        ..fit
    })
}

/// Residual sum of squares of the least-squares quadratic through (x, y), from sums in centred
/// and scaled coordinates (normal equations): a cheap ranking of many candidate fits, where
/// the reported fit uses [`polyfit`]'s QR. Infinite when the points cannot carry a quadratic.
pub fn quadratic_rss(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len().min(y.len());
    if n < 4 {
        return f64::INFINITY;
    }
    let nf = n as f64;
    let (mx, my) = (x.iter().sum::<f64>() / nf, y.iter().sum::<f64>() / nf);
    let sx = x
        .iter()
        .map(|v| (v - mx).abs())
        .fold(0.0, f64::max)
        .max(1e-12);
    // sums of u^k (k = 0..4) and u^k·v (k = 0..2), u = (x − x̄)/s, v = y − ȳ
    let (mut su, mut sv, mut vv) = ([0.0f64; 5], [0.0f64; 3], 0.0);
    for (xi, yi) in x.iter().zip(y) {
        let u = (xi - mx) / sx;
        let v = yi - my;
        let u2 = u * u;
        su[1] += u;
        su[2] += u2;
        su[3] += u2 * u;
        su[4] += u2 * u2;
        sv[0] += v;
        sv[1] += u * v;
        sv[2] += u2 * v;
        vv += v * v;
    }
    su[0] = nf;
    let a = [
        [su[0], su[1], su[2]],
        [su[1], su[2], su[3]],
        [su[2], su[3], su[4]],
    ];
    match solve3(a, sv) {
        Some(c) => (vv - (c[0] * sv[0] + c[1] * sv[1] + c[2] * sv[2])).max(0.0),
        None => f64::INFINITY,
    }
}

/// Solve a symmetric positive-definite 3×3 system by Cholesky; `None` if it is singular.
fn solve3(a: [[f64; 3]; 3], b: [f64; 3]) -> Option<[f64; 3]> {
    let mut l = [[0.0f64; 3]; 3];
    for i in 0..3 {
        for j in 0..=i {
            let s: f64 = (0..j).map(|k| l[i][k] * l[j][k]).sum();
            if i == j {
                let d = a[i][i] - s;
                if d <= a[i][i].abs() * 1e-12 {
                    return None;
                }
                l[i][i] = d.sqrt();
            } else {
                l[i][j] = (a[i][j] - s) / l[j][j];
            }
        }
    }
    let mut z = [0.0f64; 3];
    for i in 0..3 {
        z[i] = (b[i] - (0..i).map(|k| l[i][k] * z[k]).sum::<f64>()) / l[i][i];
    }
    let mut c = [0.0f64; 3];
    for i in (0..3).rev() {
        c[i] = (z[i] - (i + 1..3).map(|k| l[k][i] * c[k]).sum::<f64>()) / l[i][i];
    }
    Some(c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_line_is_recovered_with_zero_residual() {
        let x: Vec<f64> = (0..10).map(f64::from).collect();
        let y: Vec<f64> = x.iter().map(|v| 3.0 - 2.0 * v).collect();
        let f = polyfit(&x, &y, 1).unwrap();
        assert!((f.coefficients[0] - 3.0).abs() < 1e-12);
        assert!((f.coefficients[1] + 2.0).abs() < 1e-12);
        assert!(f.residual_sd < 1e-12);
    }

    #[test]
    fn degenerate_and_short_inputs_are_errors() {
        assert_eq!(
            polyfit(&[1.0, 2.0], &[1.0, 2.0], 2).unwrap_err(),
            LsqError::TooFewPoints { n: 2, p: 3 }
        );
        assert_eq!(
            polyfit(&[5.0; 6], &[1.0; 6], 1).unwrap_err(),
            LsqError::RankDeficient
        );
    }

    #[test]
    fn the_cheap_rss_matches_the_qr_fit() {
        let x: Vec<f64> = (0..500).map(|i| 20.0 + 0.3 * f64::from(i)).collect();
        let y: Vec<f64> = x
            .iter()
            .enumerate()
            .map(|(i, t)| 215.0 - 0.23 * t - 2e-4 * t * t + 0.01 * ((i * 7919 % 13) as f64 - 6.0))
            .collect();
        let qr = polyfit(&x, &y, 2).unwrap().rss;
        let cheap = quadratic_rss(&x, &y);
        assert!(
            (cheap - qr).abs() <= 1e-9 * qr.max(1e-12) + 1e-12,
            "{cheap} against {qr}"
        );
    }
}
