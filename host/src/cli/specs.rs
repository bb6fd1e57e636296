//! `remanent specs`: the grade spec table in use (the built-in one, or `--specs FILE`).

use std::process::ExitCode;

use super::options::SpecOpts;

#[derive(clap::Args)]
pub struct Args {
    #[command(flatten)]
    specs: SpecOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let table = remanent::jobs::analyze_input::spec_table(a.specs.specs.as_deref())?;
    println!(
        "{:<10} {:<22} {:>18} {:>14}  source",
        "grade", "family", "α(Br) %/°C", "Br T"
    );
    for g in &table.grades {
        println!(
            "{:<10} {:<22} {:>8.3} … {:<7.3} {:>5.2} … {:<5.2}  {}",
            g.grade, g.family, g.alpha_min, g.alpha_max, g.br_min_t, g.br_max_t, g.source
        );
    }
    Ok(ExitCode::SUCCESS)
}
