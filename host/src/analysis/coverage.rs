//! The expanded uncertainty as a coverage interval: the half-width of the symmetric interval
//! that holds the same probability as ±2 standard deviations of a normal distribution
//! (95.45 %), taken from the distribution the budget describes — normal terms (type A, and
//! type B given as standard deviations) combined in quadrature, each rectangular term
//! convolved with them numerically (JCGM 100:2008 G.2 and G.6.5; JCGM 101:2008 §5.3 for a
//! coverage interval from the propagated distribution). A budget of normal terms alone gets
//! exactly k = 2; one ruled by a rectangular term gets less (a rectangular distribution of
//! half-width a holds 95.45 % within ±0.9545·a = ±1.65·u), so its interval is not wider than
//! the knowledge behind it.

/// The probability the interval holds: that of ±2σ of a normal distribution.
pub const COVERAGE_PROBABILITY: f64 = 0.954_499_736;
/// The coverage factor of a budget of normal terms alone.
pub const K_NORMAL: f64 = 2.0;
/// Cells across the numerical distribution (odd: one cell is centred on zero).
const CELLS: usize = 8001;

/// The half-width of the coverage interval of a sum of a normal term of standard deviation
/// `normal_sd` and rectangular terms of standard deviations `rect_sd` (half-widths √3·u).
pub fn half_width(normal_sd: f64, rect_sd: &[f64]) -> f64 {
    let halves: Vec<f64> = rect_sd
        .iter()
        .map(|u| u.abs() * 3f64.sqrt())
        .filter(|a| *a > 0.0)
        .collect();
    if !(normal_sd.is_finite() && halves.iter().all(|a| a.is_finite())) {
        return f64::NAN;
    }
    if halves.is_empty() {
        return K_NORMAL * normal_sd.abs();
    }
    let span = 6.0 * normal_sd.abs() + halves.iter().sum::<f64>();
    let h = 2.0 * span / (CELLS - 1) as f64;
    let centre = CELLS / 2;
    let mut mass = normal_cells(normal_sd.abs(), h);
    for a in halves {
        box_filter(&mut mass, a / h);
    }
    let total: f64 = mass.iter().sum();
    // grow the interval cell by cell from the centre until it holds the probability
    let target = COVERAGE_PROBABILITY * total;
    let mut held = mass[centre];
    for k in 1..=centre {
        let step = mass[centre - k] + mass[centre + k];
        if held + step >= target {
            // the cells' mass spread evenly over their width: interpolate inside the step
            let f = (target - held) / step.max(f64::MIN_POSITIVE);
            return (k as f64 - 0.5 + f) * h;
        }
        held += step;
    }
    span
}

/// A normal density of `sd` as mass per cell (all in the centre cell when narrower than one).
fn normal_cells(sd: f64, h: f64) -> Vec<f64> {
    let centre = CELLS / 2;
    let mut mass = vec![0.0; CELLS];
    if sd < h {
        mass[centre] = 1.0;
        return mass;
    }
    for (i, m) in mass.iter_mut().enumerate() {
        let x = (i as f64 - centre as f64) * h;
        *m = (-0.5 * (x / sd).powi(2)).exp();
    }
    mass
}

/// Convolve with a rectangular density of half-width `half_cells` cells (a moving average
/// over 2w + 1 cells, by prefix sums).
fn box_filter(mass: &mut [f64], half_cells: f64) {
    let w = half_cells.round() as usize;
    if w == 0 {
        return;
    }
    let mut prefix = Vec::with_capacity(mass.len() + 1);
    prefix.push(0.0);
    for m in mass.iter() {
        prefix.push(prefix.last().copied().unwrap_or(0.0) + m);
    }
    let n = mass.len();
    let width = (2 * w + 1) as f64;
    for (i, m) in mass.iter_mut().enumerate() {
        let lo = i.saturating_sub(w);
        let hi = (i + w + 1).min(n);
        *m = (prefix[hi] - prefix[lo]) / width;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normal_terms_alone_get_k_2() {
        assert_eq!(half_width(0.5, &[]), 1.0);
        assert_eq!(half_width(0.5, &[0.0]), 1.0);
    }

    #[test]
    fn a_rectangular_term_alone_holds_95_45_percent_of_its_width() {
        // U(−a, a): P(|x| ≤ c) = c / a, so c = 0.9545·a (JCGM 100:2008 G.2.3's rectangular
        // case; the same follows from the density 1/2a by hand)
        let u = 1.0 / 3f64.sqrt(); // a = 1
        let c = half_width(0.0, &[u]);
        assert!((c - COVERAGE_PROBABILITY).abs() < 1e-3, "{c}");
        assert!(c / u < 1.66 && c / u > 1.64, "k = {}", c / u);
    }

    #[test]
    fn two_equal_rectangles_make_a_triangle() {
        // U(−1, 1) + U(−1, 1) is triangular on (−2, 2): P(|x| ≤ c) = 1 − (2 − c)²/4, so
        // c = 2 − 2·√(1 − p) (by hand)
        let u = 1.0 / 3f64.sqrt();
        let c = half_width(0.0, &[u, u]);
        let want = 2.0 - 2.0 * (1.0 - COVERAGE_PROBABILITY).sqrt();
        assert!((c - want).abs() < 2e-3, "{c} against {want}");
    }

    #[test]
    fn a_small_rectangle_beside_a_normal_changes_little_and_a_large_one_rules() {
        // the normal's k = 2 is approached as the rectangle shrinks …
        let c = half_width(1.0, &[0.05]);
        assert!((c - 2.0 * (1.0f64 + 0.0025).sqrt()).abs() < 0.01, "{c}");
        // … and the rectangle's 1.65 as it grows
        let c = half_width(0.01, &[1.0]);
        assert!((c - 1.653).abs() < 0.01, "{c}");
        assert!(half_width(f64::NAN, &[1.0]).is_nan());
    }
}
