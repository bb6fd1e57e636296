//! A magnet's reversible temperature behaviour as the trade states it: a linear coefficient
//! α(B) in %/°C about the reference temperature of 20 °C (the form of grade tables and IEC
//! 60404-8-1 data sheets; common practice). One referral of a reading to 20 °C for every
//! caller.

/// The reference temperature of grade tables, °C.
pub const REFERENCE_C: f64 = 20.0;

/// The field a reading `b` taken at `temp_c` would have been at 20 °C, for a magnet whose
/// reversible coefficient is `alpha_pct_per_c` (any unit of `b`; the result in the same).
pub fn refer_to_20c(b: f64, temp_c: f64, alpha_pct_per_c: f64) -> f64 {
    b / (1.0 + alpha_pct_per_c / 100.0 * (temp_c - REFERENCE_C))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_reading_is_referred_to_20_c_by_its_coefficient() {
        // an N42 at −0.12 %/°C reads 1.2 % low 10 K above 20 °C (worked by hand)
        let b20 = 1000.0;
        let at_30 = b20 * (1.0 - 0.012);
        assert!((refer_to_20c(at_30, 30.0, -0.12) - b20).abs() < 1e-9);
        assert_eq!(refer_to_20c(250.0, 20.0, -0.2), 250.0);
    }
}
