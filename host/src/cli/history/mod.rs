//! `remanent history`: the test history store — import run directories, find runs, a lot's
//! summary, a supplier's control chart, CSV export, and where the store is.

use std::process::ExitCode;

use clap::Subcommand;

mod common;
mod export;
mod find;
mod import;
mod info;
mod lot;
mod trend;

#[derive(clap::Args)]
pub struct Args {
    #[command(subcommand)]
    command: Cmd,
}

#[derive(Subcommand)]
enum Cmd {
    /// Add run directories (or folders of them) to the store; importing again changes nothing.
    Import(import::Args),
    /// List runs by magnet, lot, supplier, grade, date or verdict, with their latest analysis.
    Find(find::Args),
    /// A lot at a glance: verdict counts and the spread of α, Br and loss.
    Lot(lot::Args),
    /// A supplier's α, Br and loss over time with control limits, as a chart.
    Trend(trend::Args),
    /// Write found runs to a CSV file (SI-based units).
    Export(export::Args),
    /// Where the store is, its schema version and what it holds.
    Info(info::Args),
}

pub fn run(a: Args, u: &remanent::units::DisplayUnits) -> anyhow::Result<ExitCode> {
    match a.command {
        Cmd::Import(a) => import::run(a),
        Cmd::Find(a) => find::run(a, u),
        Cmd::Lot(a) => lot::run(a, u),
        Cmd::Trend(a) => trend::run(a, u),
        Cmd::Export(a) => export::run(a),
        Cmd::Info(a) => info::run(a),
    }
}
