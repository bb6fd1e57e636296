//! The firmware's integers on the wire: temperatures in tenths of a degree Celsius in an `i16`,
//! the heater's duty in a byte (0 off, 255 full).

/// °C from tenths of a degree.
pub fn c_from_tenths(tenth_c: i16) -> f64 {
    f64::from(tenth_c) / 10.0
}

/// Tenths of a degree from °C, rounded to nearest and saturated to the `i16` range.
pub fn tenths_from_c(c: f64) -> i16 {
    let t = libm::round(c * 10.0);
    t.clamp(f64::from(i16::MIN), f64::from(i16::MAX)) as i16
}

/// The heater's duty, %, from its byte on the wire.
pub fn duty_pct(byte: u8) -> f64 {
    f64::from(byte) / 255.0 * 100.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_duty_byte_is_its_share_of_255() {
        // protocol: 0 = off, 255 = full; the firmware rounds duty × 255 to the byte
        assert_eq!(duty_pct(0), 0.0);
        assert_eq!(duty_pct(255), 100.0);
        assert!((duty_pct(51) - 20.0).abs() < 1e-12);
    }
}
