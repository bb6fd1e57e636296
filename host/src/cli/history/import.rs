//! `remanent history import`: run directories into the store.

use std::path::PathBuf;
use std::process::ExitCode;

use crate::cli::options::{InspectionOpts, SpecOpts, StoreOpts};

#[derive(clap::Args)]
pub struct Args {
    /// Run directories, or folders holding run directories.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// Fill in what the runs do not say themselves (a run's own values are kept).
    #[command(flatten)]
    inspection: InspectionOpts,
    /// Analyse every run again and keep the new analysis beside the one filed with it (which
    /// stays in the store); without it a run's filed analysis.json is stored as it was filed.
    #[arg(long)]
    reanalyse: bool,
    /// How runs filed without an analysis are judged (and every run with --reanalyse).
    #[command(flatten)]
    specs: SpecOpts,
    #[command(flatten)]
    store: StoreOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let at = a.store.location();
    let done = remanent::jobs::history::import(
        &at,
        &a.paths,
        &a.inspection.inspection(),
        &a.specs.judging(),
        a.reanalyse,
    )?;
    for (dir, why) in &done.unreadable_filed {
        eprintln!(
            "filed analysis unreadable, analysed again: {}: {why}",
            dir.display()
        );
    }
    for (dir, why) in &done.not_analysed {
        eprintln!("stored without an analysis: {}: {why}", dir.display());
    }
    println!(
        "{} as filed, {} here",
        remanent::units::count(done.as_filed, "analysis", "analyses"),
        remanent::units::count(done.analysed, "run analysed", "runs analysed"),
    );
    println!(
        "{}: {} new, {} new; {} found",
        at.describe(),
        remanent::units::count(done.new_runs, "run", "runs"),
        remanent::units::count(done.new_analyses, "analysis", "analyses"),
        remanent::units::count(done.found as u64, "run directory", "run directories"),
    );
    Ok(ExitCode::SUCCESS)
}
