//! `remanent magnets`: the built-in demo parts for the virtual rig.

use std::process::ExitCode;

use remanent::units::DisplayUnits;
use remanent_rig_model::catalogue::PARTS;

pub fn run(u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let max = format!("max {}", u.temp_symbol());
    println!("{:<16} {:<11} {:>9}  description", "id", "grade", max);
    for p in PARTS {
        println!(
            "{:<16} {:<11} {:>9.0}  {}",
            p.id,
            p.grade,
            u.temp(p.magnet.max_working_c),
            p.description
        );
    }
    Ok(ExitCode::SUCCESS)
}
