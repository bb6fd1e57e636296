//! `remanent self-test`: sensors, heating, and the fault path, on a bench or an emulated board.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::calibration::Calibration;
use remanent_rig_model::RigParams;

#[derive(clap::Args)]
pub struct Args {
    /// Serial port of the bench.
    #[arg(long)]
    port: String,
    /// Rig calibration TOML (default: the virtual rig's constants).
    #[arg(long)]
    calibration: Option<PathBuf>,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let cal = match &a.calibration {
        Some(p) => Calibration::load(p)?,
        None => Calibration::virtual_rig(&RigParams::REFERENCE),
    };
    let port = remanent::link::port::open(&a.port)?;
    eprintln!("self-test: the heater will warm the fixture by about 8 K, then be tripped");
    let (hello, steps) = remanent::selftest::run(port, cal)?;
    println!(
        "device: board `{}`, firmware {}.{}.{}, {}",
        hello.board.as_str(),
        hello.firmware[0],
        hello.firmware[1],
        hello.firmware[2],
        hello.version
    );
    let mut ok = true;
    for s in &steps {
        ok &= s.passed;
        println!(
            "  [{}] {:<28} {}",
            if s.passed { " ok " } else { "FAIL" },
            s.name,
            s.detail
        );
    }
    ok &= steps.len() == 6;
    println!("self-test {}", if ok { "passed" } else { "FAILED" });
    Ok(if ok {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
