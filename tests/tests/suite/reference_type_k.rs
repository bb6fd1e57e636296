//! ITS-90 Type K against the NIST table (NIST Monograph 175, ITS-90 Thermocouple Database),
//! and the converter-chip correction.

use remanent_physics::type_k::{chip_reading_c, corrected_c, emf_mv, temperature_c};

use crate::util::data;

/// Every (°C, mV) entry of the NIST table.
fn table() -> Vec<(i32, f64)> {
    let text = std::fs::read_to_string(data("nist-its90-type-k.tab")).unwrap();
    let mut out = Vec::new();
    let mut step = 1;
    let mut in_table = false;
    for line in text.lines() {
        let t = line.trim();
        if t.starts_with("°C") {
            step = if t.contains(" -1 ") { -1 } else { 1 };
            in_table = true;
            continue;
        }
        if t.starts_with("ITS-90 Table") || t.is_empty() || t.starts_with("Thermoelectric") {
            continue;
        }
        if !in_table || t.starts_with('*') || t.contains(':') || t.contains('=') {
            if t.starts_with('*') || t.contains(':') {
                in_table = false;
            }
            continue;
        }
        let nums: Vec<f64> = t
            .split_whitespace()
            .filter_map(|w| w.parse().ok())
            .collect();
        if nums.len() < 2 || nums[0].fract() != 0.0 {
            continue;
        }
        let base = nums[0] as i32;
        for (k, &mv) in nums[1..].iter().enumerate() {
            out.push((base + step * k as i32, mv));
        }
    }
    out.sort_by_key(|e| e.0);
    out.dedup_by_key(|e| e.0);
    out
}

#[test]
fn forward_function_reproduces_every_table_entry() {
    let t = table();
    assert_eq!(t.len(), 1643, "−270 … 1372 °C, one entry per degree");
    assert_eq!(t.first().unwrap().0, -270);
    assert_eq!(t.last().unwrap().0, 1372);
    for &(c, mv) in &t {
        // the table is rounded to 0.001 mV
        assert!(
            (emf_mv(f64::from(c)) - mv).abs() <= 0.0005 + 1e-9,
            "{c} °C: {} vs {mv}",
            emf_mv(f64::from(c))
        );
    }
    // spot values quoted with the reference data: 25 °C → 1.000 mV, 1000 °C → 41.276 mV
    assert!((emf_mv(25.0) - 1.000).abs() < 0.0005);
    assert!((emf_mv(1000.0) - 41.276).abs() < 0.0005);
}

#[test]
fn inverse_functions_stay_within_their_stated_error_bands() {
    // NIST's stated errors: −0.02…0.04 °C (−200…0 °C), −0.05…0.04 °C (0…500 °C),
    // −0.05…0.06 °C (500…1372 °C)
    for (c, _) in table().into_iter().filter(|e| e.0 >= -200) {
        let c = f64::from(c);
        let err = temperature_c(emf_mv(c)) - c;
        let (lo, hi) = if c <= 0.0 {
            (-0.02, 0.04)
        } else if c <= 500.0 {
            (-0.05, 0.04)
        } else {
            (-0.05, 0.06)
        };
        assert!(
            err >= lo - 1e-3 && err <= hi + 1e-3,
            "{c} °C: inverse error {err:.4} outside {lo}…{hi}"
        );
    }
}

#[test]
fn chip_approximation_is_undone_to_within_five_hundredths() {
    // Uncorrected errors with the cold junction at 25 °C, from the domain notes (computed from
    // the NIST table): −0.2 at 50, −0.5 at 150, −2.1 at 200, −3.5 at 300, +0.9 °C at 500 °C.
    for (hot, expected) in [
        (50.0, -0.2),
        (150.0, -0.5),
        (200.0, -2.1),
        (300.0, -3.5),
        (500.0, 0.9),
    ] {
        let err = chip_reading_c(hot, 25.0) - hot;
        assert!(
            (err - expected).abs() < 0.15,
            "{hot} °C: chip error {err:.2}, expected about {expected}"
        );
    }
    // after the correction (the chip maker's application guidance): within 0.05 °C
    for cold in [0.0, 18.0, 25.0, 40.0] {
        for hot in [-50.0, 0.0, 25.0, 100.0, 150.0, 250.0, 400.0, 700.0] {
            let fixed = corrected_c(chip_reading_c(hot, cold), cold);
            assert!(
                (fixed - hot).abs() <= 0.05,
                "hot {hot}, cold {cold}: corrected {fixed}"
            );
        }
    }
}
