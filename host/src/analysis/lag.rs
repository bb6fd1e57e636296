//! Thermal lag: the magnet follows the thermocouple as a first-order system. Its time
//! constant is the one that makes the heating and cooling branches coincide.

/// The thermocouple series filtered by a first-order lag of `tau_s` (exact discretization).
pub fn lagged(time_s: &[f64], temp_c: &[f64], tau_s: f64) -> Vec<f64> {
    let mut out = Vec::with_capacity(temp_c.len());
    let Some(&first) = temp_c.first() else {
        return out;
    };
    let mut m = first;
    out.push(m);
    // records are sampled on a fixed schedule: cache the factor for the last step length
    let (mut last_dt, mut k) = (f64::NAN, 0.0);
    for i in 1..temp_c.len() {
        if tau_s <= 0.0 {
            m = temp_c[i];
        } else {
            let dt = time_s[i] - time_s[i - 1];
            // times written to the millisecond differ in their last bits from step to step
            if (dt - last_dt).abs() > 1e-9 * dt.abs() || last_dt.is_nan() {
                last_dt = dt;
                k = 1.0 - (-dt / tau_s).exp();
            }
            // trapezoid on the input: the magnet sees the mean over the step
            m += k * (0.5 * (temp_c[i] + temp_c[i - 1]) - m);
        }
        out.push(m);
    }
    out
}

/// Golden-section steps after the grid: the bracket (two grid steps) shrinks by 0.618 each,
/// so 16 steps leave 0.05 % of it — far below what τ is known to.
pub const GOLDEN_STEPS: usize = 16;

/// Minimize `cost(τ)` over `[lo_s, hi_s]`: a coarse grid of `points`, then golden-section
/// refinement around the best grid point.
pub fn minimize(lo_s: f64, hi_s: f64, points: u32, cost: impl Fn(f64) -> f64 + Sync) -> (f64, f64) {
    let grid: Vec<f64> = (0..=points)
        .map(|i| lo_s + (hi_s - lo_s) * f64::from(i) / f64::from(points))
        .collect();
    // the grid's points are independent: half on each core
    let half = grid.len() / 2;
    let costs: Vec<f64> = std::thread::scope(|sc| {
        let upper = sc.spawn(|| grid[half..].iter().map(|&t| cost(t)).collect::<Vec<f64>>());
        let mut lower: Vec<f64> = grid[..half].iter().map(|&t| cost(t)).collect();
        lower.extend(upper.join().expect("grid half"));
        lower
    });
    let best = costs
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .map(|(i, _)| i)
        .unwrap_or(0);
    let (mut a, mut b) = (
        grid[best.saturating_sub(1)],
        grid[(best + 1).min(grid.len() - 1)],
    );
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - g * (b - a);
    let mut d = a + g * (b - a);
    let (mut fc, mut fd) = (cost(c), cost(d));
    for _ in 0..GOLDEN_STEPS {
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - g * (b - a);
            fc = cost(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + g * (b - a);
            fd = cost(d);
        }
    }
    let tau = 0.5 * (a + b);
    let best_cost = cost(tau).min(costs[best]);
    if costs[best] < cost(tau) {
        (grid[best], best_cost)
    } else {
        (tau, best_cost)
    }
}

/// The settling search runs on at most this many points.
pub const SETTLING_POINTS: usize = 200_000;

/// The lag from a settling: where the thermocouple holds still but the flux still relaxes, the
/// magnet is catching up with the thermocouple, B(t) = B∞ + A·exp(−t/τ). Returns τ and the
/// flux change explained, from the clearest such stretch at the lowest temperature (a settling
/// near room temperature is free of irreversible loss). `None` when no stretch shows one.
pub fn from_settling(time_s: &[f64], temp_c: &[f64], flux: &[f64]) -> Option<(f64, f64)> {
    let n = time_s.len();
    if n > SETTLING_POINTS {
        // a settling of tens of seconds is as clear in 200 000 points as in millions
        let stride = n.div_ceil(SETTLING_POINTS);
        let pick = |v: &[f64]| v.iter().step_by(stride).copied().collect::<Vec<f64>>();
        return from_settling(&pick(time_s), &pick(temp_c), &pick(flux));
    }
    if n < 100 {
        return None;
    }
    // smooth the thermocouple over about 5 s to see through its 0.25 °C steps
    let dt = (time_s[n - 1] - time_s[0]) / (n - 1) as f64;
    let w = ((5.0 / dt) as usize).max(1);
    let mut smooth = vec![0.0; n];
    let mut acc = 0.0;
    for i in 0..n {
        acc += temp_c[i];
        if i >= w {
            acc -= temp_c[i - w];
        }
        smooth[i] = acc / (i.min(w - 1) + 1) as f64;
    }
    let mut best: Option<(f64, f64, f64)> = None; // (score, tau, change)
    let mut i = w;
    while i < n {
        let mut j = i;
        while j + 1 < n && (smooth[j + 1] - smooth[i]).abs() <= 0.3 {
            j += 1;
        }
        let span = time_s[j] - time_s[i];
        if span >= 150.0 {
            // a relaxation is smooth: 2000 points describe it as well as 100 000
            let stride = ((j - i) / 2000).max(1);
            let ts: Vec<f64> = time_s[i..=j].iter().step_by(stride).copied().collect();
            let bs: Vec<f64> = flux[i..=j].iter().step_by(stride).copied().collect();
            let (t0, ts, bs) = (time_s[i], &ts[..], &bs[..]);
            let change = (bs[..bs.len() / 10].iter().sum::<f64>() / (bs.len() / 10) as f64
                - bs[bs.len() * 9 / 10..].iter().sum::<f64>()
                    / (bs.len() - bs.len() * 9 / 10) as f64)
                .abs();
            // fit B = c + a·exp(−(t − t0)/τ) for each τ; linear in (c, a)
            let sse = |tau: f64| line_rss(ts.iter().map(|t| (-(t - t0) / tau).exp()), bs);
            let (tau, _) = minimize(5.0, (span / 2.0).min(600.0), 40, sse);
            let score =
                change / (1.0 + smooth[i] - smooth.iter().copied().fold(f64::INFINITY, f64::min));
            if tau < span / 2.0 * 0.98 && best.is_none_or(|b| score > b.0) {
                best = Some((score, tau, change));
            }
        }
        i = j + 1;
    }
    best.map(|b| (b.1, b.2))
}

/// Residual sum of squares of the least-squares line through (x, y), from centred sums (cheap
/// enough to rank many candidate τ; infinite when x does not vary).
fn line_rss(x: impl Iterator<Item = f64> + Clone, y: &[f64]) -> f64 {
    let n = y.len() as f64;
    let mx = x.clone().sum::<f64>() / n;
    let my = y.iter().sum::<f64>() / n;
    let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
    for (xi, yi) in x.zip(y) {
        let (dx, dy) = (xi - mx, yi - my);
        sxx += dx * dx;
        sxy += dx * dy;
        syy += dy * dy;
    }
    if sxx <= 0.0 {
        return f64::INFINITY;
    }
    (syy - sxy * sxy / sxx).max(0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_ramp_is_followed_one_time_constant_behind() {
        // a first-order lag of τ on a ramp of rate r settles to T − r·τ (the textbook ramp
        // response of a first-order system): r = 0.05 K/s, τ = 30 s, so 1.5 K behind
        let time: Vec<f64> = (0..4000).map(|i| f64::from(i) * 0.5).collect();
        let temp: Vec<f64> = time.iter().map(|t| 20.0 + 0.05 * t).collect();
        let m = lagged(&time, &temp, 30.0);
        let behind = temp[3999] - m[3999];
        assert!((behind - 1.5).abs() < 1e-3, "{behind}");
        // a step is approached as 1 − e^(−t/τ): after one τ, 63.2 % of the way
        let step: Vec<f64> = time
            .iter()
            .map(|&t| if t > 0.0 { 10.0 } else { 0.0 })
            .collect();
        let m = lagged(&time, &step, 30.0);
        let frac = m[60] / 10.0; // t = 30 s
        assert!((frac - (1.0 - (-1.0f64).exp())).abs() < 0.01, "{frac}");
        // no lag: the input itself
        assert_eq!(lagged(&time, &temp, 0.0), temp);
    }
}
