//! `remanent history trend`: a supplier's control chart of α, Br and loss.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::units::DisplayUnits;

use crate::cli::options::{ForceOpts, StoreOpts};

#[derive(clap::Args)]
pub struct Args {
    /// The supplier.
    #[arg(long)]
    supplier: String,
    /// Only this grade (a supplier's grades differ in α and Br).
    #[arg(long)]
    grade: Option<String>,
    /// Control limits from this many first runs (common practice: 20 to 25).
    #[arg(long, default_value_t = 25, value_parser = clap::value_parser!(u64).range(2..))]
    baseline: u64,
    /// The chart, as FILE.png and FILE.svg (the extension is replaced).
    #[arg(long)]
    out: PathBuf,
    #[command(flatten)]
    force: ForceOpts,
    #[command(flatten)]
    store: StoreOpts,
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let mut store = super::common::open(&a.store)?;
    let points = store.trend(&a.supplier, a.grade.as_deref())?;
    if points.is_empty() {
        anyhow::bail!(
            "no analysed runs of supplier `{}`{} in {}",
            a.supplier,
            a.grade
                .as_deref()
                .map(|g| format!(", grade {g}"))
                .unwrap_or_default(),
            store.describe()
        );
    }
    let grades = remanent::history::trend::grades(&points);
    if a.grade.is_none() && grades.len() > 1 {
        let list: Vec<String> = grades.iter().map(|(g, n)| format!("{g}: {n}")).collect();
        anyhow::bail!(
            "supplier `{}`'s runs are of {} grades ({}): α and Br differ by grade, so one chart's limits would mislead — give --grade",
            a.supplier,
            grades.len(),
            list.join(", ")
        );
    }
    let chart = remanent::history::trend::chart(
        &a.supplier,
        a.grade.as_deref(),
        &points,
        a.baseline as usize,
    )
    .shown(u);
    for p in &chart.panels {
        match p.limits {
            Some(l) => println!(
                "{:<22} centre {:>9.4}  limits {:>9.4} … {:<9.4} (first {} runs); {} beyond",
                p.quantity,
                l.centre,
                l.lower,
                l.upper,
                l.baseline,
                p.outside().len()
            ),
            None => println!(
                "{:<22} {}: control limits need at least {} (the runs are drawn without them)",
                p.quantity,
                remanent::units::count(p.points.len() as u64, "run", "runs"),
                remanent::history::trend::MIN_RUNS_FOR_LIMITS
            ),
        }
        for (t, v, id) in p.outside() {
            println!(
                "    beyond: {} {id} {v:.4}",
                &remanent::timestamps::format_utc(*t as u64)[..10]
            );
        }
    }
    let figure = remanent::plots::trend_figure("trend", &chart)?;
    for f in remanent::plots::write_figure(&a.out, &figure, a.force.force)? {
        println!("wrote {}", f.display());
    }
    Ok(ExitCode::SUCCESS)
}
