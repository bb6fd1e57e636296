//! `remanent report`: plots and an HTML and Markdown report for a run — or, when the record
//! cannot be analysed, its time series and a plain statement of why.

use std::path::PathBuf;
use std::process::ExitCode;

use super::options::{ForceOpts, SpecOpts};

#[derive(clap::Args)]
pub struct Args {
    /// The run directory.
    pub run: PathBuf,
    #[command(flatten)]
    pub specs: SpecOpts,
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

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let paper = match a.paper {
        PaperArg::A4 => remanent::report::pdf_flow::Paper::A4,
        PaperArg::Letter => remanent::report::pdf_flow::Paper::Letter,
    };
    let r = remanent::jobs::report::run(&a.run, &a.specs.judging(), a.force.force, paper)?;
    if let Some(why) = &r.not_analysed {
        eprintln!("note: {why}; wrote the time series and what could not be computed");
    }
    for f in &r.written {
        println!("wrote {}", f.display());
    }
    if let Some(analysis) = &r.analysis {
        a.store.keep("the analysis", |at| {
            remanent::jobs::history::store_analysis(at, &a.run, analysis)
        });
    }
    Ok(ExitCode::SUCCESS)
}
