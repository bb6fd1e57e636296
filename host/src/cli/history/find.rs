//! `remanent history find`: runs with their latest analysis, as a table.

use std::process::ExitCode;

use super::common::FilterOpts;
use crate::cli::options::StoreOpts;

#[derive(clap::Args)]
pub struct Args {
    #[command(flatten)]
    filter: FilterOpts,
    /// Show at most this many (the newest).
    #[arg(long, default_value_t = 50)]
    limit: u64,
    /// Show every match.
    #[arg(long, conflicts_with = "limit")]
    all: bool,
    #[command(flatten)]
    store: StoreOpts,
}

fn num(v: Option<f64>, digits: usize) -> String {
    v.map(|x| format!("{x:.digits$}"))
        .unwrap_or_else(|| "—".into())
}

pub fn run(a: Args, u: &remanent::units::DisplayUnits) -> anyhow::Result<ExitCode> {
    let mut store = super::common::open(&a.store)?;
    let rows = store.find(&a.filter.filter((!a.all).then_some(a.limit)))?;
    if rows.is_empty() {
        println!("no runs match in {}", store.describe());
        return Ok(ExitCode::SUCCESS);
    }
    println!(
        "{:<20} {:<22} {:<10} {:<14} {:<16} {:<13} {:>10} {:>8} {:>8}",
        "started (UTC)",
        "magnet",
        "grade",
        "lot",
        "supplier",
        "verdict",
        format!("α {}", u.alpha_symbol()),
        format!("Br {}", u.br_symbol()),
        "loss %"
    );
    for r in &rows {
        let t = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".into());
        println!(
            "{:<20} {:<22} {:<10} {:<14} {:<16} {:<13} {:>10} {:>8} {:>8}",
            r.when_utc,
            t(&r.magnet_id),
            t(&r.grade),
            t(&r.lot),
            t(&r.supplier),
            r.verdict.map_or("not analysed", |v| v.word()),
            num(r.alpha_pct_per_c.map(|v| u.per_degree(v)), 4),
            num(r.br_t.map(|v| u.br(v)), u.br_decimals(4)),
            num(r.loss_pct, 3),
        );
    }
    println!(
        "{} shown (store: {})",
        remanent::units::count(rows.len() as u64, "run", "runs"),
        store.describe()
    );
    Ok(ExitCode::SUCCESS)
}
