//! Very long records made light at load: above [`MAX_POINTS`] samples, consecutive samples
//! are averaged in blocks (a boxcar filter, then every k-th point) so that `analyze` of a
//! record of any length keeps to a bounded memory. A first-order lag of tens of seconds is
//! untouched by blocks of a few samples; the analysis says when it happened.

use std::io::{self, BufRead};
use std::path::Path;

/// The analysis keeps at most about this many samples of a record.
pub const MAX_POINTS: usize = 1_000_000;

/// Rows in a file, estimated from its size and the length of its first lines (64 KiB): a
/// memory bound needs no exact count, and reading the file twice would cost a third of the load.
pub fn estimate_rows(path: &Path) -> io::Result<usize> {
    let size = std::fs::metadata(path)?.len() as usize;
    let mut r = io::BufReader::with_capacity(64 << 10, std::fs::File::open(path)?);
    let head = r.fill_buf()?;
    let lines = head.iter().filter(|&&b| b == b'\n').count();
    Ok(match head.len().checked_div(lines) {
        Some(per_line) => size / per_line.max(1),
        None => 1,
    })
}

/// Averages `k` consecutive rows of `N` values.
pub struct Blocks<const N: usize> {
    k: usize,
    n: usize,
    sum: [f64; N],
}

impl<const N: usize> Blocks<N> {
    /// Blocks of `k` rows (1: every row as it is).
    pub fn new(k: usize) -> Blocks<N> {
        Blocks {
            k: k.max(1),
            n: 0,
            sum: [0.0; N],
        }
    }

    /// The block size for a record of about `rows` rows (an estimate may run 10 % over).
    pub fn for_rows(rows: usize) -> Blocks<N> {
        Blocks::new(rows.div_ceil(MAX_POINTS + MAX_POINTS / 10))
    }

    /// Rows per block.
    pub fn k(&self) -> usize {
        self.k
    }

    /// Add a row; the block's mean when it is complete.
    pub fn add(&mut self, v: [f64; N]) -> Option<[f64; N]> {
        if self.k == 1 {
            return Some(v);
        }
        for (s, x) in self.sum.iter_mut().zip(v) {
            *s += x;
        }
        self.n += 1;
        (self.n == self.k).then(|| self.take())
    }

    /// The mean of a last, partial block.
    pub fn finish(&mut self) -> Option<[f64; N]> {
        (self.n > 0).then(|| self.take())
    }

    fn take(&mut self) -> [f64; N] {
        let n = self.n as f64;
        let out = self.sum.map(|s| s / n);
        self.sum = [0.0; N];
        self.n = 0;
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn blocks_average_and_a_partial_block_is_kept() {
        let mut b = Blocks::<2>::new(3);
        let mut out: Vec<[f64; 2]> = (0..7).filter_map(|i| b.add([f64::from(i), 1.0])).collect();
        out.extend(b.finish());
        assert_eq!(out, vec![[1.0, 1.0], [4.0, 1.0], [6.0, 1.0]]);
        assert_eq!(Blocks::<1>::for_rows(2_500_000).k(), 3);
        assert_eq!(Blocks::<1>::for_rows(1_050_000).k(), 1);
        assert_eq!(Blocks::<1>::for_rows(999).k(), 1);
    }
}
