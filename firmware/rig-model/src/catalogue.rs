//! Invented demo magnets for the virtual rig. Typical material values follow the published
//! ranges in the project's domain notes; part numbers and names are our own.

use crate::magnet::{Knee, Magnet, Shape};

/// A catalogue entry.
#[derive(Debug, Clone, Copy)]
pub struct DemoPart {
    /// Part id used on the command line.
    pub id: &'static str,
    /// What it is.
    pub description: &'static str,
    /// Grade name the supplier claims (looked up in the spec table).
    pub grade: &'static str,
    /// Its behaviour.
    pub magnet: Magnet,
}

const DISC_10X5: Shape = Shape::Cylinder {
    diameter_mm: 10.0,
    length_mm: 5.0,
};

/// A conforming N42's own curve: its HcJ above the grade's 955 kA/m minimum.
const N42_KNEE: Knee = Knee {
    hcj_20_ka_per_m: 1030.0,
    beta_pct_per_c: -0.58,
    squareness: 0.95,
};

/// A conforming N42 disc, Ø10 × 5 mm.
const N42_DISC: Magnet = Magnet {
    shape: DISC_10X5,
    br_20_t: 1.30,
    alpha_pct_per_c: -0.105,
    gamma_pct_per_c2: -0.00010,
    irreversible_onset_c: 85.0,
    irreversible_pct_per_c: 0.08,
    curie_c: 320.0,
    knee: Some(N42_KNEE),
    max_working_c: 80.0,
};

/// A conforming N42SH's own curve (the grade's minimum is 1592 kA/m).
const N42SH_KNEE: Knee = Knee {
    hcj_20_ka_per_m: 1680.0,
    beta_pct_per_c: -0.53,
    squareness: 0.95,
};

/// The built-in demo parts.
pub const PARTS: [DemoPart; 9] = [
    DemoPart {
        id: "RM-N42-D10x5",
        description: "sintered NdFeB disc, grade N42, Ø10 × 5 mm",
        grade: "N42",
        magnet: N42_DISC,
    },
    DemoPart {
        id: "RM-N42SH-D10x5",
        description: "sintered NdFeB disc, grade N42SH, Ø10 × 5 mm",
        grade: "N42SH",
        magnet: Magnet {
            shape: DISC_10X5,
            br_20_t: 1.31,
            alpha_pct_per_c: -0.108,
            gamma_pct_per_c2: -0.00008,
            irreversible_onset_c: 160.0,
            irreversible_pct_per_c: 0.06,
            curie_c: 340.0,
            knee: Some(N42SH_KNEE),
            max_working_c: 150.0,
        },
    },
    DemoPart {
        id: "RM-N35-D10x2",
        description: "thin sintered NdFeB disc, grade N35, Ø10 × 2 mm (low permeance)",
        grade: "N35",
        magnet: Magnet {
            shape: Shape::Cylinder {
                diameter_mm: 10.0,
                length_mm: 2.0,
            },
            br_20_t: 1.19,
            alpha_pct_per_c: -0.110,
            gamma_pct_per_c2: -0.00010,
            irreversible_onset_c: 85.0,
            irreversible_pct_per_c: 0.10,
            curie_c: 315.0,
            knee: Some(Knee {
                hcj_20_ka_per_m: 1010.0,
                beta_pct_per_c: -0.58,
                squareness: 0.95,
            }),
            max_working_c: 80.0,
        },
    },
    DemoPart {
        id: "RM-S2C17-D10x5",
        description: "Sm2Co17 disc, Ø10 × 5 mm",
        grade: "Sm2Co17-28",
        magnet: Magnet {
            shape: DISC_10X5,
            br_20_t: 1.07,
            alpha_pct_per_c: -0.030,
            gamma_pct_per_c2: -0.00004,
            irreversible_onset_c: 300.0,
            irreversible_pct_per_c: 0.03,
            curie_c: 820.0,
            knee: Some(Knee {
                hcj_20_ka_per_m: 1600.0,
                beta_pct_per_c: -0.19,
                squareness: 0.93,
            }),
            max_working_c: 320.0,
        },
    },
    DemoPart {
        id: "RM-F8-B20x15x5",
        description: "sintered hard ferrite block, 20 × 15 × 5 mm",
        grade: "Y30",
        magnet: Magnet {
            shape: Shape::Block {
                a_mm: 20.0,
                b_mm: 15.0,
                length_mm: 5.0,
            },
            br_20_t: 0.39,
            alpha_pct_per_c: -0.190,
            gamma_pct_per_c2: 0.0,
            irreversible_onset_c: 250.0,
            irreversible_pct_per_c: 0.02,
            curie_c: 450.0,
            knee: None,
            max_working_c: 250.0,
        },
    },
    DemoPart {
        id: "RM-A5-D10x10",
        description: "cast AlNiCo 5 rod, Ø10 × 10 mm",
        grade: "AlNiCo5",
        magnet: Magnet {
            shape: Shape::Cylinder {
                diameter_mm: 10.0,
                length_mm: 10.0,
            },
            br_20_t: 1.27,
            alpha_pct_per_c: -0.020,
            gamma_pct_per_c2: 0.0,
            irreversible_onset_c: 500.0,
            irreversible_pct_per_c: 0.01,
            curie_c: 850.0,
            knee: None,
            max_working_c: 520.0,
        },
    },
    DemoPart {
        id: "RM-REF-N42SH-D10x5",
        description:
            "reference disc for the fixture, sintered NdFeB N42SH, Ø10 × 5 mm, Br certified",
        grade: "N42SH",
        magnet: Magnet {
            shape: DISC_10X5,
            br_20_t: 1.3148,
            alpha_pct_per_c: -0.108,
            gamma_pct_per_c2: -0.00008,
            irreversible_onset_c: 160.0,
            irreversible_pct_per_c: 0.05,
            curie_c: 330.0,
            knee: Some(N42SH_KNEE),
            max_working_c: 150.0,
        },
    },
    DemoPart {
        id: "RM-N42SH-D10x5-B2",
        description: "disc sold as N42SH, Ø10 × 5 mm, from a second supplier's lot: its coercivity is an N42's, so it loses flux at the SH grade's safe test temperature",
        grade: "N42SH",
        magnet: Magnet {
            shape: DISC_10X5,
            br_20_t: 1.30,
            alpha_pct_per_c: -0.106,
            gamma_pct_per_c2: -0.00010,
            irreversible_onset_c: 85.0,
            irreversible_pct_per_c: 0.08,
            curie_c: 320.0,
            knee: Some(Knee {
                hcj_20_ka_per_m: 1000.0,
                beta_pct_per_c: -0.60,
                squareness: 0.95,
            }),
            max_working_c: 150.0,
        },
    },
    DemoPart {
        id: "RM-N42-D10x5-RTR",
        description: "rotor magnet, grade N42, Ø10 × 5 mm, from an overheated motor: it lost about 5 % of its flux in service",
        grade: "N42",
        // what it has left after its overheating: its knee no nearer than a conforming N42's
        magnet: Magnet {
            br_20_t: 1.235,
            ..N42_DISC
        },
    },
];

/// Look a part up by id (case-insensitive).
pub fn find(id: &str) -> Option<&'static DemoPart> {
    PARTS.iter().find(|p| p.id.eq_ignore_ascii_case(id))
}
