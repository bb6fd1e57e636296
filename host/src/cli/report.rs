//! `remanent report`: plots and an HTML and Markdown report for a run.

use std::path::PathBuf;
use std::process::ExitCode;

#[derive(clap::Args)]
pub struct Args {
    /// The run directory.
    pub run: PathBuf,
    /// Replace report files that are already there.
    #[arg(long)]
    pub force: bool,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let analyze_args = super::analyze::Args {
        input: a.run.clone(),
        json: false,
        calibration: None,
        specs: None,
        magnet: None,
        columns: Vec::new(),
        probe_tc_pct_per_c: None,
    };
    let (series, analysis, title) = super::analyze::load_and_analyze(&analyze_args)?;
    let written = remanent::report::write_all(&a.run, &series, &analysis, &title, a.force)?;
    for f in written {
        println!("wrote {}", f.display());
    }
    Ok(ExitCode::SUCCESS)
}
