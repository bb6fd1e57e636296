//! `remanent history export`: found runs to a CSV file.

use std::path::PathBuf;
use std::process::ExitCode;

use super::common::FilterOpts;
use crate::cli::options::{ForceOpts, StoreOpts};

#[derive(clap::Args)]
pub struct Args {
    #[command(flatten)]
    filter: FilterOpts,
    /// The CSV file to write.
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    force: ForceOpts,
    #[command(flatten)]
    store: StoreOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let mut store = super::common::open(&a.store)?;
    let rows = store.find(&a.filter.filter(None))?;
    let text = remanent::history::export::to_csv(&rows);
    remanent::output::write(&a.out, text.as_bytes(), a.force.force)?;
    println!(
        "wrote {} ({})",
        a.out.display(),
        remanent::units::count(rows.len() as u64, "run", "runs")
    );
    Ok(ExitCode::SUCCESS)
}
