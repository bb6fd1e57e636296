//! `remanent replay`: rebuild a run from its raw byte stream, optionally with a new calibration.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::calibration::Calibration;

#[derive(clap::Args)]
pub struct Args {
    /// The recorded run directory.
    pub run: PathBuf,
    /// The new run directory (must not exist).
    #[arg(long)]
    pub out: PathBuf,
    /// Convert with this rig calibration instead of the recorded one.
    #[arg(long)]
    pub calibration: Option<PathBuf>,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let cal = a
        .calibration
        .as_deref()
        .map(Calibration::load)
        .transpose()?;
    let c = remanent::jobs::replay::replay(&a.run, &a.out, cal)?;
    println!(
        "replayed {} into {}: {} samples, {} gaps ({} missing), {} rejected frames",
        a.run.display(),
        a.out.display(),
        c.samples,
        c.gaps,
        c.gap_samples,
        c.frames_bad_crc + c.frames_bad_cobs + c.frames_other
    );
    Ok(ExitCode::SUCCESS)
}
