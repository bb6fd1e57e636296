//! Synthetic runs from the virtual rig with known truth, across materials, ramp rates and
//! lags: α within ±0.003 %/°C, loss within ±0.1 % absolute, and U95 covering the truth.
//! The rig runs in-process (`SimulatedPort`), through the real firmware, recorder and analysis.

use std::time::Duration;

use remanent::analysis::{analyze, Analysis, Context};
use remanent::calibration::Calibration;
use remanent::input::dataset;
use remanent::jobs::record::{record, Quiet, RecordEnd, RecordOptions};
use remanent::magnets;
use remanent::profiles::{ProfileSpec, SegmentSpec};
use remanent::specs::SpecTable;
use remanent::virtual_rig::{RigTruth, SimulatedPort, VirtualRigOptions};

fn cycle(top_c: f64, rate: f64, top_hold_s: f64) -> ProfileSpec {
    ProfileSpec {
        name: "sweep".into(),
        description: "synthetic".into(),
        limit_c: top_c + 15.0,
        segments: vec![
            SegmentSpec {
                target_c: 25.0,
                ramp_c_per_min: 0.0,
                hold_s: 400.0,
            },
            SegmentSpec {
                target_c: top_c,
                ramp_c_per_min: rate,
                hold_s: top_hold_s,
            },
            SegmentSpec {
                target_c: 25.0,
                ramp_c_per_min: rate,
                hold_s: 500.0,
            },
        ],
    }
}

/// Record `profile` on a simulated rig and analyse it.
fn measure(
    magnet: &str,
    magnet_tau_s: f64,
    profile: ProfileSpec,
    seed: u64,
) -> (Analysis, RigTruth, remanent_rig_model::Magnet) {
    let m = magnets::resolve(magnet).unwrap();
    let model = m.model.unwrap();
    let mut opts = VirtualRigOptions::new(model);
    opts.params.thermal.magnet_tau_s = magnet_tau_s;
    opts.seed = seed;
    let params = opts.params;
    let port = SimulatedPort::new(opts);
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let rec = RecordOptions {
        port_label: "simulated".into(),
        silence_timeout: Duration::from_secs(5),
        ..RecordOptions::new(
            m.info,
            profile,
            Calibration::virtual_rig(&params),
            out.clone(),
        )
    };
    let mut port = port;
    let summary = record(&mut port, rec, &mut Quiet).unwrap();
    assert_eq!(summary.end, RecordEnd::Finished, "{magnet}");
    assert_eq!(summary.counts.gap_samples, 0);
    let truth = port.bench().truth();
    let (series, src) = dataset::load_run(&out, None).unwrap();
    let ctx = Context {
        calibration: src.calibration,
        magnet: src.magnet,
        specs: SpecTable::builtin(),
        default_tc_gain_pct: 0.75,
        reference: None,
    };
    (analyze(&series, &ctx).unwrap(), truth, model)
}

fn check_alpha(a: &Analysis, model: &remanent_rig_model::Magnet, label: &str) {
    // truth: the model's mean coefficient from 20 °C to the top of the fitted range
    let truth = model.alpha_pct_per_c + model.gamma_pct_per_c2 * (a.alpha.range_c[1] - 20.0);
    let err = a.alpha.pct_per_c - truth;
    assert!(
        err.abs() <= 0.003,
        "{label}: α {:.5} vs truth {truth:.5}",
        a.alpha.pct_per_c
    );
    assert!(
        err.abs() <= a.alpha.u95_pct_per_c,
        "{label}: error {err:.5} outside U95 {:.5}",
        a.alpha.u95_pct_per_c
    );
}

#[test]
fn alpha_is_recovered_across_materials_ramp_rates_and_lags() {
    // (magnet, magnet lag τ s, ramp °C/min, top °C)
    let cases = [
        ("RM-N42SH-D10x5", 45.0, 5.0, 100.0),
        ("RM-S2C17-D10x5", 20.0, 3.0, 120.0),
        ("RM-F8-B20x15x5", 90.0, 8.0, 100.0),
        ("RM-A5-D10x10", 60.0, 5.0, 110.0),
    ];
    for (i, (magnet, tau, rate, top)) in cases.into_iter().enumerate() {
        let (a, _, model) = measure(magnet, tau, cycle(top, rate, 240.0), 11 + i as u64);
        let label = format!("{magnet} at {rate} °C/min, τ {tau} s");
        check_alpha(&a, &model, &label);
        let est = a.lag.time_constant_s.unwrap();
        assert!(
            (est - tau).abs() < 0.15 * tau + 3.0,
            "{label}: lag {est:.1} s"
        );
        let loss = a.loss.pct.unwrap();
        assert!(
            loss.abs() <= 0.1 && loss.abs() <= a.loss.u95_pct.unwrap() + 1e-9,
            "{label}: loss {loss}"
        );
    }
}

#[test]
fn irreversible_loss_is_recovered_with_its_uncertainty() {
    // thin N35 disc (low permeance: onset about 60 °C in the model) and an N42 disc,
    // exposed above their onsets; the model's truth is the loss it applied
    for (magnet, top) in [("RM-N35-D10x2", 110.0), ("RM-N42-D10x5", 120.0)] {
        let (a, truth, model) = measure(magnet, 45.0, cycle(top, 10.0, 900.0), 5);
        // after a loss α comes from the cooling branch, which is reversible again
        check_alpha(&a, &model, magnet);
        let want = truth.irreversible * 100.0;
        assert!(
            want > 1.0,
            "{magnet}: the exposure should damage it (truth {want:.2} %)"
        );
        let got = a.loss.pct.unwrap();
        let u = a.loss.u95_pct.unwrap();
        assert!(
            (got - want).abs() <= 0.1,
            "{magnet}: loss {got:.3} % vs truth {want:.3} %"
        );
        assert!(
            (got - want).abs() <= u,
            "{magnet}: U95 {u:.3} does not cover {:.3}",
            got - want
        );
        // taken above its rating on purpose: the loss is the grade's exposure loss at that
        // temperature, not damage found in the part
        assert!(
            !a.judgement.heat_damaged,
            "{magnet}: an exposure above the rating is not damage"
        );
        assert!(
            a.judgement.quarantine.is_some(),
            "{magnet}: taken beyond its safe peak: {:#?}",
            a.notes
        );
    }
}

#[test]
fn conversion_inverts_the_rig_model_at_any_probe_temperature() {
    // The host's conversion must undo the model's probe physics exactly: same field, probe at
    // 20 … 40 °C, noise off.
    use remanent::conversion;
    use remanent_rig_model::{Rig, RigParams};
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let mut params = RigParams::REFERENCE;
    params.hall.noise_mv = 0.0;
    let cal = Calibration::virtual_rig(&params);
    let mut rig = Rig::new(params, m.model.unwrap(), 1);
    for probe_c in [20.0, 25.0, 30.0, 40.0] {
        rig.thermal.probe_c = probe_c;
        let truth = rig.field_mt();
        let code = rig.hall_code();
        let p_code = rig.probe_code();
        let tp = conversion::probe_c(p_code, &cal.ntc).unwrap();
        assert!(
            (tp - probe_c).abs() < 0.02,
            "probe {probe_c}: thermistor says {tp}"
        );
        let b = conversion::flux_mt(code, tp, &cal.hall);
        assert!(
            ((b - truth) / truth).abs() < 5e-5,
            "probe {probe_c} °C: {b} mT vs {truth} mT"
        );
    }
}

#[test]
fn a_curie_sweep_finds_the_collapse_and_still_gives_alpha() {
    // the built-in destructive sweep on the demo N42 disc (model Curie point 320 °C)
    let profile = ProfileSpec::resolve("curie-sweep").unwrap();
    let (a, truth, model) = measure("RM-N42-D10x5", 45.0, profile, 21);
    let tc = a.lag.curie_estimate_c.expect("collapse found");
    assert!(
        (tc - model.curie_c).abs() < 25.0,
        "collapse at {tc:.0} °C, model Curie point {} °C",
        model.curie_c
    );
    assert!(
        a.judgement.material_family.contains("NdFeB"),
        "{}",
        a.judgement.material_family
    );
    assert!(truth.irreversible > 0.99, "the sweep demagnetizes");
    assert!(a.loss.pct.unwrap() > 95.0);
    // this N42 also loses flux irreversibly long before the collapse, so the heating branch's α
    // is not the reversible one: the analysis must say so rather than pass it off as α(Br)
    assert!(
        a.alpha.range_c[1] <= tc - 100.0,
        "fitted up to {:.0} °C",
        a.alpha.range_c[1]
    );
    assert!(
        a.notes.iter().any(|n| n
            .to_string()
            .contains("irreversible loss below the collapse")),
        "{:?}",
        a.notes
    );
}
