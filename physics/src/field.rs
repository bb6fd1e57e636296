//! On-axis flux density of uniformly magnetized simple magnets (closed forms).
//!
//! Sources: Derby & Olbert, Am. J. Phys. 78, 229 (2010) for the cylinder; Caciagli et al.,
//! JMMM 456, 423 (2018) and Furlani, *Permanent Magnet and Electromechanical Devices* for the
//! block. `z` is the distance from the pole face along the magnetization axis.

/// Bz on the axis of an axially magnetized cylinder (diameter `d`, length `l`, same length
/// unit as `z`), as a fraction of the remanence Br.
pub fn cylinder_bz_per_br(d: f64, l: f64, z: f64) -> f64 {
    let r2 = (d / 2.0) * (d / 2.0);
    0.5 * ((z + l) / libm::sqrt(r2 + (z + l) * (z + l)) - z / libm::sqrt(r2 + z * z))
}

/// Bz on the axis of a block with face `a` × `b` and thickness `l` along the magnetization,
/// as a fraction of Br.
pub fn block_bz_per_br(a: f64, b: f64, l: f64, z: f64) -> f64 {
    let term = |z: f64| {
        if z <= 0.0 {
            core::f64::consts::FRAC_PI_2
        } else {
            libm::atan(a * b / (2.0 * z * libm::sqrt(4.0 * z * z + a * a + b * b)))
        }
    };
    (term(z) - term(z + l)) / core::f64::consts::PI
}
