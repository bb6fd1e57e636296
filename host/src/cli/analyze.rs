//! `remanent analyze`: α, loss and verdict for a run directory or a CSV log.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::analysis::summary;
use remanent::jobs::{load_and_analyze, InputRequest};

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
    /// The magnet (demo part id or TOML file), for CSV input.
    #[arg(long)]
    pub magnet: Option<String>,
    /// Map a column for CSV input, e.g. `--column temp_C=Temperature`.
    #[arg(long = "column", value_parser = parse_mapping)]
    pub columns: Vec<(String, String)>,
    /// For CSV input: the probe's sensitivity coefficient, %/°C, usually negative (needs a
    /// probe_temp_C column).
    #[arg(long, allow_negative_numbers = true, value_parser = super::options::parse_finite)]
    pub probe_tc_pct_per_c: Option<f64>,
    /// Lot, order, supplier, operator: for a CSV log, or where a run's run.toml has none.
    #[command(flatten)]
    pub inspection: super::options::InspectionOpts,
    #[command(flatten)]
    pub store: super::options::StoreOpts,
}

fn parse_mapping(s: &str) -> Result<(String, String), String> {
    s.split_once('=')
        .map(|(a, b)| (a.trim().to_string(), b.trim().to_string()))
        .ok_or_else(|| format!("`{s}` is not OURS=THEIRS"))
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let req = InputRequest {
        input: a.input.clone(),
        calibration: a.calibration,
        specs: a.specs.specs,
        magnet: a.magnet,
        columns: a.columns,
        probe_tc_pct_per_c: a.probe_tc_pct_per_c,
        reference: a.specs.reference,
        inspection: a.inspection.inspection(),
    };
    let (loaded, analysis) = load_and_analyze(&req)?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&analysis)?);
    } else {
        let title = format!("{} — {}", loaded.title, a.input.display());
        print!("{}", summary::text(&analysis, &title));
    }
    a.store.keep("the analysis", |at| {
        remanent::jobs::history::store_analysis(at, &a.input, &analysis)
    });
    Ok(ExitCode::SUCCESS)
}
