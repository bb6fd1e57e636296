//! `remanent survey`: room-temperature readings of many magnets in a row, ranked.

use remanent::units::{flux, temp_q, DisplayUnits};
use std::path::PathBuf;
use std::process::ExitCode;

use remanent::jobs::survey::{self, Reading, SurveyOptions, SurveyProgress};
use remanent::specs::SpecTable;

#[derive(clap::Args)]
pub struct Args {
    /// Serial port of the bench (or a virtual rig started with --survey).
    #[arg(long)]
    port: String,
    /// How many magnets to read.
    #[arg(long)]
    count: usize,
    /// Read each magnet when Enter is pressed instead of when its field is stable.
    #[arg(long)]
    confirm: bool,
    /// Grade of the set: its typical α refers the readings to 20 °C.
    #[arg(long)]
    grade: Option<String>,
    #[command(flatten)]
    calibration: super::options::CalibrationOpts,
    /// Write the ranked table here (CSV; must not exist). Default: a new file
    /// `remanent-runs/survey-<time>.csv`.
    #[arg(long)]
    out: Option<PathBuf>,
    /// What to call each position: `pole` reads as pole 1, pole 2, … (default: magnet).
    #[arg(long, default_value = "magnet")]
    label: String,
}

struct Print {
    label: String,
    units: DisplayUnits,
}
impl SurveyProgress for Print {
    fn reading(&mut self, r: &Reading) {
        let u = &self.units;
        println!(
            "{} {:>3}: {:>9} at {} (scatter {:.3} %)",
            self.label,
            r.index,
            flux(r.flux_mt, 3).render(u),
            temp_q(r.temp_c, 1).render(u),
            r.rel_sd * 100.0
        );
    }
    fn notice(&mut self, n: &remanent::event::Notice) {
        eprintln!("{}", remanent::event::words::notice(n).render(&self.units));
    }
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let out = a.out.clone().unwrap_or_else(|| {
        let stamp = remanent::run_dir::utc_now().replace([':', '-'], "");
        PathBuf::from("remanent-runs").join(format!("survey-{stamp}.csv"))
    });
    remanent::output::refuse_existing([out.clone()], false)?;
    let policy = a.calibration.policy();
    let mut opts = SurveyOptions::new(policy.provisional()?, a.count);
    opts.policy = policy;
    if let Some(g) = &a.grade {
        let specs = SpecTable::builtin();
        let spec = specs
            .find(g)
            .ok_or_else(|| anyhow::anyhow!("grade {g} is not in the spec table"))?;
        opts.alpha_pct_per_c = Some(0.5 * (spec.alpha_min + spec.alpha_max));
    }
    let confirm = a.confirm.then(super::options::enter_presses);
    let port = remanent::link::port::open(&a.port)?;
    let readings = survey::run(
        port,
        &opts,
        confirm,
        &mut Print {
            label: a.label.clone(),
            units: *u,
        },
    )?;
    let ranked = survey::rank(&readings);
    println!("\nranked, lowest first (median-relative):");
    for (i, r) in ranked.iter().enumerate() {
        println!(
            "{:>3}. {} {:>3}  {:>9}  {:+7.2} %  M = {:+6.1}{}",
            i + 1,
            a.label,
            r.reading.index,
            flux(r.reading.flux_mt, 3).render(u),
            r.deviation_pct,
            r.z,
            if r.low {
                "  LOW: likely demagnetized or heat-damaged"
            } else {
                ""
            }
        );
    }
    if let Some(dir) = out.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir)?;
    }
    remanent::output::write(
        &out,
        remanent::report::tables::survey_csv(&ranked).as_bytes(),
        false,
    )?;
    println!("wrote {}", out.display());
    if readings.len() < a.count {
        eprintln!(
            "only {} of {} {}s were read: the survey is incomplete",
            readings.len(),
            a.count,
            a.label
        );
        return Ok(ExitCode::from(3));
    }
    Ok(ExitCode::SUCCESS)
}
