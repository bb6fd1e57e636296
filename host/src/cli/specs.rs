//! `remanent specs`: the grade spec table in use (the built-in one, or `--specs FILE`).

use std::process::ExitCode;

use remanent::units::DisplayUnits;

use super::options::SpecOpts;

#[derive(clap::Args)]
pub struct Args {
    #[command(flatten)]
    specs: SpecOpts,
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let table = remanent::jobs::analyze_input::spec_table(a.specs.specs.as_deref())?;
    println!(
        "{:<10} {:<22} {:>18} {:>14}  source",
        "grade",
        "family",
        format!("α(Br) {}", u.alpha_symbol()),
        format!("Br {}", u.br_symbol())
    );
    let d = u.br_decimals(2);
    for g in &table.grades {
        println!(
            "{:<10} {:<22} {:>8.3} … {:<7.3} {:>5.d$} … {:<5.d$}  {}",
            g.grade,
            g.family,
            u.per_degree(g.alpha_min),
            u.per_degree(g.alpha_max),
            u.br(g.br_min_t),
            u.br(g.br_max_t),
            g.source
        );
    }
    Ok(ExitCode::SUCCESS)
}
