//! `remanent clear-fault`: show the latched fault and its reason, and clear it when safe.

use std::process::ExitCode;

use remanent::jobs::clear_fault::Cleared;
use remanent::link::words::{describe_boot, describe_fault, describe_refusal};

use super::options::CalibrationOpts;

#[derive(clap::Args)]
pub struct Args {
    /// Serial port of the bench.
    #[arg(long)]
    port: String,
    #[command(flatten)]
    calibration: CalibrationOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    // clearing a fault converts nothing that is kept: any calibration will do
    let cal = a.calibration.policy().provisional()?;
    let port = remanent::link::port::open(&a.port)?;
    let (hello, outcome) = remanent::jobs::clear_fault::run(port, cal)?;
    if let Some(why) = describe_boot(&hello.boot) {
        println!("{why}");
    }
    Ok(match outcome {
        Cleared::NothingLatched => {
            println!("no fault is latched: the device is ready");
            ExitCode::SUCCESS
        }
        Cleared::Cleared(f) => {
            println!("latched: {}", describe_fault(f));
            println!("cleared: the device is ready");
            ExitCode::SUCCESS
        }
        Cleared::Refused(f, r) => {
            println!("latched: {}", describe_fault(f));
            println!("not cleared: {}", describe_refusal(&r));
            ExitCode::from(3)
        }
    })
}
