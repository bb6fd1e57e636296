//! `remanent reference`: read a reference magnet of known Br in the fixture and keep the
//! fixture's reference, so later runs get Br free of the gap's uncertainty (`--reference`).

use remanent::units::{flux, temp_q, DisplayUnits};
use std::path::PathBuf;
use std::process::ExitCode;

use remanent::analysis::fixture_ref::FixtureReference;
use remanent::jobs::survey::{Reading, SurveyProgress};

use super::options::{CalibrationOpts, ForceOpts};

#[derive(clap::Args)]
pub struct Args {
    /// Serial port of the bench (or a virtual rig holding the reference magnet).
    #[arg(long)]
    pub port: String,
    /// The reference magnet: a magnet file with a [reference] section (its certified Br), or
    /// the demo reference part RM-REF-N42SH-D10x5.
    #[arg(long)]
    pub magnet: String,
    /// Write the fixture reference here (TOML).
    #[arg(long)]
    pub out: PathBuf,
    /// Placements to read (take the magnet out and put it back between them, pressing Enter
    /// with --confirm): more than one measures the fixture's repeatability.
    #[arg(long, default_value_t = 1)]
    pub placements: usize,
    /// Read each placement when Enter is pressed instead of when its reading is stable.
    #[arg(long)]
    pub confirm: bool,
    #[command(flatten)]
    pub calibration: CalibrationOpts,
    #[command(flatten)]
    pub force: ForceOpts,
}

struct Print(DisplayUnits);
impl SurveyProgress for Print {
    fn reading(&mut self, r: &Reading) {
        println!(
            "placement {}: {} at {} (scatter {:.3} %)",
            r.index,
            flux(r.flux_mt, 3).render(&self.0),
            temp_q(r.temp_c, 2).render(&self.0),
            r.rel_sd * 100.0
        );
    }
    fn notice(&mut self, n: &remanent::event::Notice) {
        eprintln!("{}", remanent::event::words::notice(n).render(&self.0));
    }
}

/// Measure and write the reference; shared with the demo.
pub fn measure(a: &Args, u: &DisplayUnits) -> anyhow::Result<FixtureReference> {
    remanent::output::refuse_existing([a.out.clone()], a.force.force)?;
    let magnet = remanent::magnets::resolve(&a.magnet)?;
    if magnet.info.reference.is_none() {
        return Err(
            remanent::jobs::reference::ReferenceJobError::NotAReference(magnet.info.id).into(),
        );
    }
    let policy = a.calibration.policy();
    let cal = policy.provisional()?;
    let confirm = a.confirm.then(super::options::enter_presses);
    let port = remanent::link::port::open(&a.port)?;
    let r = remanent::jobs::reference::measure(
        port,
        &magnet,
        cal,
        policy,
        a.placements,
        confirm,
        &mut Print(*u),
    )?;
    let text = toml::to_string(&r)?;
    remanent::output::write(&a.out, text.as_bytes(), a.force.force)?;
    println!(
        "wrote {}: {} reads {} at {} (u = {}), fixture factor {:.4}, repeatability {:.2} %",
        a.out.display(),
        r.magnet,
        flux(r.b20_mt, 3).render(u),
        temp_q(20.0, 0).render(u),
        flux(r.b20_u_mt, 3).render(u),
        r.factor(),
        r.repeatability_pct
    );
    Ok(r)
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    measure(&a, u)?;
    Ok(ExitCode::SUCCESS)
}
