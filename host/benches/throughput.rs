//! Fixture throughput: minutes of fixture time per magnet against the errors of α and the
//! loss, for every built-in profile and each part of the accuracy sweep, on the in-process
//! virtual rig (known truth). Prints a table.
//!
//! Run: `cargo bench -p remanent --bench throughput`

use std::time::Instant;

use remanent::jobs::record::auto_end::Tolerance;
use remanent::jobs::trial::{self, TrialSpec, SWEEP};
use remanent::profiles::{ProfileSpec, BUILTIN_NAMES};

fn cpu_seconds() -> f64 {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let f: Vec<&str> = stat
        .rsplit(')')
        .next()
        .unwrap_or("")
        .split_whitespace()
        .collect();
    let ticks = |i: usize| f.get(i).and_then(|v| v.parse::<f64>().ok()).unwrap_or(0.0);
    (ticks(11) + ticks(12)) / 100.0
}

fn main() {
    let goal = Tolerance::default();
    let dir = tempfile::tempdir().unwrap();
    println!("| profile | part | fixture min | α error %/°C | α U95 | loss error % | loss U95 | end | goal met |");
    println!("|---|---|---|---|---|---|---|---|---|");
    let mut k = 0;
    for name in BUILTIN_NAMES {
        let profile = ProfileSpec::resolve(name).unwrap();
        for (magnet, tau) in SWEEP {
            k += 1;
            let spec = TrialSpec {
                magnet: magnet.into(),
                magnet_tau_s: tau,
                profile: profile.clone(),
                auto_end: Some(goal),
                preroll_s: 60.0,
                seed: 11 + k,
            };
            let (c0, w0) = (cpu_seconds(), Instant::now());
            let t = trial::run(&spec, &dir.path().join(format!("run{k}"))).unwrap();
            let (cpu, wall) = (cpu_seconds() - c0, w0.elapsed().as_secs_f64());
            let a = &t.analysis;
            let num =
                |v: Option<f64>, d: usize| v.map(|x| format!("{x:+.d$}")).unwrap_or("—".into());
            let end = if matches!(t.end, remanent::jobs::record::RecordEnd::Complete(_)) {
                "analysis"
            } else {
                "profile"
            };
            println!(
                "| {name} | {magnet} | {:.1} | {:+.4} | {:.4} | {} | {} | {end} | {} |",
                t.fixture_s / 60.0,
                t.alpha_error_pct_per_c,
                a.alpha.u95_pct_per_c,
                num(t.loss_error_pct, 3),
                a.loss
                    .u95_pct
                    .map(|u| format!("{u:.3}"))
                    .unwrap_or("—".into()),
                if t.meets(&goal) { "yes" } else { "no" },
            );
            if name == "rapid" && magnet == SWEEP[0].0 {
                eprintln!(
                    "host CPU per rig, rapid on {magnet} (recorder, live analysis and the simulated rig together, an upper bound): {:.3} % of a core ({cpu:.2} s CPU in {wall:.2} s for {:.1} fixture min)",
                    cpu / t.fixture_s * 100.0,
                    t.fixture_s / 60.0
                );
            }
        }
    }
}
