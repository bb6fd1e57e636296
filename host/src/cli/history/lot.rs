//! `remanent history lot`: one lot's runs at a glance.

use std::process::ExitCode;

use remanent::analysis::verdict::Outcome;
use remanent::history::query::lot_history;
use remanent::history::Filter;
use remanent::lot::Spread;

use crate::cli::options::StoreOpts;

#[derive(clap::Args)]
pub struct Args {
    /// The lot.
    lot: String,
    #[command(flatten)]
    store: StoreOpts,
}

/// Mean and standard deviation, each times `k` (the display unit's factor).
fn spread(v: Option<&Spread>, k: f64, digits: usize) -> String {
    match v {
        Some(s) => format!(
            "mean {:.digits$}, standard deviation {:.digits$}",
            s.mean * k,
            s.sd * k
        ),
        None => "—".into(),
    }
}

pub fn run(a: Args, u: &remanent::units::DisplayUnits) -> anyhow::Result<ExitCode> {
    let mut store = super::common::open(&a.store)?;
    let runs = store.find(&Filter {
        lot: Some(a.lot.clone()),
        ..Default::default()
    })?;
    if runs.is_empty() {
        anyhow::bail!("no runs of lot `{}` in {}", a.lot, store.describe());
    }
    let h = lot_history(&a.lot, &runs);
    use remanent::units::count;
    println!(
        "lot {}: {}, {} analysed",
        h.lot,
        count(h.runs as u64, "run", "runs"),
        h.analysed()
    );
    if let Some((first, last)) = &h.span_utc {
        println!("  recorded   {first} … {last}");
    }
    println!("  grades     {}", h.grades.join(", "));
    println!("  suppliers  {}", h.suppliers.join(", "));
    let s = h.summary.as_ref();
    println!(
        "  verdicts   {} pass, {} fail, {} indeterminate",
        s.map_or(0, |s| s.passed),
        s.map_or(0, |s| s.failed),
        s.map_or(0, |s| s.indeterminate)
    );
    let alpha = format!("α {}", u.alpha_symbol());
    let br = format!("Br {}", u.br_symbol());
    println!(
        "  {alpha:<10} {}",
        spread(s.map(|s| &s.alpha), u.per_degree(1.0), 4)
    );
    println!(
        "  {br:<10} {}",
        spread(s.and_then(|s| s.br.as_ref()), u.br(1.0), u.br_decimals(4))
    );
    println!(
        "  loss %     {}",
        spread(s.and_then(|s| s.loss.as_ref()), 1.0, 3)
    );
    for r in runs.iter().filter(|r| r.verdict != Some(Outcome::Pass)) {
        println!(
            "  {:<22} {}",
            r.magnet_id.as_deref().unwrap_or(&r.run_name),
            r.verdict.map_or("not analysed", |v| v.word())
        );
    }
    for r in s.iter().flat_map(|s| &s.rows) {
        if !r.outlier.is_empty() {
            println!(
                "  {:<22} outlier: {}",
                r.id,
                remanent::report::lot::outliers_text(&r.outlier)
            );
        }
    }
    Ok(ExitCode::SUCCESS)
}
