//! `remanent profiles`: the built-in heating profiles, what each does and how long it takes.

use std::process::ExitCode;

use remanent::profiles::{ProfileSpec, BUILTIN_NAMES};
use remanent::units::{temp_q, DisplayUnits};

pub fn run(u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let deg = u.temp_symbol();
    for name in BUILTIN_NAMES {
        let p = ProfileSpec::resolve(name)?;
        println!(
            "{:<12} up to {:>5.0} {deg}, about {:>3.0} min from {} — {}",
            p.name,
            u.temp(p.max_target_c()),
            p.nominal_duration_s(22.0) / 60.0,
            temp_q(22.0, 0).render(u),
            p.description
        );
        for s in &p.segments {
            println!(
                "{:14}→ {:>5.1} {deg} at {} then hold {:.0} s",
                "",
                u.temp(s.target_c),
                if s.ramp_c_per_min > 0.0 {
                    format!("{:.1} {deg}/min", u.temp_span(s.ramp_c_per_min))
                } else {
                    "once".into()
                },
                s.hold_s
            );
        }
    }
    println!(
        "\nYour own: a TOML file like this one, every key required (`remanent record --profile warm-check.toml`):\n"
    );
    print!("{}", remanent::profiles::EXAMPLE_FILE);
    Ok(ExitCode::SUCCESS)
}
