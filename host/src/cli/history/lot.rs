//! `remanent history lot`: one lot's runs at a glance.

use std::process::ExitCode;

use remanent::history::query::lot_summary;
use remanent::history::Filter;

use crate::cli::options::StoreOpts;

#[derive(clap::Args)]
pub struct Args {
    /// The lot.
    lot: String,
    #[command(flatten)]
    store: StoreOpts,
}

/// Mean and standard deviation, each times `k` (the display unit's factor).
fn spread(v: Option<(f64, f64)>, k: f64, digits: usize) -> String {
    match v {
        Some((m, s)) => format!(
            "mean {:.digits$}, standard deviation {:.digits$}",
            m * k,
            s * k
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
    let s = lot_summary(&a.lot, &runs);
    use remanent::units::count;
    println!(
        "lot {}: {}, {} analysed",
        s.lot,
        count(s.runs as u64, "run", "runs"),
        s.analysed
    );
    if let Some((first, last)) = &s.span_utc {
        println!("  recorded   {first} … {last}");
    }
    println!("  grades     {}", s.grades.join(", "));
    println!("  suppliers  {}", s.suppliers.join(", "));
    println!(
        "  verdicts   {} pass, {} fail, {} indeterminate",
        s.pass, s.fail, s.indeterminate
    );
    let alpha = format!("α {}", u.alpha_symbol());
    let br = format!("Br {}", u.br_symbol());
    println!(
        "  {alpha:<10} {}",
        spread(s.alpha_pct_per_c, u.per_degree(1.0), 4)
    );
    println!("  {br:<10} {}", spread(s.br_t, u.br(1.0), u.br_decimals(4)));
    println!("  loss %     {}", spread(s.loss_pct, 1.0, 3));
    for r in runs.iter().filter(|r| r.verdict.as_deref() != Some("pass")) {
        println!(
            "  {:<22} {}",
            r.magnet_id.as_deref().unwrap_or(&r.run_name),
            r.verdict.as_deref().unwrap_or("not analysed")
        );
    }
    Ok(ExitCode::SUCCESS)
}
