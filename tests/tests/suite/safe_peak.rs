//! The safe test peak, checked against computations that are not the product's, and the
//! inspection it sets: a conforming part loses nothing at it, a part whose coercivity is below
//! its grade's fails there, a test beyond it is marked for quarantine.

use remanent::jobs::trial::{self, TrialSpec};
use remanent::magnets;
use remanent::specs::SpecTable;
use remanent::test_plan::plan;
use remanent_physics::load_line::{demag_factor, Point};
use remanent_physics::Shape;

use crate::util::data;

/// ∫ f(x, y) dA over a pole face.
type FaceIntegral = dyn Fn(&dyn Fn(f64, f64) -> f64) -> f64;

/// The axial demagnetizing factor at the centre of a pole face, by brute force: the two pole
/// faces as sheets of magnetic charge ±1, their field's axial component summed over a polar
/// grid (a midpoint rule; no closed form), just inside the face.
fn face_n_by_quadrature(shape: &Shape) -> f64 {
    let (l, area): (f64, Box<FaceIntegral>) = match *shape {
        Shape::Cylinder {
            diameter_mm,
            length_mm,
        } => {
            let r = diameter_mm / 2.0;
            (
                length_mm,
                Box::new(move |f| {
                    let (nr, nphi) = (800, 64);
                    let mut s = 0.0;
                    for i in 0..nr {
                        let rho = (i as f64 + 0.5) / nr as f64 * r;
                        for j in 0..nphi {
                            let phi = (j as f64 + 0.5) / nphi as f64 * std::f64::consts::TAU;
                            s += f(rho * phi.cos(), rho * phi.sin()) * rho;
                        }
                    }
                    s * (r / nr as f64) * (std::f64::consts::TAU / nphi as f64)
                }),
            )
        }
        Shape::Block {
            a_mm,
            b_mm,
            length_mm,
        } => (
            length_mm,
            Box::new(move |f| {
                let n = 600;
                let (da, db) = (a_mm / n as f64, b_mm / n as f64);
                let mut s = 0.0;
                for i in 0..n {
                    for j in 0..n {
                        let x = -a_mm / 2.0 + (i as f64 + 0.5) * da;
                        let y = -b_mm / 2.0 + (j as f64 + 0.5) * db;
                        s += f(x, y);
                    }
                }
                s * da * db
            }),
        ),
    };
    // the own face contributes −1/2 just inside it; the far face, at distance l, pulls the
    // field further against the magnetization by its solid angle / 4π
    let far = area(&|x, y| l / (x * x + y * y + l * l).powf(1.5)) / (4.0 * std::f64::consts::PI);
    0.5 + far
}

/// Bz/J at the centre of the pole face (gap 0, on the axis) from magpylib 6.1.0 (Ortner &
/// Bandeira, SoftwareX 11, 100466, 2020), the rows of `tests/data/magpylib-field-points.csv`.
fn magpylib_face(shape: &str, d1: f64, d2: f64, l: f64) -> f64 {
    let mut rdr = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_path(data("magpylib-field-points.csv"))
        .unwrap();
    for rec in rdr.records() {
        let r = rec.unwrap();
        let num = |i: usize| r[i].parse::<f64>().unwrap();
        if &r[0] == shape
            && num(1) == d1
            && num(2) == d2
            && num(3) == l
            && num(4) == 0.0
            && num(5) == 0.0
        {
            return num(6);
        }
    }
    panic!("no magpylib row for {shape} {d1}×{d2}×{l} at the face");
}

#[test]
fn the_pole_face_factor_matches_magpylib_and_a_brute_force_sum() {
    // magpylib: N at the face centre is 1 − Bz/J there (B is continuous across the face)
    for (shape, d1, d2, l) in [
        ("cylinder", 10.0, 0.0, 5.0),
        ("cylinder", 20.0, 0.0, 5.0),
        ("cylinder", 6.0, 0.0, 3.0),
        ("cylinder", 25.0, 0.0, 10.0),
    ] {
        let s = if shape == "cylinder" {
            Shape::Cylinder {
                diameter_mm: d1,
                length_mm: l,
            }
        } else {
            Shape::Block {
                a_mm: d1,
                b_mm: d2,
                length_mm: l,
            }
        };
        let n = demag_factor(&s, Point::PoleFaceCentre);
        let from_magpylib = 1.0 - magpylib_face(shape, d1, d2, l);
        assert!(
            (n - from_magpylib).abs() < 1e-7,
            "{shape} {d1}×{d2}×{l}: {n} vs {from_magpylib}"
        );
    }
    // the demo shapes (the thin disc, the block), which magpylib's table lacks at the face:
    // the brute-force sum
    for s in demo_shapes() {
        let (n, by_sum) = (
            demag_factor(&s, Point::PoleFaceCentre),
            face_n_by_quadrature(&s),
        );
        assert!((n - by_sum).abs() < 2e-4, "{s:?}: {n} vs {by_sum}");
    }
}

fn demo_shapes() -> Vec<Shape> {
    let mut v: Vec<Shape> = remanent_rig_model::catalogue::PARTS
        .iter()
        .map(|p| p.magnet.shape)
        .collect();
    v.dedup();
    v
}

/// The knee limit by bisection on the load line as the domain notes state it — Br(T) and
/// HcJ(T) linear in T, |H_d| = Br / (μ0·(μrec + Pc)), knee 0.9·HcJ — with N from the sum.
fn knee_by_bisection(br_t: f64, alpha: f64, hcj: f64, beta: f64, recoil: f64, n: f64) -> f64 {
    let pc = (1.0 - n) / n;
    let clear = |t: f64| {
        let br = br_t * (1.0 + alpha / 100.0 * (t - 20.0));
        let hd = br / (4e-7 * std::f64::consts::PI * (recoil + pc)) / 1000.0;
        0.9 * hcj * (1.0 + beta / 100.0 * (t - 20.0)) - hd
    };
    let (mut lo, mut hi) = (-100.0, 1000.0);
    assert!(clear(lo) > 0.0 && clear(hi) < 0.0);
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if clear(mid) > 0.0 {
            lo = mid
        } else {
            hi = mid
        }
    }
    lo
}

#[test]
fn every_grade_and_demo_shape_gets_the_independently_computed_safe_peak() {
    let specs = SpecTable::builtin();
    let mut checked = 0;
    for g in specs.grades.iter() {
        for shape in demo_shapes() {
            let info = magnets::MagnetInfo {
                id: "x".into(),
                grade: g.grade.clone(),
                description: String::new(),
                max_working_c: 1000.0,
                shape,
                reference: None,
            };
            let p = remanent::safe_peak::for_part(&info, Some(g));
            let (Some(hcj), Some(beta)) = (g.hcj_min_ka_per_m, g.beta_hcj_pct_per_c) else {
                assert_eq!(p.peak_c, g.max_working_c, "{}: no HcJ, the rating", g.grade);
                continue;
            };
            if beta >= 0.0 {
                // ferrite: heating moves the knee away; the rating rules
                assert_eq!(p.peak_c, g.max_working_c, "{}", g.grade);
                continue;
            }
            let recoil = g.recoil_permeability.unwrap_or(1.05);
            let n = face_n_by_quadrature(&shape);
            let knee = knee_by_bisection(g.br_max_t, g.alpha_max, hcj, beta, recoil, n);
            let expected = (knee - 5.0).floor().min(g.max_working_c);
            assert!(
                (p.peak_c - expected).abs() <= 1.0,
                "{} {shape:?}: {} °C, independently {expected} °C (knee {knee:.1})",
                g.grade,
                p.peak_c
            );
            checked += 1;
        }
    }
    assert!(checked >= 12, "only {checked} grade × shape pairs");
}

/// The inspection of a demo part, as `record` plans it, on the virtual rig (ended by the analysis).
fn inspected(id: &str, dir: &std::path::Path) -> (remanent::jobs::trial::Trial, f64) {
    tested(id, "inspect", false, dir)
}

/// A demo part on the virtual rig with `profile` as `record` plans it.
fn tested(
    id: &str,
    profile: &str,
    allow_over: bool,
    dir: &std::path::Path,
) -> (remanent::jobs::trial::Trial, f64) {
    let m = magnets::resolve(id).unwrap();
    let p = plan(profile, &m.info, &SpecTable::builtin(), allow_over).unwrap();
    let spec = TrialSpec {
        magnet: id.into(),
        magnet_tau_s: 45.0,
        profile: p.profile.clone(),
        auto_end: Some(Default::default()),
        preroll_s: 60.0,
        seed: 11,
    };
    (trial::run(&spec, &dir.join(id)).unwrap(), p.safe.peak_c)
}

#[test]
fn conforming_parts_lose_nothing_at_their_safe_peak_within_15_minutes() {
    let dir = tempfile::tempdir().unwrap();
    for id in ["RM-N42-D10x5", "RM-N42SH-D10x5", "RM-N35-D10x2"] {
        let (t, safe_c) = inspected(id, dir.path());
        let a = &t.analysis;
        assert!(
            a.lag.max_magnet_temp_c <= safe_c + 1.0,
            "{id}: peak {}",
            a.lag.max_magnet_temp_c
        );
        assert_eq!(
            t.loss_truth_pct, 0.0,
            "{id}: the model lost flux at the safe peak"
        );
        let (l, u) = (a.loss.pct.unwrap(), a.loss.u95_pct.unwrap());
        assert!(l.abs() <= u, "{id}: loss {l} ± {u} %");
        // (Br from geometry may stay open without a reference magnet; nothing fails)
        assert!(
            a.judgement
                .checks
                .iter()
                .all(|c| c.outcome != remanent::analysis::verdict::Outcome::Fail),
            "{id}: {:?}",
            a.judgement.checks
        );
        assert!(
            !a.judgement.checks.iter().any(|c| c.what == "coercivity"),
            "{id}"
        );
        assert!(a.judgement.quarantine.is_none(), "{id}");
        assert!(
            t.fixture_s <= 15.0 * 60.0,
            "{id}: {:.0} s of fixture time",
            t.fixture_s
        );
    }
}

#[test]
fn a_part_whose_coercivity_is_below_its_grade_fails_at_the_safe_peak() {
    let dir = tempfile::tempdir().unwrap();
    let (t, _) = inspected("RM-N42SH-D10x5-B2", dir.path());
    let a = &t.analysis;
    let c = a
        .judgement
        .checks
        .iter()
        .find(|c| c.what == "coercivity")
        .expect("a coercivity check");
    assert_eq!(c.outcome, remanent::analysis::verdict::Outcome::Fail);
    assert!(
        c.reason.to_string().contains("coercivity below grade"),
        "{}",
        c.reason
    );
    assert_eq!(
        a.judgement.verdict,
        remanent::analysis::verdict::Outcome::Fail
    );
    assert!(
        a.judgement.quarantine.is_none(),
        "it was tested within its grade's safe peak"
    );
}

#[test]
fn a_built_in_profile_is_held_to_the_safe_peak_and_beyond_it_needs_the_flag() {
    let n42 = magnets::resolve("RM-N42-D10x5").unwrap().info;
    let specs = SpecTable::builtin();
    let held = plan("quick-alpha", &n42, &specs, false).unwrap();
    assert_eq!(held.clamped_from_c, Some(100.0));
    assert_eq!(held.profile.max_target_c(), held.safe.peak_c);
    let beyond = plan("quick-alpha", &n42, &specs, true).unwrap();
    assert!(beyond.over_safe);
    let said: Vec<String> = beyond
        .announce("RM-N42-D10x5")
        .iter()
        .map(|p| p.to_string())
        .collect();
    assert!(said.iter().any(|l| l.contains("quarantine")), "{said:?}");
    // a profile file beyond the safe peak is refused without the flag, and says why
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("hot.toml");
    std::fs::write(&f, "name = \"hot\"\ndescription = \"x\"\nlimit_C = 110\n[[segment]]\ntarget_C = 95\nramp_C_per_min = 5\nhold_s = 10\n").unwrap();
    let e = plan(f.to_str().unwrap(), &n42, &specs, false)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("safe test peak") && e.contains("--allow-over-rating"),
        "{e}"
    );
}

/// An over-rating test's run, reported: the quarantine statement in the report (and, read
/// back by poppler in `certificate_pages_carry_the_quarantine_statement`, the certificate).
fn over_rating_report(dir: &std::path::Path) -> std::path::PathBuf {
    let (t, safe_c) = tested("RM-N42-D10x5", "rapid", true, dir);
    assert!(t.analysis.lag.max_magnet_temp_c > safe_c + 20.0);
    let q = t
        .analysis
        .judgement
        .quarantine
        .as_ref()
        .expect("a quarantine statement")
        .to_string();
    assert!(q.contains("do not return it to stock"), "{q}");
    let out = dir.join("RM-N42-D10x5");
    remanent::jobs::report::run(&out, &Default::default(), false, &Default::default()).unwrap();
    out
}

#[test]
fn a_test_beyond_the_safe_peak_is_marked_for_quarantine_in_the_report() {
    let dir = tempfile::tempdir().unwrap();
    let out = over_rating_report(dir.path());
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    assert!(md.contains("QUARANTINE"), "{md}");
    // the loss it suffered is the grade's at that temperature, not a coercivity defect
    let a: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("analysis.json")).unwrap()).unwrap();
    assert!(!a["checks"]
        .as_array()
        .unwrap()
        .iter()
        .any(|c| c["what"] == "coercivity"));
}

#[test]
#[ignore = "needs poppler-utils (pdftotext): .ci/run installs it"]
fn certificate_pages_carry_the_quarantine_statement() {
    let dir = tempfile::tempdir().unwrap();
    let out = over_rating_report(dir.path());
    let text = std::process::Command::new("pdftotext")
        .args([out.join("certificate.pdf").to_str().unwrap(), "-"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&text.stdout).replace('\n', " ");
    assert!(
        text.contains("QUARANTINE") && text.contains("return it to stock"),
        "{text}"
    );
}
