//! Known fields for calibrating a Hall probe: the centre of a Helmholtz pair and the inside of a
//! long solenoid, from the coil's dimensions and a measured current.

/// The magnetic constant, N/A² (CODATA 2018).
pub const MU0: f64 = 1.256_637_062_12e-6;

/// Field at the centre of a Helmholtz pair (two coaxial coils of `turns` turns each, radius
/// `radius_m`, spaced one radius apart) carrying `current_a`, mT:
/// B = (4/5)^(3/2) · μ0 · N · I / R.
pub fn helmholtz_mt(turns: f64, radius_m: f64, current_a: f64) -> f64 {
    let k = libm::pow(0.8, 1.5);
    k * MU0 * turns * current_a / radius_m * 1000.0
}

/// Relative standard uncertainty of a Helmholtz field from those of the current and the radius
/// (the turns are counted exactly): √(u_I² + u_R²).
pub fn helmholtz_rel_u(current_rel_u: f64, radius_rel_u: f64) -> f64 {
    libm::sqrt(current_rel_u * current_rel_u + radius_rel_u * radius_rel_u)
}

/// Field inside a long solenoid far from its ends, `turns_per_m` turns per metre carrying
/// `current_a`, mT: B = μ0 · n · I.
pub fn solenoid_mt(turns_per_m: f64, current_a: f64) -> f64 {
    MU0 * turns_per_m * current_a * 1000.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_helmholtz_pair_matches_its_worked_value() {
        // worked value (textbook constant of the pair, from memory): (4/5)^(3/2) · μ0 =
        // 8.992e-7 T·m/A;
        // 100 turns of radius 0.1 m at 1 A give 0.8991 mT
        let b = helmholtz_mt(100.0, 0.1, 1.0);
        assert!((b - 0.899_18).abs() < 5e-5, "{b}");
    }

    #[test]
    fn a_solenoid_gives_mu0_n_i() {
        // 1000 turns per metre at 1 A: 1.2566 mT (μ0·n·I)
        assert!((solenoid_mt(1000.0, 1.0) - 1.256_637).abs() < 1e-6);
    }
}
