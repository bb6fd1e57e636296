//! `remanent analyze`: α, loss and verdict for a run directory or a CSV log.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::Context as _;
use remanent::analysis::dataset::{self, CsvOptions, Series};
use remanent::analysis::{analyze, summary, Analysis, Context};
use remanent::calibration::Calibration;
use remanent::magnets;
use remanent::specs::SpecTable;

#[derive(clap::Args, Clone)]
pub struct Args {
    /// A run directory, or a CSV file with time_s, temp_C and flux_mT (or flux_T, flux_G).
    pub input: PathBuf,
    /// Print the machine-readable report (JSON) instead of the summary.
    #[arg(long)]
    pub json: bool,
    /// Re-convert a run with this calibration instead of the one recorded with it.
    #[arg(long)]
    pub calibration: Option<PathBuf>,
    /// Grade spec table (TOML); default: the built-in table of typical values.
    #[arg(long)]
    pub specs: Option<PathBuf>,
    /// The magnet (demo part id or TOML file), for CSV input.
    #[arg(long)]
    pub magnet: Option<String>,
    /// Map a column for CSV input, e.g. `--column temp_C=Temperature`.
    #[arg(long = "column", value_parser = parse_mapping)]
    pub columns: Vec<(String, String)>,
    /// For CSV input: the probe's sensitivity coefficient, %/°C (needs probe_temp_C).
    #[arg(long)]
    pub probe_tc_pct_per_c: Option<f64>,
}

fn parse_mapping(s: &str) -> Result<(String, String), String> {
    s.split_once('=')
        .map(|(a, b)| (a.trim().to_string(), b.trim().to_string()))
        .ok_or_else(|| format!("`{s}` is not OURS=THEIRS"))
}

/// Load the input and analyse it.
pub fn load_and_analyze(a: &Args) -> anyhow::Result<(Series, Analysis, String)> {
    let specs = match &a.specs {
        Some(p) => SpecTable::load(p)?,
        None => SpecTable::builtin(),
    };
    let calibration = a
        .calibration
        .as_deref()
        .map(Calibration::load)
        .transpose()?;
    let (series, cal, magnet, title) = if a.input.is_dir() {
        let (s, src) = dataset::load_run(&a.input, calibration)?;
        let run_name = file_name(&a.input);
        let title = src
            .magnet
            .as_ref()
            .map(|m| format!("{} ({}), run {run_name}", m.id, m.grade))
            .unwrap_or(run_name);
        (s, src.calibration, src.magnet, title)
    } else {
        let opts = CsvOptions {
            rename: a.columns.iter().cloned().collect(),
            probe_tc_pct_per_c: a.probe_tc_pct_per_c,
        };
        let s = dataset::load_csv(&a.input, &opts)?;
        let m = a
            .magnet
            .as_deref()
            .map(magnets::resolve)
            .transpose()?
            .map(|m| m.info);
        let title = m
            .as_ref()
            .map(|m| format!("{} ({})", m.id, m.grade))
            .unwrap_or_else(|| file_name(&a.input));
        (s, calibration, m, title)
    };
    let ctx = Context {
        calibration: cal,
        magnet,
        specs,
        default_tc_gain_pct: 0.75,
    };
    let analysis =
        analyze(&series, &ctx).with_context(|| format!("analysing {}", a.input.display()))?;
    Ok((series, analysis, title))
}

fn file_name(p: &Path) -> String {
    p.file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_default()
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let (_, analysis, title) = load_and_analyze(&a)?;
    if a.json {
        println!("{}", serde_json::to_string_pretty(&analysis)?);
    } else {
        print!(
            "{}",
            summary::text(&analysis, &format!("{} — {}", title, a.input.display()))
        );
    }
    Ok(ExitCode::SUCCESS)
}
