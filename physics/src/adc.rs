//! Signed 16-bit ADC codes and the voltages they stand for.

/// Codes per full scale (code 32767 is one step below full scale).
pub const CODES_PER_FULL_SCALE: f64 = 32768.0;

/// The code for `mv` on a range of `full_scale_mv` (saturating).
pub fn code(mv: f64, full_scale_mv: f64) -> i16 {
    let code = libm::round(mv / full_scale_mv * CODES_PER_FULL_SCALE);
    code.clamp(-32768.0, 32767.0) as i16
}

/// The voltage a code stands for, mV.
pub fn mv(code: i16, full_scale_mv: f64) -> f64 {
    f64::from(code) / CODES_PER_FULL_SCALE * full_scale_mv
}

/// Whether a code sits at a rail (the input is beyond the range).
pub fn saturated(code: i16) -> bool {
    code == i16::MAX || code == i16::MIN
}
