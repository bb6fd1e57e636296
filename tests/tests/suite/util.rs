//! Small helpers: locating test data, log relative error.

use std::path::PathBuf;

/// A file in `tests/data`.
pub fn data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("data")
        .join(name)
}

/// NIST's log relative error: −log10(|estimate − certified| / |certified|), capped at 15.
pub fn lre(estimate: f64, certified: f64) -> f64 {
    let rel = ((estimate - certified) / certified).abs();
    if rel == 0.0 {
        15.0
    } else {
        (-rel.log10()).min(15.0)
    }
}

/// Read a two-column y,x CSV (a byte-order mark is tolerated).
pub fn read_yx(name: &str) -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(data(name)).unwrap();
    let text = text.trim_start_matches('\u{feff}');
    let mut y = Vec::new();
    let mut x = Vec::new();
    for line in text.lines().skip(1).filter(|l| !l.trim().is_empty()) {
        let (a, b) = line.split_once(',').unwrap();
        y.push(a.trim().parse().unwrap());
        x.push(b.trim().parse().unwrap());
    }
    (y, x)
}
