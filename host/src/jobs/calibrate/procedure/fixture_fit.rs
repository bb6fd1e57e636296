//! The fixture's thermal model fitted to an identification's record: a block heated at `a`
//! K/s per unit duty at 20 °C, an effect that falls by the fraction `κ` per kelvin as the block
//! warms, cooling toward ambient with time constant `τ`, read by a thermocouple that follows
//! it with lag `λ`,
//!
//!   dT/dt = a·(1 − κ·(T − 20 °C))·u(t) − (T − T_amb)/τ,   dy/dt = (T − y)/λ,
//!
//! (κ only from a record that heats well above the first step: a low step alone cannot tell
//! it from the loss, and it is then held at zero)
//! fitted to the readings y by Levenberg–Marquardt least squares (each step integrated
//! exactly for the duty held over it), with the standard uncertainties from the Jacobian
//! (s²·(JᵀJ)⁻¹, inflated for correlated residuals as the α fit's are).

use crate::analysis::model::autocorrelation_inflation;

/// An identification's record: device time, thermocouple reading, duty applied (0..=1).
#[derive(Debug, Clone, Default)]
pub struct Trace {
    /// Device time, s.
    pub time_s: Vec<f64>,
    /// Thermocouple reading, °C.
    pub temp_c: Vec<f64>,
    /// Duty the device reported with this sample (applied until the next one), 0..=1.
    pub duty: Vec<f64>,
}

/// The fitted model with standard uncertainties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Fitted {
    /// Heating rate at full duty, K/s, and its standard uncertainty.
    pub rate_k_per_s: (f64, f64),
    /// Cooling time constant, s, and its standard uncertainty.
    pub cooling_tau_s: (f64, f64),
    /// Thermocouple lag, s, and its standard uncertainty.
    pub lag_s: (f64, f64),
    /// The heating rate's fall per kelvin above 20 °C, fraction, and its standard uncertainty
    /// (zero and zero when the record could not show it).
    pub rate_fall_per_k: (f64, f64),
    /// Ambient, °C (fitted, starting from the mean before heating).
    pub ambient_c: f64,
    /// Residual standard deviation, K.
    pub residual_k: f64,
    /// Points fitted.
    pub points: usize,
}

/// The model's own form, relative, for the rate and τ (rectangular half-width).
pub const MODEL_FORM_REL: f64 = 0.03;
/// …and for the lag, s.
pub const MODEL_FORM_LAG_S: f64 = 0.3;

/// Parameters: heating rate a (K/s), loss rate b = 1/τ (1/s), lag λ (s), ambient (°C), the
/// heating rate's fall κ (1/K).
type Theta = [f64; N];
/// How many.
const N: usize = 5;
/// Which are held where they are in a minimisation.
type Held = [bool; N];

/// The readings the model gives for `theta` over the trace, from its first reading.
fn simulate(t: &Trace, theta: &Theta) -> Vec<f64> {
    let [a, b, lag, ambient_c, fall] = *theta;
    let mut block = t.temp_c[0];
    let mut junction = block;
    let mut out = Vec::with_capacity(t.time_s.len());
    out.push(junction);
    for k in 1..t.time_s.len() {
        let dt = t.time_s[k] - t.time_s[k - 1];
        // a sample reports the duty its period decided, which the heater gets until the next
        let u = t.duty[k - 1];
        // exact for the duty held over the step: dT/dt = c − d·T, linear in T
        let d = (b + a * u * fall).max(1e-9);
        let c = a * u * (1.0 + 20.0 * fall) + b * ambient_c;
        let eq = c / d;
        let decay = (-d * dt).exp();
        let start = block;
        block = eq + (block - eq) * decay;
        junction = if lag > 1e-6 {
            // the junction follows the step's mean block temperature
            let mean = 0.5 * (start + block);
            mean + (junction - mean) * (-dt / lag).exp()
        } else {
            block
        };
        out.push(junction);
    }
    out
}

fn residuals(t: &Trace, theta: &Theta) -> Vec<f64> {
    simulate(t, theta)
        .iter()
        .zip(&t.temp_c)
        .map(|(m, y)| y - m)
        .collect()
}

fn sse(r: &[f64]) -> f64 {
    r.iter().map(|v| v * v).sum()
}

/// The Jacobian of the residuals by central differences (rows: points, columns: parameters).
fn jacobian(t: &Trace, theta: &Theta) -> Vec<[f64; N]> {
    let mut cols: Vec<Vec<f64>> = Vec::with_capacity(N);
    for i in 0..N {
        // the lag over a span the sampling resolves; the rest relative
        let h = match i {
            2 => (0.1 * theta[2]).max(0.25),
            3 => 0.01,
            4 => 2e-5,
            _ => (theta[i].abs() * 1e-4).max(1e-9),
        };
        let (mut up, mut down) = (*theta, *theta);
        up[i] += h;
        if i < 3 {
            down[i] = (down[i] - h).max(0.0);
        } else {
            down[i] -= h;
        }
        let span = up[i] - down[i];
        let (ru, rd) = (residuals(t, &up), residuals(t, &down));
        cols.push(ru.iter().zip(&rd).map(|(u, d)| (u - d) / span).collect());
    }
    (0..t.time_s.len())
        .map(|k| std::array::from_fn(|i| cols[i][k]))
        .collect()
}

/// Solve the N×N system `m·x = v` (Gaussian elimination with partial pivoting).
fn solve(mut m: [[f64; N]; N], mut v: [f64; N]) -> Option<[f64; N]> {
    for c in 0..N {
        let p = (c..N).max_by(|&i, &j| m[i][c].abs().total_cmp(&m[j][c].abs()))?;
        if m[p][c].abs() < 1e-300 {
            return None;
        }
        m.swap(c, p);
        v.swap(c, p);
        let pivot = m[c];
        for r in c + 1..N {
            let f = m[r][c] / pivot[c];
            for (x, p) in m[r].iter_mut().zip(pivot).skip(c) {
                *x -= f * p;
            }
            v[r] -= f * v[c];
        }
    }
    let mut x = [0.0; N];
    for r in (0..N).rev() {
        let s: f64 = (r + 1..N).map(|k| m[r][k] * x[k]).sum();
        x[r] = (v[r] - s) / m[r][r];
    }
    Some(x)
}

fn normal(j: &[[f64; N]]) -> [[f64; N]; N] {
    let mut m = [[0.0; N]; N];
    for row in j {
        for a in 0..N {
            for b in 0..N {
                m[a][b] += row[a] * row[b];
            }
        }
    }
    m
}

/// A first guess from the record: the mean rise rate while heating, a 10-minute cooling, a
/// 1 s lag, the mean before heating as ambient.
fn first_guess(t: &Trace) -> Result<Theta, String> {
    let n = t.time_s.len();
    let first_heat = t
        .duty
        .iter()
        .position(|d| *d > 0.0)
        .ok_or("no heating in the record")?;
    if first_heat < 10 || n < 60 {
        return Err(
            "too short a record: a baseline before heating and a cool-down after are needed".into(),
        );
    }
    let ambient_c = t.temp_c[..first_heat].iter().sum::<f64>() / first_heat as f64;
    let last_heat = t.duty.iter().rposition(|d| *d > 0.0).unwrap_or(first_heat);
    let heat_s = (t.time_s[last_heat] - t.time_s[first_heat]).max(1.0);
    let span = (last_heat - first_heat + 1) as f64;
    let u_mean = t.duty[first_heat..=last_heat].iter().sum::<f64>() / span;
    let rise = t.temp_c[last_heat] - t.temp_c[first_heat];
    Ok([
        (rise / heat_s / u_mean.max(1e-3)).max(1e-3),
        1.0 / 600.0,
        1.0,
        ambient_c,
        0.0,
    ])
}

/// Levenberg–Marquardt from `theta`, the parameters `held` kept where they are.
fn minimise(t: &Trace, mut theta: Theta, held: Held) -> Theta {
    let mut lambda = 1e-3;
    let mut cost = sse(&residuals(t, &theta));
    for _ in 0..200 {
        let r = residuals(t, &theta);
        let j = jacobian(t, &theta);
        let mut m = normal(&j);
        let mut g = [0.0; N];
        for (row, ri) in j.iter().zip(&r) {
            for a in 0..N {
                g[a] -= row[a] * ri;
            }
        }
        for i in (0..N).filter(|i| held[*i]) {
            // row and column i of the identity: the step leaves parameter i where it is
            for (k, row) in m.iter_mut().enumerate() {
                row[i] = if k == i { 1.0 } else { 0.0 };
            }
            m[i] = std::array::from_fn(|k| if k == i { 1.0 } else { 0.0 });
            g[i] = 0.0;
        }
        for (a, row) in m.iter_mut().enumerate() {
            row[a] *= 1.0 + lambda;
        }
        let Some(step) = solve(m, g) else { break };
        let trial: Theta = [
            (theta[0] + step[0]).max(1e-6),
            (theta[1] + step[1]).max(1e-7),
            (theta[2] + step[2]).clamp(0.0, 60.0),
            theta[3] + step[3],
            (theta[4] + step[4]).clamp(-0.003, 0.005),
        ];
        let c = sse(&residuals(t, &trial));
        if c < cost {
            let done = (cost - c) < 1e-10 * cost.max(1e-12);
            theta = trial;
            cost = c;
            lambda = (lambda / 3.0).max(1e-9);
            if done {
                break;
            }
        } else {
            lambda *= 5.0;
            if lambda > 1e9 {
                break;
            }
        }
    }
    theta
}

/// Fit the model to `t`; why not, in words, when the record cannot give it.
///
/// `timing_s` is how uncertain the moment heat enters is: a relay driven by time-proportioning
/// puts a window's half-cycles in at its start, so heat arrives up to half a window earlier
/// than the mean duty says, which the fit reads as less lag. The lag's uncertainty carries
/// that (rectangular, ±`timing_s`), and the rate's and τ's carry how far they move when the
/// lag is held at either end of it. `with_fall`: fit κ too (the record heats far above its
/// first step); otherwise κ is zero.
pub fn fit(t: &Trace, timing_s: f64, with_fall: bool) -> Result<Fitted, String> {
    let n = t.time_s.len();
    let free = [false, false, false, false, !with_fall];
    let theta = minimise(t, first_guess(t)?, free);
    let r = residuals(t, &theta);
    let s2 = sse(&r) / (n - N) as f64;
    let inflation = autocorrelation_inflation(&r);
    let m = normal(&jacobian(t, &theta));
    let stat = |i: usize| {
        let mut e = [0.0; N];
        e[i] = 1.0;
        solve(m, e).map_or(f64::INFINITY, |x| (x[i] * s2).max(0.0).sqrt() * inflation)
    };
    let (a, b, lag) = (theta[0], theta[1], theta[2]);
    if !(a.is_finite() && b.is_finite() && lag.is_finite()) {
        return Err("the fit did not converge".into());
    }
    let (mut ua, mut ub, mut ul) = (stat(0), stat(1), stat(2));
    let mut uf = if with_fall { stat(4) } else { 0.0 };
    // the model's own form: a first-order block leaves out the heater's lag behind the block,
    // the ambient's drift and the board's warming; its fits of the rig model's fixtures fell
    // within 3 % of their rate and τ and 0.3 s of their lag (rectangular)
    let form = |v: f64| v / 3f64.sqrt();
    ua = ua.hypot(form(MODEL_FORM_REL * a));
    ub = ub.hypot(form(MODEL_FORM_REL * b));
    ul = ul.hypot(form(MODEL_FORM_LAG_S));
    if with_fall {
        // the same 3 % of the rate, spread over the record's span above 20 °C (a loss that
        // grows faster than linearly reads as a falling heater)
        let top_c = t.temp_c.iter().copied().fold(f64::MIN, f64::max);
        uf = uf.hypot(form(MODEL_FORM_REL / (top_c - 20.0).max(10.0)));
    }
    if timing_s > 0.0 {
        let lag_held = [false, false, true, false, !with_fall];
        let held = |l: f64| minimise(t, [a, b, l.max(0.0), theta[3], theta[4]], lag_held);
        let (hi, lo) = (held(lag + timing_s), held(lag - timing_s));
        let rect = |d: f64| d.abs() / 2.0 / 3f64.sqrt();
        ua = ua.hypot(rect(hi[0] - lo[0]));
        ub = ub.hypot(rect(hi[1] - lo[1]));
        uf = uf.hypot(rect(hi[4] - lo[4]));
        ul = ul.hypot(timing_s / 3f64.sqrt());
    }
    Ok(Fitted {
        rate_k_per_s: (a, ua),
        // τ = 1/b: u(τ) = u(b)/b²
        cooling_tau_s: (1.0 / b, ub / (b * b)),
        lag_s: (lag, ul),
        rate_fall_per_k: (theta[4], uf),
        ambient_c: theta[3],
        residual_k: s2.sqrt(),
        points: n,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The model's own record with a known truth (0.25 °C steps of the converter): the fit
    /// must give it back within a few of its stated uncertainties.
    #[test]
    fn the_model_fitted_to_its_own_record_gives_its_parameters_back() {
        let truth: Theta = [0.8, 1.0 / 300.0, 2.0, 22.0, 0.0];
        let mut t = Trace::default();
        for k in 0..2400 {
            let s = f64::from(k) * 0.5;
            t.time_s.push(s);
            t.duty
                .push(if (30.0..500.0).contains(&s) { 0.2 } else { 0.0 });
            t.temp_c.push(22.0);
        }
        let y = simulate(&t, &truth);
        // quantised as the converter reads, with a small deterministic wobble
        t.temp_c = y
            .iter()
            .enumerate()
            .map(|(k, v)| ((v + 0.05 * ((k as f64) * 0.7).sin()) * 4.0).round() / 4.0)
            .collect();
        let f = fit(&t, 0.0, false).expect("fit");
        let (a, ua) = f.rate_k_per_s;
        let (tau, ut) = f.cooling_tau_s;
        let (lag, ul) = f.lag_s;
        assert!((a - 0.8).abs() < 4.0 * ua.max(0.004), "rate {a} ± {ua}");
        assert!((tau - 300.0).abs() < 4.0 * ut.max(3.0), "τ {tau} ± {ut}");
        assert!((lag - 2.0).abs() < 4.0 * ul.max(0.1), "lag {lag} ± {ul}");
        assert!(ua > 0.0 && ut > 0.0 && ul > 0.0);
        assert_eq!(
            f.rate_fall_per_k,
            (0.0, 0.0),
            "held at zero without a hot pass"
        );
    }

    /// A low step, then a hot one to 150 °C: the fall of the heating rate comes back.
    #[test]
    fn a_record_with_a_hot_pass_gives_the_heating_rates_fall_back() {
        let truth: Theta = [0.8, 1.0 / 300.0, 1.0, 22.0, 0.0012];
        let mut t = Trace::default();
        for k in 0..6000 {
            let s = f64::from(k) * 0.5;
            t.time_s.push(s);
            let u = match s {
                s if (30.0..160.0).contains(&s) => 0.2,
                s if (1200.0..2000.0).contains(&s) => 0.6,
                _ => 0.0,
            };
            t.duty.push(u);
            t.temp_c.push(22.0);
        }
        let y = simulate(&t, &truth);
        assert!(
            y.iter().copied().fold(f64::MIN, f64::max) > 120.0,
            "it got hot"
        );
        t.temp_c = y.iter().map(|v| (v * 4.0).round() / 4.0).collect();
        let f = fit(&t, 0.0, true).expect("fit");
        let (fall, u) = f.rate_fall_per_k;
        assert!(u > 0.0, "{u}");
        assert!((fall - 0.0012).abs() < 2.0 * u, "fall {fall} ± {u}");
        assert!((f.rate_k_per_s.0 - 0.8).abs() < 2.0 * f.rate_k_per_s.1);
    }
}
