//! `remanent history info`: where the store is and what it holds.

use std::process::ExitCode;

use crate::cli::options::StoreOpts;

#[derive(clap::Args)]
pub struct Args {
    #[command(flatten)]
    store: StoreOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let mut store = super::common::open(&a.store)?;
    let (version, by) = store.version()?;
    let (runs, analyses) = store.counts()?;
    println!("store     {}", store.describe());
    println!("schema    version {version} (migrated by {by})");
    println!("holds     {runs} runs, {analyses} analyses");
    Ok(ExitCode::SUCCESS)
}
