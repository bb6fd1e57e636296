//! `remanent profiles`: the built-in heating profiles, what each does and how long it takes.

use std::process::ExitCode;

use remanent::profiles::{ProfileSpec, BUILTIN_NAMES};

pub fn run() -> anyhow::Result<ExitCode> {
    for name in BUILTIN_NAMES {
        let p = ProfileSpec::resolve(name)?;
        println!(
            "{:<12} up to {:>5.0} °C, about {:>3.0} min from 22 °C — {}",
            p.name,
            p.max_target_c(),
            p.nominal_duration_s(22.0) / 60.0,
            p.description
        );
        for s in &p.segments {
            println!(
                "{:14}→ {:>5.1} °C at {} then hold {:.0} s",
                "",
                s.target_c,
                if s.ramp_c_per_min > 0.0 {
                    format!("{:.1} °C/min", s.ramp_c_per_min)
                } else {
                    "once".into()
                },
                s.hold_s
            );
        }
    }
    println!("\nYour own: a TOML file with `name`, `description`, `limit_C` and [[segment]] tables (see `remanent record --help`).");
    Ok(ExitCode::SUCCESS)
}
