//! `remanent lot`: a shipment's runs side by side — table, spread, robust outliers, counts.

use std::path::PathBuf;
use std::process::ExitCode;

use super::options::{ForceOpts, SpecOpts};

#[derive(clap::Args)]
pub struct Args {
    /// Run directories, one per magnet.
    #[arg(required = true)]
    runs: Vec<PathBuf>,
    /// Folder for lot.csv, lot.html and the plots (must not exist unless --force).
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    specs: SpecOpts,
    /// Compare runs of different grades (a lot is normally one grade).
    #[arg(long)]
    mixed_grades: bool,
    /// Judge each part against this run of a master sample of the grade (same shape, same
    /// fixture): writes master.csv.
    #[arg(long)]
    master: Option<PathBuf>,
    #[command(flatten)]
    force: ForceOpts,
    #[command(flatten)]
    store: super::options::StoreOpts,
}

pub fn run(a: Args, u: &remanent::units::DisplayUnits) -> anyhow::Result<ExitCode> {
    let outcome = remanent::jobs::lot::run(
        &a.runs,
        &a.out,
        &remanent::jobs::Judging {
            master: a.master.clone(),
            ..a.specs.judging()
        },
        a.mixed_grades,
        a.force.force,
        u,
    )?;
    a.store.keep("the lot's analyses", |at| {
        remanent::jobs::history::store_analyses(at, &outcome.analyses)
    });
    for w in &outcome.warnings {
        eprintln!("warning: {w}");
    }
    for m in &outcome.against_master {
        println!(
            "{:<22} against the master: {:<13} {}",
            m.id,
            m.outcome.to_string(),
            m.reason.render(u)
        );
    }
    for (run, why) in &outcome.skipped {
        eprintln!("left out of the lot: {}: {why}", run.display());
    }
    print!("{}", remanent::report::lot_text(&outcome.summary, u));
    if !outcome.skipped.is_empty() {
        let names: Vec<String> = outcome
            .skipped
            .iter()
            .map(|s| s.0.display().to_string())
            .collect();
        println!(
            "\nnot analysed (see the messages above): {}",
            names.join(", ")
        );
    }
    println!();
    for f in &outcome.written {
        println!("wrote {}", f.display());
    }
    // a lot with runs left out is not the lot asked for
    Ok(if outcome.skipped.is_empty() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(3)
    })
}
