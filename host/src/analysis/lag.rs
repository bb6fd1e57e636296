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
            if dt != last_dt {
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

/// Minimize `cost(τ)` over `[lo_s, hi_s]`: a coarse grid of `points`, then golden-section
/// refinement around the best grid point.
pub fn minimize(lo_s: f64, hi_s: f64, points: u32, mut cost: impl FnMut(f64) -> f64) -> (f64, f64) {
    let grid: Vec<f64> = (0..=points)
        .map(|i| lo_s + (hi_s - lo_s) * f64::from(i) / f64::from(points))
        .collect();
    let costs: Vec<f64> = grid.iter().map(|&t| cost(t)).collect();
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
    for _ in 0..30 {
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
