//! `remanent analyze`: α, loss and verdict for a run directory or a CSV log.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::jobs::{load_and_analyze, InputRequest};
use remanent::report::summary;

use super::options::SpecOpts;

#[derive(clap::Args, Clone)]
pub struct Args {
    /// A run directory, or a CSV log: a time column (time_s, time_ms, time_min or clock
    /// timestamps), a temperature (temp_C, temp_F, temp_K) and a flux (flux_mT, flux_T, flux_G,
    /// flux_kG); comma, semicolon or tab separated, decimal commas allowed.
    pub input: PathBuf,
    /// Print the machine-readable report (JSON) instead of the summary.
    #[arg(long)]
    pub json: bool,
    /// Re-convert a run with this calibration instead of the one recorded with it.
    #[arg(long)]
    pub calibration: Option<PathBuf>,
    #[command(flatten)]
    pub specs: SpecOpts,
    #[command(flatten)]
    pub csv: super::options::CsvOpts,
    /// Lot, order, supplier, operator: for a CSV log, or where a run's run.toml has none.
    #[command(flatten)]
    pub inspection: super::options::InspectionOpts,
    #[command(flatten)]
    pub store: super::options::StoreOpts,
}

pub fn run(a: Args, u: &remanent::units::DisplayUnits) -> anyhow::Result<ExitCode> {
    let req = InputRequest {
        input: a.input.clone(),
        calibration: a.calibration,
        specs: a.specs.specs,
        magnet: a.csv.magnet,
        columns: a.csv.columns,
        probe_tc_pct_per_c: a.csv.probe_tc_pct_per_c,
        strict: a.csv.strict,
        reference: a.specs.reference,
        inspection: a.inspection.inspection(),
    };
    let (loaded, analysis) = load_and_analyze(&req)?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&analysis)?);
    } else {
        // a logger's file with no magnet is titled by its name: said once
        let input = a.input.display().to_string();
        let title = match input.ends_with(&loaded.title) {
            true => input,
            false => format!("{} — {input}", loaded.title),
        };
        print!("{}", summary::text(&analysis, &title, u));
    }
    a.store.keep("the analysis", |at| {
        remanent::jobs::history::store_analysis(at, &a.input, &analysis)
    });
    Ok(ExitCode::SUCCESS)
}
