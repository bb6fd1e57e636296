//! `remanent magnets`: the built-in demo parts for the virtual rig.

use std::process::ExitCode;

use remanent::units::DisplayUnits;
use remanent_rig_model::catalogue::PARTS;

pub fn run(u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let max = format!("max {}", u.temp_symbol());
    // columns as wide as their widest entry (a reference part's id is longer than the others)
    let w = |f: fn(&remanent_rig_model::catalogue::DemoPart) -> &str, head: &str| {
        PARTS
            .iter()
            .map(|p| f(p).chars().count())
            .chain([head.chars().count()])
            .max()
            .unwrap_or(0)
    };
    let (wi, wg) = (w(|p| p.id, "id"), w(|p| p.grade, "grade"));
    println!("{:<wi$}  {:<wg$}  {:>7}  description", "id", "grade", max);
    for p in PARTS {
        println!(
            "{:<wi$}  {:<wg$}  {:>7.0}  {}",
            p.id,
            p.grade,
            u.temp(p.magnet.max_working_c),
            p.description
        );
    }
    Ok(ExitCode::SUCCESS)
}
