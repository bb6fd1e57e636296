//! The boiling point of water for the thermocouple check: the saturation temperature at a
//! pressure (IAPWS-IF97, region 4, the backward equation Ts(p)), and the pressure of the
//! standard atmosphere at an altitude.

/// Coefficients n1 … n10 of the IAPWS-IF97 region-4 equations (IAPWS-IF97, table 34).
const N: [f64; 10] = [
    0.116_705_214_527_67e4,
    -0.724_213_167_032_06e6,
    -0.170_738_469_400_92e2,
    0.120_208_247_024_70e5,
    -0.323_255_503_223_33e7,
    0.149_151_086_135_30e2,
    -0.482_326_573_615_91e4,
    0.405_113_405_420_57e6,
    -0.238_555_575_678_49,
    0.650_175_348_447_98e3,
];

/// Saturation temperature of water at `p_kpa`, °C (ITS-90), valid from 0.611 kPa to 22.064 MPa.
pub fn saturation_c(p_kpa: f64) -> f64 {
    let beta = libm::pow(p_kpa / 1000.0, 0.25);
    let e = beta * beta + N[2] * beta + N[5];
    let f = N[0] * beta * beta + N[3] * beta + N[6];
    let g = N[1] * beta * beta + N[4] * beta + N[7];
    let d = 2.0 * g / (-f - libm::sqrt(f * f - 4.0 * e * g));
    let s = N[9] + d;
    let t_k = (s - libm::sqrt(s * s - 4.0 * (N[8] + N[9] * d))) / 2.0;
    t_k - 273.15
}

/// Pressure of the standard atmosphere at `altitude_m`, kPa: 101.325·(1 − 2.25577e-5·h)^5.25588.
pub fn standard_pressure_kpa(altitude_m: f64) -> f64 {
    101.325 * libm::pow(1.0 - 2.255_77e-5 * altitude_m, 5.255_88)
}

/// Weather moves the pressure at a place by about this much either way, kPa (common practice:
/// use a barometer when the altitude alone is known).
pub const WEATHER_KPA: f64 = 2.5;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_saturation_temperature_matches_the_formulation_s_check_values() {
        // IAPWS-IF97 verification values for the region-4 backward equation (table 35; from the
        // domain notes, which give them from memory): Ts(0.1, 1, 10 MPa)
        for (p_kpa, t_k) in [
            (100.0, 372.755_919),
            (1000.0, 453.035_632),
            (10_000.0, 584.149_488),
        ] {
            let t = saturation_c(p_kpa) + 273.15;
            assert!((t - t_k).abs() < 1e-5, "{p_kpa} kPa: {t} K against {t_k} K");
        }
        // one standard atmosphere boils at 99.97 °C on ITS-90
        assert!((saturation_c(101.325) - 99.974).abs() < 0.002);
    }

    #[test]
    fn the_standard_atmosphere_falls_with_altitude() {
        assert!((standard_pressure_kpa(0.0) - 101.325).abs() < 1e-9);
        // 1500 m: about 84.6 kPa (standard-atmosphere tables)
        assert!((standard_pressure_kpa(1500.0) - 84.56).abs() < 0.1);
    }
}
