//! `remanent demo`: the whole job on the built-in virtual rig — record a cycle of an invented
//! demo magnet into a fresh folder, analyse it, plot it and write the report.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::jobs::demo::{self, DemoRequest};
use remanent::run_dir;
use remanent::units::{flux, temp_q, DisplayUnits, Kind, Qty};

#[derive(clap::Args)]
pub struct Args {
    /// Demo magnet (`remanent magnets` lists them).
    #[arg(long, default_value = "RM-N42SH-D10x5")]
    magnet: String,
    /// Profile (`inspect`: at most 15 minutes of fixture time, held to the part's safe test
    /// peak, ended by the analysis).
    #[arg(long, default_value = "inspect")]
    profile: String,
    /// Run the virtual rig behind a pseudo-terminal at this many simulated seconds per
    /// wall-clock second (the serial path as a bench uses it; results then depend on the
    /// machine's timing). By default the rig runs in lockstep with the recorder, in-process:
    /// the same seed gives the same samples and results on any machine.
    #[arg(long, value_parser = super::options::parse_speed)]
    speed: Option<f64>,
    /// Where to put the run (default: a new folder under `remanent-runs/`).
    #[arg(long)]
    out: Option<PathBuf>,
    /// Noise seed of the virtual rig.
    #[arg(long, default_value_t = 7)]
    seed: u64,
    /// Lot, order, supplier, operator (default: the demo's invented shipment).
    #[command(flatten)]
    inspection: super::options::InspectionOpts,
    #[command(flatten)]
    store: super::options::StoreOpts,
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let out = a.out.clone().unwrap_or_else(|| {
        let stamp = run_dir::utc_now().replace([':', '-'], "");
        PathBuf::from("remanent-runs").join(format!("demo-{}-{stamp}", a.magnet))
    });
    let req = DemoRequest {
        magnet: a.magnet.clone(),
        profile: a.profile.clone(),
        speed: a.speed,
        out: out.clone(),
        seed: a.seed,
        inspection: a.inspection.inspection(),
        stop: super::record::stop_flag()?,
    };
    let p = demo::prepare(&req)?;
    let pace = match a.speed {
        Some(x) => format!("{x}× real time behind a pseudo-terminal"),
        None => format!("in lockstep, seed {}", a.seed),
    };
    println!(
        "Remanent demo: {} ({}) on the virtual rig, profile `{}`, {pace}",
        p.part.info.id, p.part.info.description, p.plan.profile.name
    );
    super::record::announce(&p.plan, &p.part.info.id, u);
    let (ref_part, reference) = demo::measure_reference(&req)?;
    println!(
        "first the fixture's reference: {} ({})",
        ref_part.info.id, ref_part.info.description
    );
    println!(
        "  it reads {} at {} for a certified {}: fixture factor {:.4}",
        flux(reference.b20_mt, 2).render(u),
        temp_q(20.0, 0).render(u),
        Qty::one(Kind::Br, reference.br_t, 4).render(u),
        reference.factor()
    );
    let mut bar = super::progress::Bar::new(p.plan.profile.nominal_duration_s(22.0), u);
    let recorded = demo::record_part(&req, &p, &mut bar);
    bar.finish();
    let (summary, truth) = recorded?;
    let code = super::record::report_end(&summary, u);
    a.store.keep("the record", |at| {
        remanent::jobs::history::store_record(at, &summary.dir)
    });
    if !summary.end.is_complete() {
        return Ok(code);
    }
    let look = remanent::report::Look {
        units: *u,
        issuer: remanent::units::issuer()?,
        ..Default::default()
    };
    let done = demo::finish(&req, &reference, &look)?;
    let analysis = &done.analysis;
    println!();
    print!(
        "{}",
        remanent::report::summary::text(analysis, &done.title, u)
    );
    let true_alpha = p.model.mean_alpha_pct_per_c(analysis.alpha.range_c[1]);
    println!(
        "  (the virtual rig's truth: α = {} over the same range, loss {:.3} %)",
        Qty::one(Kind::Alpha, true_alpha, 4).signed().render(u),
        truth.irreversible * 100.0
    );
    a.store.keep("the analysis and its certificate", |at| {
        remanent::jobs::history::store_reported(at, &out, analysis, &done.written)
    });
    println!();
    for f in &done.written {
        println!("wrote {}", f.display());
    }
    Ok(ExitCode::SUCCESS)
}
