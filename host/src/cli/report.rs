//! `remanent report`: plots and an HTML and Markdown report for a run — or, when the record
//! cannot be analysed, its time series and a plain statement of why.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::analysis::dataset;
use remanent::analysis::{analyze, Context};
use remanent::specs::SpecTable;

#[derive(clap::Args)]
pub struct Args {
    /// The run directory.
    pub run: PathBuf,
    /// Grade spec table (TOML); default: the built-in table.
    #[arg(long)]
    pub specs: Option<PathBuf>,
    /// Replace report files that are already there.
    #[arg(long)]
    pub force: bool,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let specs = match &a.specs {
        Some(p) => SpecTable::load(p)?,
        None => SpecTable::builtin(),
    };
    let (series, src) = dataset::load_run(&a.run, None)?;
    let run_name = a
        .run
        .file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_default();
    let title = src
        .magnet
        .as_ref()
        .map(|m| format!("{} ({}), run {run_name}", m.id, m.grade))
        .unwrap_or(run_name);
    let ctx = Context {
        calibration: src.calibration,
        magnet: src.magnet,
        specs,
        default_tc_gain_pct: 0.75,
    };
    let written = match analyze(&series, &ctx) {
        Ok(analysis) => remanent::report::write_all(&a.run, &series, &analysis, &title, a.force)?,
        Err(e) => {
            eprintln!("note: {e}; writing the time series and what could not be computed");
            remanent::report::write_unanalysed(&a.run, &series, &title, &e.to_string(), a.force)?
        }
    };
    for f in written {
        println!("wrote {}", f.display());
    }
    Ok(ExitCode::SUCCESS)
}
