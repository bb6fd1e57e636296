//! Coverage of the stated U95, measured by simulation (in the manner of JCGM 101:2008 §8,
//! validating an uncertainty evaluation by Monte Carlo): a few hundred records from the
//! independent bench model (`bench_model`), each with its own noise seed, lag, ramp, logger
//! and loss, analysed as a user's CSV; the truth must lie inside the stated U95 about 95 % of
//! the time. Each input the budgets name is drawn from the distribution the budget states for
//! it: the thermocouple's gain error rectangular within the default ±0.75 % (IEC 60584-1's
//! class 2 tolerance as a percentage of the reading), and for Br the reference magnet's
//! certified value, the placement repeatability and the fixture's true gap, normal with the
//! stated standard uncertainties. The coverage probability claimed is 95.45 % (k = 2 of a
//! normal budget); the acceptance interval is the central 99 % of Binomial(n, 0.9545), computed
//! here, so a budget too small (coverage low) or too large (coverage near 100 %) fails.

use remanent::analysis::coverage::COVERAGE_PROBABILITY;
use remanent::analysis::fixture_ref::{FixtureReference, DEFAULT_REPEATABILITY_PCT};
use remanent::calibration::Stamp;
use remanent_physics::Shape;

use crate::bench_model::{self as bm, Bench, TrueMagnet};

/// Records simulated (each gives one α, one loss and one Br).
const RECORDS: u64 = 200;
/// The nominal gap of the simulated fixture and its stated standard uncertainty, mm.
const GAP_MM: f64 = 3.0;
const GAP_U_MM: f64 = 0.05;
/// The reference magnet: its certificate (value and standard uncertainty, T) and shape.
const REF_BR_T: f64 = 1.30;
const REF_BR_U_T: f64 = 0.0026;
const REF_SHAPE: Shape = Shape::Cylinder {
    diameter_mm: 10.0,
    length_mm: 5.0,
};
/// The reference's reading's stated standard uncertainty, mT.
const REF_READ_U_MT: f64 = 0.02;

/// splitmix64: the scenario draws (independent of the bench's own noise generator).
struct Draw(u64);

impl Draw {
    fn unit(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^= z >> 31;
        (z >> 11) as f64 / (1u64 << 53) as f64
    }

    fn between(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }

    /// A standard normal (Box–Muller).
    fn normal(&mut self) -> f64 {
        let (u, v) = (self.unit().max(1e-300), self.unit());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

struct Case {
    bench: Bench,
    magnet: TrueMagnet,
    program: Vec<bm::Step>,
    /// The part's shape and true Br, T; the fixture's true gap, mm; the reference magnet's
    /// true Br, T; the relative placement errors of the reference and the part.
    shape: Shape,
    br_t: f64,
    gap_mm: f64,
    ref_br_t: f64,
    placement: [f64; 2],
}

fn case(k: u64) -> Case {
    let mut d = Draw(0xc0fe_0000 + k);
    let lossy = d.unit() < 0.5;
    let shape = [
        REF_SHAPE,
        Shape::Cylinder {
            diameter_mm: 10.0,
            length_mm: 3.0,
        },
        Shape::Cylinder {
            diameter_mm: 12.0,
            length_mm: 6.0,
        },
    ][(d.unit() * 3.0) as usize];
    let br_t = d.between(1.15, 1.45);
    let gap_mm = GAP_MM + GAP_U_MM * d.normal();
    let ref_br_t = REF_BR_T + REF_BR_U_T * d.normal();
    let rep = DEFAULT_REPEATABILITY_PCT / 100.0;
    let placement = [rep * d.normal(), rep * d.normal()];
    let magnet = TrueMagnet {
        b20_mt: br_t * 1000.0 * shape.bz_per_br(gap_mm) * (1.0 + placement[1]),
        a1_pct: d.between(-0.125, -0.09),
        a2_pct: d.between(-0.00016, -0.00006),
        onset_c: if lossy { d.between(80.0, 105.0) } else { 500.0 },
        loss_per_k_pct: d.between(0.005, 0.03),
        loss_tau_s: d.between(80.0, 250.0),
    };
    let bench = Bench {
        magnet_tau_s: d.between(15.0, 60.0),
        tc_tau_s: d.between(0.5, 3.0),
        dt_s: [0.5, 1.0, 2.0][(d.unit() * 3.0) as usize],
        temp_noise_k: d.between(0.02, 0.08),
        flux_noise_mt: d.between(0.008, 0.04),
        tc_gain_pct: d.between(-0.75, 0.75),
        seed: 0x5eed_0000 ^ k.wrapping_mul(0x2545_f491),
        ..Bench::default()
    };
    let top = d.between(105.0, 150.0);
    let rate = d.between(2.0, 6.0);
    let program = bm::cycle(bench.ambient_c, top, bench.ambient_c, rate);
    Case {
        bench,
        magnet,
        program,
        shape,
        br_t,
        gap_mm,
        ref_br_t,
        placement,
    }
}

/// Whether each stated U95 covered the truth (the loss: when one was stated).
struct Covered {
    alpha: bool,
    loss: Option<bool>,
    br: bool,
}

fn trial(k: u64) -> Covered {
    let c = case(k);
    let (rows, truth) = bm::run(&c.bench, &c.magnet, &c.program);
    let a = crate::imperfect_records::analyse_rows(&rows);
    // α's truth: the two-point mean between 20 °C and the top of the fit as stated
    let alpha_err = a.alpha.pct_per_c - c.magnet.alpha_pct(a.alpha.range_c[1]);
    let loss_true = *truth.loss_after_step_pct.last().expect("steps");
    let loss = a
        .loss
        .pct
        .zip(a.loss.u95_pct)
        .map(|(l, u)| (l - loss_true).abs() <= u);
    // the reference read once in the same fixture, with its reading's noise
    let mut d = Draw(0x0bad_cafe ^ k);
    let ref_b20 = c.ref_br_t * 1000.0 * REF_SHAPE.bz_per_br(c.gap_mm) * (1.0 + c.placement[0])
        + REF_READ_U_MT * d.normal();
    let reference = FixtureReference {
        magnet: "simulated reference".into(),
        shape: REF_SHAPE,
        br_t: REF_BR_T,
        br_u_t: REF_BR_U_T,
        source: "simulated certificate".into(),
        b20_mt: ref_b20,
        b20_u_mt: REF_READ_U_MT,
        repeatability_pct: DEFAULT_REPEATABILITY_PCT,
        placements: 1,
        gap_mm: GAP_MM,
        gap_u_mm: GAP_U_MM,
        made: Stamp(0),
    };
    let (br, _) = reference.br_of(&c.shape, a.alpha.b20_mt, a.alpha.b20_u_mt);
    // Br of the part as it came (B20 is the curve's value before any loss in the record)
    let br_true = c.br_t;
    Covered {
        alpha: alpha_err.abs() <= a.alpha.u95_pct_per_c,
        loss,
        br: (br.br_t - br_true).abs() <= br.br_u95_t,
    }
}

/// The central 99 % of Binomial(n, p): the counts [lo, hi] outside which each tail holds at
/// most 0.5 % (the pmf summed in logs).
fn acceptance(n: usize, p: f64) -> (usize, usize) {
    let ln_pmf = |k: usize| -> f64 {
        let ln_fact = |m: usize| (1..=m).map(|i| (i as f64).ln()).sum::<f64>();
        ln_fact(n) - ln_fact(k) - ln_fact(n - k)
            + k as f64 * p.ln()
            + (n - k) as f64 * (1.0 - p).ln()
    };
    let (mut lo, mut tail) = (0, 0.0);
    while tail + ln_pmf(lo).exp() <= 0.005 {
        tail += ln_pmf(lo).exp();
        lo += 1;
    }
    let (mut hi, mut tail) = (n, 0.0);
    while tail + ln_pmf(hi).exp() <= 0.005 {
        tail += ln_pmf(hi).exp();
        hi -= 1;
    }
    (lo, hi)
}

#[test]
fn the_stated_u95_covers_the_truth_about_95_percent_of_the_time() {
    // the records split over two threads (the machine's two cores)
    let results: Vec<Covered> = std::thread::scope(|s| {
        let odd = s.spawn(|| (1..RECORDS).step_by(2).map(trial).collect::<Vec<_>>());
        let mut all: Vec<Covered> = (0..RECORDS).step_by(2).map(trial).collect();
        all.extend(odd.join().expect("trials"));
        all
    });
    let count = |f: &dyn Fn(&Covered) -> Option<bool>| {
        let v: Vec<bool> = results.iter().filter_map(f).collect();
        (v.iter().filter(|b| **b).count(), v.len())
    };
    let mut failures = Vec::new();
    for (what, (inside, n)) in [
        ("α", count(&|c| Some(c.alpha))),
        ("loss", count(&|c| c.loss)),
        ("Br (reference)", count(&|c| Some(c.br))),
    ] {
        let (lo, hi) = acceptance(n, COVERAGE_PROBABILITY);
        println!(
            "coverage of U95 for {what}: {inside} of {n} ({:.1} %); accepted {lo}…{hi} \
             (central 99 % of Binomial({n}, {COVERAGE_PROBABILITY:.4}))",
            inside as f64 / n as f64 * 100.0
        );
        if n < RECORDS as usize * 9 / 10 || inside < lo || inside > hi {
            failures.push(format!("{what}: {inside} of {n} outside {lo}…{hi}"));
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

#[test]
fn the_acceptance_interval_is_the_binomials() {
    // Binomial(200, 0.95): mean 190, sd 3.08; its central 99 % is about ±2.6 sd (normal
    // approximation, by hand), so 182…198
    let (lo, hi) = acceptance(200, 0.95);
    assert!(
        (181..=183).contains(&lo) && (197..=199).contains(&hi),
        "{lo}…{hi}"
    );
}
