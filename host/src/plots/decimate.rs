//! Decimation for drawing: large records keep each bin's minimum and maximum, so a stray
//! reading stays visible however long the record.

/// Keep the minimum and maximum of `y` in each of `bins` equal slices (in order), as points.
pub fn decimate_minmax(x: &[f64], y: &[f64], bins: usize) -> Vec<(f64, f64)> {
    minmax_indices(0..x.len(), y, bins)
        .into_iter()
        .map(|i| (x[i], y[i]))
        .collect()
}

/// Indices of each of `bins` slices of `r`: its minimum and maximum of `y`, in order.
pub fn minmax_indices(r: std::ops::Range<usize>, y: &[f64], bins: usize) -> Vec<usize> {
    let n = r.len();
    if n <= 2 * bins {
        return r.collect();
    }
    let mut out = Vec::with_capacity(2 * bins);
    for k in 0..bins {
        let (lo, hi) = (r.start + k * n / bins, r.start + (k + 1) * n / bins);
        let (mut imin, mut imax) = (lo, lo);
        for i in lo..hi {
            if y[i] < y[imin] {
                imin = i;
            }
            if y[i] > y[imax] {
                imax = i;
            }
        }
        out.push(imin.min(imax));
        if imin != imax {
            out.push(imin.max(imax));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimation_keeps_every_outlier() {
        let n = 1_000_000;
        let mut y: Vec<f64> = (0..n).map(|i| (i as f64 * 1e-3).sin()).collect();
        let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
        for &k in &[12_345usize, 500_000, 999_999] {
            y[k] = 50.0;
        }
        y[777_777] = -50.0;
        let idx = minmax_indices(0..n, &y, 1000);
        assert!(idx.len() <= 2000);
        for k in [12_345, 500_000, 999_999, 777_777] {
            assert!(idx.contains(&k), "outlier at {k} dropped");
        }
        assert!(idx.windows(2).all(|w| w[0] < w[1]), "in order");
        let pts = decimate_minmax(&x, &y, 1000);
        assert_eq!(pts.iter().filter(|p| p.1.abs() == 50.0).count(), 4);
    }
}
