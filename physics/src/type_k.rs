//! ITS-90 Type K thermocouple reference and inverse functions.
//!
//! Coefficients: NIST ITS-90 Thermocouple Database, NIST Monograph 175 (1993). EMF in mV,
//! temperature in °C. The reference function holds from −270 to 1372 °C; the inverse
//! functions from −200 to 1372 °C in three ranges.

/// Reference function coefficients, −270 … 0 °C.
const FORWARD_BELOW_ZERO: [f64; 11] = [
    0.000000000000E+00,
    0.394501280250E-01,
    0.236223735980E-04,
    -0.328589067840E-06,
    -0.499048287770E-08,
    -0.675090591730E-10,
    -0.574103274280E-12,
    -0.310888728940E-14,
    -0.104516093650E-16,
    -0.198892668780E-19,
    -0.163226974860E-22,
];

/// Reference function coefficients, 0 … 1372 °C (plus the exponential term).
const FORWARD_ABOVE_ZERO: [f64; 10] = [
    -0.176004136860E-01,
    0.389212049750E-01,
    0.185587700320E-04,
    -0.994575928740E-07,
    0.318409457190E-09,
    -0.560728448890E-12,
    0.560750590590E-15,
    -0.320207200030E-18,
    0.971511471520E-22,
    -0.121047212750E-25,
];
const EXP_A0: f64 = 0.118597600000E+00;
const EXP_A1: f64 = -0.118343200000E-03;
const EXP_A2: f64 = 0.126968600000E+03;

/// Inverse coefficients, −5.891 … 0 mV (−200 … 0 °C).
const INVERSE_LOW: [f64; 9] = [
    0.0000000E+00,
    2.5173462E+01,
    -1.1662878E+00,
    -1.0833638E+00,
    -8.9773540E-01,
    -3.7342377E-01,
    -8.6632643E-02,
    -1.0450598E-02,
    -5.1920577E-04,
];
/// Inverse coefficients, 0 … 20.644 mV (0 … 500 °C).
const INVERSE_MID: [f64; 10] = [
    0.000000E+00,
    2.508355E+01,
    7.860106E-02,
    -2.503131E-01,
    8.315270E-02,
    -1.228034E-02,
    9.804036E-04,
    -4.413030E-05,
    1.057734E-06,
    -1.052755E-08,
];
/// Inverse coefficients, 20.644 … 54.886 mV (500 … 1372 °C).
const INVERSE_HIGH: [f64; 7] = [
    -1.318058E+02,
    4.830222E+01,
    -1.646031E+00,
    5.464731E-02,
    -9.650715E-04,
    8.802193E-06,
    -3.110810E-08,
];

/// Range of the reference function, °C.
pub const FORWARD_RANGE_C: (f64, f64) = (-270.0, 1372.0);
/// Range of the inverse functions, mV.
pub const INVERSE_RANGE_MV: (f64, f64) = (-5.891, 54.886);

/// Sensitivity the common converter chips assume: 41.276 µV/°C (the 0…1000 °C chord).
pub const CHIP_MV_PER_C: f64 = 0.041276;

fn poly(coeffs: &[f64], x: f64) -> f64 {
    coeffs.iter().rev().fold(0.0, |acc, &c| acc * x + c)
}

/// Thermoelectric EMF of a Type K junction at `t_c` against 0 °C, mV.
pub fn emf_mv(t_c: f64) -> f64 {
    if t_c < 0.0 {
        poly(&FORWARD_BELOW_ZERO, t_c)
    } else {
        let d = t_c - EXP_A2;
        poly(&FORWARD_ABOVE_ZERO, t_c) + EXP_A0 * libm::exp(EXP_A1 * d * d)
    }
}

/// Temperature of a Type K junction producing `e_mv` against 0 °C, °C (inverse functions).
pub fn temperature_c(e_mv: f64) -> f64 {
    if e_mv < 0.0 {
        poly(&INVERSE_LOW, e_mv)
    } else if e_mv < 20.644 {
        poly(&INVERSE_MID, e_mv)
    } else {
        poly(&INVERSE_HIGH, e_mv)
    }
}

/// What a linear-approximation converter reports for a hot junction at `hot_c` with its cold
/// junction at `cold_c`: it measures E(hot) − E(cold) and divides by 41.276 µV/°C.
pub fn chip_reading_c(hot_c: f64, cold_c: f64) -> f64 {
    cold_c + (emf_mv(hot_c) - emf_mv(cold_c)) / CHIP_MV_PER_C
}

/// Undo the chip's linear approximation: the true hot-junction temperature from the chip's
/// reported temperature and its cold-junction temperature.
pub fn corrected_c(reported_c: f64, cold_c: f64) -> f64 {
    let v_tc = (reported_c - cold_c) * CHIP_MV_PER_C;
    temperature_c(v_tc + emf_mv(cold_c))
}
