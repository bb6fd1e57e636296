//! The least-squares core against NIST StRD (certified values from the StRD pages).

use remanent::analysis::lsq::polyfit;

use crate::util::{lre, read_yx};

#[test]
fn norris_parameters_and_standard_deviations_reach_the_nist_digits() {
    // NIST StRD "Norris": B0 = −0.262323073774029 (sd 0.232818234301152),
    // B1 = 1.00211681802045 (sd 0.429796848199937E−03), residual sd 0.884796396144373,
    // R² 0.999993745883712.
    let (y, x) = read_yx("nist-strd-norris.csv");
    assert_eq!(x.len(), 36);
    let f = polyfit(&x, &y, 1).unwrap();
    assert!(
        lre(f.coefficients[0], -0.262323073774029) >= 9.0,
        "B0 LRE {}",
        lre(f.coefficients[0], -0.262323073774029)
    );
    assert!(lre(f.coefficients[1], 1.00211681802045) >= 9.0);
    assert!(lre(f.std_errors[0], 0.232818234301152) >= 8.0);
    assert!(lre(f.std_errors[1], 0.429796848199937E-03) >= 8.0);
    assert!(lre(f.residual_sd, 0.884796396144373) >= 8.0);
    assert!(lre(f.r_squared, 0.999993745883712) >= 8.0);
}

#[test]
fn pontius_quadratic_reaches_the_nist_digits() {
    // NIST StRD "Pontius": B0 = 0.673565789473684E−03 (sd 0.107938612033077E−03),
    // B1 = 0.732059160401003E−06 (sd 0.157817399981659E−09),
    // B2 = −0.316081871345029E−14 (sd 0.486652849992036E−16), residual sd 0.205177424076185E−03.
    let (y, x) = read_yx("nist-strd-pontius.csv");
    assert_eq!(x.len(), 40);
    let f = polyfit(&x, &y, 2).unwrap();
    let certified = [
        0.673565789473684E-03,
        0.732059160401003E-06,
        -0.316081871345029E-14,
    ];
    let sds = [
        0.107938612033077E-03,
        0.157817399981659E-09,
        0.486652849992036E-16,
    ];
    for k in 0..3 {
        assert!(
            lre(f.coefficients[k], certified[k]) >= 9.0,
            "B{k} LRE {}",
            lre(f.coefficients[k], certified[k])
        );
        assert!(
            lre(f.std_errors[k], sds[k]) >= 8.0,
            "sd{k} LRE {}",
            lre(f.std_errors[k], sds[k])
        );
    }
    assert!(lre(f.residual_sd, 0.205177424076185E-03) >= 8.0);
}
