//! `remanent self-test`: sensors, heating, and the fault path, on a bench or an emulated board.

use remanent::units::{span, DisplayUnits};
use std::process::ExitCode;

#[derive(clap::Args)]
pub struct Args {
    /// Serial port of the bench.
    #[arg(long)]
    port: String,
    #[command(flatten)]
    calibration: super::options::CalibrationOpts,
    /// Instead of the self-test, run a fault drill on a test build of the firmware: make it
    /// panic or hang while heating, and check it resets, latched, heater off, and says why.
    #[arg(long, value_enum)]
    drill: Option<DrillKind>,
}

/// A fault drill.
#[derive(Clone, Copy, clap::ValueEnum)]
enum DrillKind {
    /// The firmware panics.
    Panic,
    /// The firmware's main loop hangs (its watchdog must reset it).
    Hang,
    /// The firmware's stack overflows (its guard must turn that into a fault).
    StackOverflow,
}

fn print_steps(steps: &[remanent::jobs::selftest::Step], u: &DisplayUnits) -> bool {
    let mut ok = true;
    for s in steps {
        ok &= s.passed;
        println!(
            "  [{}] {:<28} {}",
            if s.passed { " ok " } else { "FAIL" },
            s.name,
            s.detail.render(u)
        );
    }
    ok
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let policy = a.calibration.policy();
    let cal = policy.provisional()?;
    let port = remanent::link::port::open(&a.port)?;
    if let Some(kind) = a.drill {
        let drill = match kind {
            DrillKind::Panic => remanent_protocol::Drill::Panic,
            DrillKind::Hang => remanent_protocol::Drill::Hang,
            DrillKind::StackOverflow => remanent_protocol::Drill::StackOverflow,
        };
        eprintln!("fault drill: the heater will be switched on, then the firmware made to fail");
        let steps = remanent::jobs::drill::run(port, cal, drill)?;
        let ok = print_steps(&steps, u) && steps.len() == 4;
        println!("drill {}", if ok { "passed" } else { "FAILED" });
        return Ok(if ok {
            ExitCode::SUCCESS
        } else {
            ExitCode::from(1)
        });
    }
    eprintln!(
        "self-test: the heater will raise the reading by {} (toward a target {} above), then be tripped",
        span(remanent::jobs::selftest::RISE_CHECK_K, 0).render(u),
        span(remanent::jobs::selftest::HEAT_BY_K, 0).render(u)
    );
    let (hello, steps) = remanent::jobs::selftest::run(port, cal, &policy)?;
    println!(
        "device: board `{}`, firmware {}.{}.{}, {}",
        hello.board.as_str(),
        hello.firmware[0],
        hello.firmware[1],
        hello.firmware[2],
        hello.version
    );
    let mut ok = print_steps(&steps, u);
    ok &= steps.len() == remanent::jobs::selftest::STEPS;
    println!("self-test {}", if ok { "passed" } else { "FAILED" });
    Ok(if ok {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
