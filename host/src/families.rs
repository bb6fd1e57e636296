//! Magnet material families: the one table of what the analysis knows about each (typical α,
//! Curie range, Br range, whether the open-circuit caveat applies). The verdict narrows a
//! measurement to the families it fits; the spec table names its grades' family from here.

/// What is typical of one family.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Family {
    /// The family's name, as spec tables and reports spell it.
    pub name: &'static str,
    /// Typical mean α(Br) near 20…100 °C, %/°C (domain notes' table).
    pub alpha_pct_per_c: (f64, f64),
    /// Typical Curie temperature, °C (domain notes' table; AlNiCo from memory).
    pub curie_c: (f64, f64),
    /// Br range that tells it from a family with a similar α, T (domain notes: SmCo5
    /// 0.74–1.00, Sm2Co17 0.93–1.15, AlNiCo 5 1.25–1.30, widened a little); `None`: Br does
    /// not narrow it.
    pub br_t: Option<(f64, f64)>,
    /// Its working point moves with temperature in an open circuit, so the field's coefficient
    /// is not exactly α(Br).
    pub open_circuit_caveat: bool,
}

/// Every family the analysis knows.
pub const FAMILIES: [Family; 5] = [
    Family {
        name: "sintered hard ferrite",
        alpha_pct_per_c: (-0.22, -0.16),
        curie_c: (420.0, 480.0),
        br_t: None,
        open_circuit_caveat: true,
    },
    Family {
        name: "sintered NdFeB",
        alpha_pct_per_c: (-0.135, -0.085),
        curie_c: (300.0, 410.0),
        br_t: None,
        open_circuit_caveat: false,
    },
    Family {
        name: "SmCo5",
        alpha_pct_per_c: (-0.05, -0.035),
        curie_c: (690.0, 760.0),
        br_t: Some((0.7, 1.02)),
        open_circuit_caveat: false,
    },
    Family {
        name: "Sm2Co17",
        alpha_pct_per_c: (-0.035, -0.025),
        curie_c: (790.0, 830.0),
        br_t: Some((0.9, 1.18)),
        open_circuit_caveat: false,
    },
    Family {
        name: "cast AlNiCo",
        alpha_pct_per_c: (-0.025, -0.01),
        curie_c: (820.0, 880.0),
        br_t: Some((1.1, 1.4)),
        open_circuit_caveat: true,
    },
];

/// The field collapses a little below the Curie point: a collapse this far below a family's
/// range still points to it, K.
pub const CURIE_COLLAPSE_MARGIN_K: f64 = 30.0;

/// The family called `name` (case-insensitive).
pub fn find(name: &str) -> Option<&'static Family> {
    FAMILIES.iter().find(|f| f.name.eq_ignore_ascii_case(name))
}

/// Families whose typical α range meets [α − U, α + U]; narrowed by a measured Curie collapse
/// and by Br when they help.
pub fn matching(
    alpha: f64,
    u95: f64,
    br_t: Option<f64>,
    curie_c: Option<f64>,
) -> Vec<&'static str> {
    let mut hits: Vec<&str> = FAMILIES
        .iter()
        .filter(|f| alpha + u95 >= f.alpha_pct_per_c.0 && alpha - u95 <= f.alpha_pct_per_c.1)
        .map(|f| f.name)
        .collect();
    if let Some(tc) = curie_c {
        let by_curie: Vec<&str> = FAMILIES
            .iter()
            .filter(|f| tc >= f.curie_c.0 - CURIE_COLLAPSE_MARGIN_K && tc <= f.curie_c.1)
            .map(|f| f.name)
            .collect();
        let both: Vec<&str> = hits
            .iter()
            .copied()
            .filter(|f| by_curie.contains(f))
            .collect();
        hits = if both.is_empty() { by_curie } else { both };
    }
    if hits.len() > 1 {
        if let Some(br) = br_t {
            let br_ok = |name: &str| match find(name).and_then(|f| f.br_t) {
                Some((lo, hi)) => (lo..hi).contains(&br),
                None => true,
            };
            let narrowed: Vec<&str> = hits.iter().copied().filter(|f| br_ok(f)).collect();
            if !narrowed.is_empty() {
                hits = narrowed;
            }
        }
    }
    hits
}
