//! The firmware's integer temperatures on the wire: tenths of a degree Celsius in an `i16`.

/// °C from tenths of a degree.
pub fn c_from_tenths(tenth_c: i16) -> f64 {
    f64::from(tenth_c) / 10.0
}

/// Tenths of a degree from °C, rounded to nearest and saturated to the `i16` range.
pub fn tenths_from_c(c: f64) -> i16 {
    let t = libm::round(c * 10.0);
    t.clamp(f64::from(i16::MIN), f64::from(i16::MAX)) as i16
}
