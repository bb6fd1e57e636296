//! `remanent lot`: a shipment's runs side by side — table, spread, robust outliers, counts.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::lot::{self, LotRow};
use remanent::specs::SpecTable;

#[derive(clap::Args)]
pub struct Args {
    /// Run directories, one per magnet.
    #[arg(required = true)]
    runs: Vec<PathBuf>,
    /// Folder for lot.csv, lot.html and the plots (must not exist unless --force).
    #[arg(long)]
    out: PathBuf,
    /// Grade spec table (TOML); default: the built-in table.
    #[arg(long)]
    specs: Option<PathBuf>,
    /// Write into an existing folder, replacing the lot files.
    #[arg(long)]
    force: bool,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    if a.out.exists() && !a.force {
        anyhow::bail!(
            "{} already exists; choose a new --out or pass --force",
            a.out.display()
        );
    }
    let mut rows = Vec::new();
    let mut grades = Vec::new();
    let mut skipped = Vec::new();
    for run in &a.runs {
        let args = super::analyze::Args {
            input: run.clone(),
            json: false,
            calibration: None,
            specs: a.specs.clone(),
            magnet: None,
            columns: Vec::new(),
            probe_tc_pct_per_c: None,
        };
        let analysis = match super::analyze::load_and_analyze(&args) {
            Ok((_, a, _)) => a,
            Err(e) => {
                eprintln!("left out of the lot: {}: {e:#}", run.display());
                skipped.push(run.display().to_string());
                continue;
            }
        };
        let meta = remanent::run_dir::read_meta(run)?;
        grades.push(meta.magnet.grade.clone());
        rows.push(LotRow::new(&meta.magnet.id, &meta.magnet.grade, &analysis));
    }
    if rows.is_empty() {
        anyhow::bail!("none of the {} runs could be analysed", a.runs.len());
    }
    let summary = lot::summarise(rows);
    std::fs::create_dir_all(&a.out)?;
    let csv_path = a.out.join("lot.csv");
    std::fs::write(&csv_path, lot::to_csv(&summary))?;
    let specs = match &a.specs {
        Some(p) => SpecTable::load(p)?,
        None => SpecTable::builtin(),
    };
    let spec = grades.first().and_then(|g| specs.find(g));
    let title = format!(
        "{} magnets{}",
        summary.rows.len(),
        spec.map(|g| format!(", grade {}", g.grade))
            .unwrap_or_default()
    );
    let plots = remanent::plots::write_lot_plot(&a.out.join("lot"), &summary, spec, &title)?;
    let svg = std::fs::read_to_string(&plots[1]).unwrap_or_default();
    let html = remanent::report::lot_html(&summary, &title, &svg);
    std::fs::write(a.out.join("lot.html"), html)?;
    print!("{}", lot::text(&summary));
    if !skipped.is_empty() {
        println!(
            "\nnot analysed (see the messages above): {}",
            skipped.join(", ")
        );
    }
    println!(
        "\nwrote {} and lot.html, lot.png, lot.svg beside it",
        csv_path.display()
    );
    Ok(ExitCode::SUCCESS)
}
