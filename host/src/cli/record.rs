//! `remanent record`: one heat cycle from a port into a new run directory.

use remanent::units::DisplayUnits;
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;

use anyhow::Context;
use remanent::jobs::record::{record, RecordEnd, RecordOptions, RecordSummary};
use remanent::magnets;
use remanent::specs::SpecTable;
use remanent::test_plan::{plan, TestPlan};

use super::progress::Bar;

#[derive(clap::Args)]
pub struct Args {
    /// Serial port of the bench (or the path `remanent virtual-rig` printed).
    #[arg(long)]
    port: String,
    /// Profile: a built-in name (inspect, rapid, quick-alpha, exposure, curie-sweep;
    /// `remanent profiles` shows them; a built-in one is held to the part's safe test peak)
    /// or a TOML file.
    #[arg(long, default_value = "inspect")]
    profile: String,
    /// Magnet: a demo part id (`remanent magnets`) or a magnet TOML file.
    #[arg(long)]
    magnet: String,
    /// New run directory (must not exist).
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    calibration: super::options::CalibrationOpts,
    /// Grade spec table for the part's safe test peak (default: the built-in one).
    #[arg(long)]
    specs: Option<PathBuf>,
    /// Let the profile go beyond the part's safe test peak (the part must then be quarantined).
    #[arg(long)]
    allow_over_rating: bool,
    /// Run the profile to its end even once the analysis can already state α and the loss
    /// to ±0.003 %/°C and ±0.1 % (by default the record ends there and frees the fixture).
    #[arg(long)]
    full_profile: bool,
    /// Sampling period, ms (10 to 250; default: the board's own, 100 ms): shorter for fast
    /// ramps, longer for long exposures and smaller files. The board refuses a period it
    /// cannot convert both inputs in, naming the shortest it can.
    #[arg(long, value_parser = clap::value_parser!(u16).range(10..=250))]
    sample_period_ms: Option<u16>,
    #[command(flatten)]
    inspection: super::options::InspectionOpts,
    #[command(flatten)]
    store: super::options::StoreOpts,
}

/// Ctrl-C sets the flag; the recorder then stops the heater and closes the record.
pub fn stop_flag() -> anyhow::Result<Arc<AtomicBool>> {
    let stop = Arc::new(AtomicBool::new(false));
    let s = stop.clone();
    ctrlc::set_handler(move || s.store(true, Ordering::Relaxed))
        .context("installing the Ctrl-C handler")?;
    Ok(stop)
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let magnet = magnets::resolve(&a.magnet)?;
    let plan = plan(
        &a.profile,
        &magnet.info,
        &match &a.specs {
            Some(p) => SpecTable::load(p)?,
            None => SpecTable::builtin(),
        },
        a.allow_over_rating,
    )?;
    announce(&plan, &magnet.info.id, u);
    let profile = plan.profile;
    let policy = a.calibration.policy();
    let calibration = policy.provisional()?;
    let port = remanent::link::port::open(&a.port)?;
    let opts = RecordOptions {
        inspection: a.inspection.inspection(),
        auto_end: (!a.full_profile).then(Default::default),
        port_label: a.port.clone(),
        policy,
        stop: stop_flag()?,
        sampling: a
            .sample_period_ms
            .map(|period_ms| remanent_protocol::SamplingConfig {
                period_ms,
                oversample: 4,
            }),
        ..RecordOptions::new(magnet.info, profile, calibration, a.out)
    };
    let summary = record_with_bar(port, opts, u)?;
    let code = report_end(&summary, u);
    a.store.keep("the record", |at| {
        remanent::jobs::history::store_record(at, &summary.dir)
    });
    Ok(code)
}

/// The safe peak, the clamp and any warning, before the record starts.
pub fn announce(plan: &TestPlan, magnet_id: &str, u: &DisplayUnits) {
    for line in plan.announce(magnet_id) {
        println!("{}", line.render(u));
    }
}

pub fn record_with_bar<P: std::io::Read + std::io::Write>(
    port: P,
    opts: RecordOptions,
    u: &DisplayUnits,
) -> anyhow::Result<RecordSummary> {
    let mut bar = Bar::new(opts.profile.nominal_duration_s(22.0), u);
    let result = record(port, opts, &mut bar);
    bar.finish();
    Ok(result?)
}

/// Print how the record ended; the exit code says whether it is complete.
pub fn report_end(s: &RecordSummary, u: &DisplayUnits) -> ExitCode {
    let c = &s.counts;
    use remanent::units::count;
    println!(
        "record {}: {}, {} ({} missing), {}, {} dropped on the device",
        s.dir.display(),
        count(c.samples, "sample", "samples"),
        count(c.gaps, "gap", "gaps"),
        count(c.gap_samples, "sample", "samples"),
        count(
            c.frames_bad_crc + c.frames_bad_cobs + c.frames_other,
            "rejected frame",
            "rejected frames"
        ),
        c.device_dropped
    );
    match &s.end {
        RecordEnd::Finished | RecordEnd::Complete(_) => {
            println!("ended: {}", s.end.describe_in(u));
            ExitCode::SUCCESS
        }
        other => {
            eprintln!(
                "ended early: {}; everything received is kept in {}",
                other.describe(),
                s.dir.display()
            );
            ExitCode::from(3)
        }
    }
}
