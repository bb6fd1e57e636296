//! `remanent report`: plots, HTML and Markdown reports, the JSON and the certificate for a run
//! directory or a logger's CSV file — or, when the record cannot be analysed, its time series
//! and a plain statement of why.

use std::path::PathBuf;
use std::process::ExitCode;

use super::options::{ForceOpts, SpecOpts};

#[derive(clap::Args)]
pub struct Args {
    /// A run directory, or a logger's CSV file (as `analyze` reads it).
    pub run: PathBuf,
    /// Folder for the report (default: the run directory itself, or `<name>-report` beside a
    /// CSV file).
    #[arg(long)]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub specs: SpecOpts,
    #[command(flatten)]
    pub csv: super::options::CsvOpts,
    /// Lot, order, supplier, operator: for a CSV log, or where a run's run.toml has none.
    #[command(flatten)]
    pub inspection: super::options::InspectionOpts,
    /// Paper of the printable certificate (certificate.pdf).
    #[arg(long, value_enum, default_value_t = PaperArg::A4)]
    pub paper: PaperArg,
    #[command(flatten)]
    pub force: ForceOpts,
    #[command(flatten)]
    pub store: super::options::StoreOpts,
}

/// Paper sizes on the command line.
#[derive(clap::ValueEnum, Clone, Copy, Debug)]
pub enum PaperArg {
    /// ISO A4.
    A4,
    /// US Letter.
    Letter,
}

pub fn run(a: Args, u: &remanent::units::DisplayUnits) -> anyhow::Result<ExitCode> {
    let look = remanent::report::Look {
        units: *u,
        paper: match a.paper {
            PaperArg::A4 => remanent::report::pdf_flow::Paper::A4,
            PaperArg::Letter => remanent::report::pdf_flow::Paper::Letter,
        },
        issuer: remanent::units::issuer()?,
    };
    let req = remanent::jobs::InputRequest {
        input: a.run.clone(),
        specs: a.specs.specs.clone(),
        reference: a.specs.reference.clone(),
        magnet: a.csv.magnet.clone(),
        columns: a.csv.columns.clone(),
        probe_tc_pct_per_c: a.csv.probe_tc_pct_per_c,
        strict: a.csv.strict,
        inspection: a.inspection.inspection(),
        ..Default::default()
    };
    let out = a
        .out
        .clone()
        .unwrap_or_else(|| remanent::jobs::report::default_out(&a.run));
    let r = remanent::jobs::report::run_input(&req, &out, a.force.force, &look)?;
    if let Some(why) = &r.not_analysed {
        eprintln!(
            "not analysed: {why}; wrote the time series and what could not be computed (exit 3)"
        );
    }
    for f in &r.written {
        println!("wrote {}", f.display());
    }
    if let Some(analysis) = &r.analysis {
        a.store.keep("the analysis", |at| {
            remanent::jobs::history::store_reported(at, &a.run, analysis, &r.written)
        });
    }
    // the outputs of a record that could not be analysed are written, but it is no result
    Ok(if r.not_analysed.is_some() {
        ExitCode::from(3)
    } else {
        ExitCode::SUCCESS
    })
}
