//! `remanent sampling-plan`: how many magnets of a lot to test, and how many may fail.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::acceptance_plan::{design, Model};

#[derive(clap::Args)]
pub struct Args {
    /// Acceptable quality level, in percent defective a good lot may have, as AQL tables write
    /// it (`1` or `1%` is one part in a hundred; `0.65` is 0.65 %).
    #[arg(long, value_name = "PERCENT", value_parser = super::options::parse_percent)]
    aql: f64,
    /// Rejectable quality level, in percent defective a bad lot has (e.g. `6`).
    #[arg(long, value_name = "PERCENT", value_parser = super::options::parse_percent)]
    rql: f64,
    /// Producer's risk: chance of rejecting a lot at the AQL.
    #[arg(long, default_value_t = 0.05)]
    producer_risk: f64,
    /// Consumer's risk: chance of accepting a lot at the RQL.
    #[arg(long, default_value_t = 0.10)]
    consumer_risk: f64,
    /// Lot size: use the hypergeometric distribution for this finite lot.
    #[arg(long)]
    lot_size: Option<u64>,
    /// The profile the lot will be tested with, for the fixture time it needs.
    #[arg(long, default_value = "rapid")]
    profile: String,
    /// Rigs testing side by side.
    #[arg(long, default_value_t = 1, value_parser = clap::value_parser!(u64).range(1..))]
    rigs: u64,
    /// Minutes between magnets: unclamp, clamp the next, let the fixture come back toward room
    /// temperature.
    #[arg(long, default_value_t = 3.0, value_parser = super::options::parse_finite)]
    handling_min: f64,
    /// Write the OC curve to this file stem (.png and .svg).
    #[arg(long)]
    plot: Option<PathBuf>,
    #[command(flatten)]
    force: super::options::ForceOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let model = a
        .lot_size
        .map(Model::Hypergeometric)
        .unwrap_or(Model::Binomial);
    let plan = design(model, a.aql, a.rql, a.producer_risk, a.consumer_risk)?;
    println!(
        "test n = {}, accept the lot if at most c = {} fail",
        remanent::units::count(plan.n, "magnet", "magnets"),
        plan.c
    );
    println!(
        "  P(accept) at AQL {:.2} %: {:.4} (wanted ≥ {:.2}); at RQL {:.2} %: {:.4} (wanted ≤ {:.2}); {} model",
        a.aql * 100.0,
        plan.accept_at_aql,
        1.0 - a.producer_risk,
        a.rql * 100.0,
        plan.accept_at_rql,
        a.consumer_risk,
        match model {
            Model::Binomial => "binomial".to_string(),
            Model::Hypergeometric(n) => format!("hypergeometric, lot of {n}"),
        }
    );
    let profile = remanent::profiles::ProfileSpec::resolve(&a.profile)?;
    if a.handling_min < 0.0 {
        anyhow::bail!("--handling-min {} is negative", a.handling_min);
    }
    let per = remanent::rig_time::PerMagnet::new(&profile, 60.0, a.handling_min * 60.0);
    let t = remanent::rig_time::lot_time(plan.n, &per, a.rigs);
    println!(
        "fixture time with `{}`: {:.1} min a magnet ({:.0} s rest, {:.1} min profile{}, {:.1} min handling) → {:.1} rig-hours; on {} about {:.1} hours ({} rounds)",
        profile.name,
        per.total_s() / 60.0,
        per.rest_s,
        per.profile_s / 60.0,
        if ["rapid", "inspect"].contains(&profile.name.as_str()) {
            " nominal; the record often ends sooner, once α and the loss are known"
        } else {
            ""
        },
        per.handling_s / 60.0,
        t.rig_hours,
        remanent::units::count(a.rigs, "rig", "rigs"),
        t.hours,
        t.rounds
    );
    if let Some(stem) = a.plot {
        let figure = remanent::plots::oc_figure("oc", model, &plan, a.aql, a.rql)?;
        for f in remanent::plots::write_figure(&stem, &figure, a.force.force)? {
            println!("wrote {}", f.display());
        }
    }
    Ok(ExitCode::SUCCESS)
}
