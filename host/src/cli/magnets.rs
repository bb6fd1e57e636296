//! `remanent magnets`: the built-in demo parts for the virtual rig.

use std::process::ExitCode;

use remanent_rig_model::catalogue::PARTS;

pub fn run() -> anyhow::Result<ExitCode> {
    println!("{:<16} {:<11} {:>9}  description", "id", "grade", "max_C");
    for p in PARTS {
        println!(
            "{:<16} {:<11} {:>9.0}  {}",
            p.id, p.grade, p.magnet.max_working_c, p.description
        );
    }
    Ok(ExitCode::SUCCESS)
}
