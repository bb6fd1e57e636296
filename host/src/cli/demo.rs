//! `remanent demo`: the whole job on the built-in virtual rig — record a cycle of an invented
//! demo magnet into a fresh folder, analyse it, plot it and write the report.

use remanent::units::{flux, temp_q, DisplayUnits, Kind, Qty};
use std::path::PathBuf;
use std::process::ExitCode;

use remanent::analysis::fixture_ref::FixtureReference;
use remanent::calibration::Calibration;
use remanent::record::RecordOptions;
use remanent::survey::{Reading, SurveyProgress};
use remanent::virtual_rig::{SimulatedPort, VirtualRig, VirtualRigOptions};
use remanent::{magnets, run_dir};

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

/// The demo's shipment: invented, like its magnets.
fn demo_inspection(given: remanent::inspection::Inspection) -> remanent::inspection::Inspection {
    given.or(&remanent::inspection::Inspection {
        lot: Some("DEMO-LOT-26-11".into()),
        purchase_order: Some("PO-DEMO-0042".into()),
        supplier: Some("Kestrel Magnet Works (invented)".into()),
        operator: Some("demo".into()),
    })
}

/// The demo's fixture reference, in the run directory.
pub use remanent::run_dir::REFERENCE_FILE;

/// The demo reference part read on its own virtual rig: the fixture's reference.
fn measure_reference(
    speed: Option<f64>,
    seed: u64,
    u: &DisplayUnits,
) -> anyhow::Result<FixtureReference> {
    let part = magnets::resolve(REFERENCE_PART)?;
    let mut opts = VirtualRigOptions::new(part.model.expect("a demo part has a model"));
    opts.seed = seed ^ 0x5eed;
    println!(
        "first the fixture's reference: {} ({})",
        part.info.id, part.info.description
    );
    // the reference is read on a rig of the same design as the part's: the same constants
    let cal = Calibration::virtual_rig(&remanent_rig_model::RigParams::REFERENCE);
    let measure = |port: &mut dyn ReadWrite| {
        remanent::jobs::reference::measure(
            port,
            &part,
            cal,
            Default::default(),
            1,
            None,
            &mut Quiet,
        )
    };
    let r = match speed {
        None => measure(&mut SimulatedPort::new(opts))?,
        Some(speed) => {
            opts.speed = speed;
            let rig = VirtualRig::start(opts)?;
            let r = measure(&mut remanent::link::port::open(rig.path())?)?;
            rig.stop()?;
            r
        }
    };
    println!(
        "  it reads {} at {} for a certified {}: fixture factor {:.4}",
        flux(r.b20_mt, 2).render(u),
        temp_q(20.0, 0).render(u),
        Qty::one(Kind::Br, r.br_t, 4).render(u),
        r.factor()
    );
    Ok(r)
}

/// A port either rig offers.
trait ReadWrite: std::io::Read + std::io::Write {}
impl<T: std::io::Read + std::io::Write + ?Sized> ReadWrite for T {}

/// The demo's reference magnet.
const REFERENCE_PART: &str = "RM-REF-N42SH-D10x5";

struct Quiet;
impl SurveyProgress for Quiet {
    fn reading(&mut self, _: &Reading) {}
    fn notice(&mut self, _: &remanent::event::Notice) {}
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let m = magnets::resolve(&a.magnet)?;
    let model = m
        .model
        .ok_or_else(|| anyhow::anyhow!("{} has no model for the virtual rig", m.info.id))?;
    let plan = remanent::test_plan::plan(
        &a.profile,
        &m.info,
        &remanent::specs::SpecTable::builtin(),
        false,
    )?;
    let profile = plan.profile.clone();
    let out = a.out.unwrap_or_else(|| {
        let stamp = run_dir::utc_now().replace([':', '-'], "");
        PathBuf::from("remanent-runs").join(format!("demo-{}-{stamp}", m.info.id))
    });
    let pace = match a.speed {
        Some(x) => format!("{x}× real time behind a pseudo-terminal"),
        None => format!("in lockstep, seed {}", a.seed),
    };
    println!(
        "Remanent demo: {} ({}) on the virtual rig, profile `{}`, {pace}",
        m.info.id, m.info.description, profile.name
    );
    super::record::announce(&plan, &m.info.id, u);
    let reference = measure_reference(a.speed, a.seed, u)?;
    let mut opts = VirtualRigOptions::new(model);
    opts.seed = a.seed;
    let params = opts.params;
    let rec = |port_label: String| -> anyhow::Result<RecordOptions> {
        Ok(RecordOptions {
            inspection: demo_inspection(a.inspection.inspection()),
            auto_end: Some(Default::default()),
            port_label,
            stop: super::record::stop_flag()?,
            ..RecordOptions::new(
                m.info.clone(),
                profile.clone(),
                Calibration::virtual_rig(&params),
                out.clone(),
            )
        })
    };
    let (summary, truth) = match a.speed {
        None => {
            let mut port = SimulatedPort::new(opts);
            let rec = RecordOptions {
                // lockstep: a silent link is a broken simulation, not a slow machine
                silence_timeout: std::time::Duration::from_secs(5),
                ..rec("virtual rig (in-process, lockstep)".into())?
            };
            let summary = super::record::record_with_bar(&mut port, rec, u)?;
            (summary, port.bench().truth())
        }
        Some(speed) => {
            opts.speed = speed;
            let rig = VirtualRig::start(opts)?;
            let port = remanent::link::port::open(rig.path())?;
            let label = format!("virtual rig ({})", rig.path());
            let summary = super::record::record_with_bar(port, rec(label)?, u)?;
            (summary, rig.stop()?)
        }
    };
    let code = super::record::report_end(&summary, u);
    a.store.keep("the record", |at| {
        remanent::jobs::history::store_record(at, &summary.dir)
    });
    if !summary.end.is_complete() {
        return Ok(code);
    }
    let ref_file = out.join(REFERENCE_FILE);
    remanent::output::write(&ref_file, toml::to_string(&reference)?.as_bytes(), false)?;
    let req = remanent::jobs::InputRequest {
        input: out.clone(),
        reference: Some(ref_file.clone()),
        ..Default::default()
    };
    let (loaded, analysis) = remanent::jobs::load_and_analyze(&req)?;
    let (series, title) = (&loaded.series, &loaded.title);
    println!();
    print!("{}", remanent::analysis::summary::text(&analysis, title, u));
    let true_alpha =
        model.alpha_pct_per_c + model.gamma_pct_per_c2 * (analysis.fit_range_c[1] - 20.0);
    println!(
        "  (the virtual rig's truth: α = {} over the same range, loss {:.3} %)",
        Qty::one(Kind::Alpha, true_alpha, 4).signed().render(u),
        truth.irreversible * 100.0
    );
    let look = remanent::report::Look {
        units: *u,
        issuer: remanent::units::issuer()?,
        ..Default::default()
    };
    let mut written = remanent::report::write_all_as(
        &out,
        series,
        &analysis,
        &remanent::report::Source {
            meta: loaded.meta.as_ref(),
            raw: Some(&out.join(remanent::run_dir::RAW_FILE)),
        },
        title,
        false,
        &look,
    )?;
    a.store.keep("the analysis and its certificate", |at| {
        remanent::jobs::history::store_reported(at, &out, &analysis, &written)
    });
    written.insert(0, ref_file);
    println!();
    for f in written {
        println!("wrote {}", f.display());
    }
    Ok(ExitCode::SUCCESS)
}
