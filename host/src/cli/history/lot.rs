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

fn spread(v: Option<(f64, f64)>, digits: usize) -> String {
    match v {
        Some((m, s)) => format!("mean {m:.digits$}, standard deviation {s:.digits$}"),
        None => "—".into(),
    }
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
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
    println!("  α %/°C     {}", spread(s.alpha_pct_per_c, 4));
    println!("  Br T       {}", spread(s.br_t, 4));
    println!("  loss %     {}", spread(s.loss_pct, 3));
    for r in runs.iter().filter(|r| r.verdict.as_deref() != Some("pass")) {
        println!(
            "  {:<22} {}",
            r.magnet_id.as_deref().unwrap_or(&r.run_name),
            r.verdict.as_deref().unwrap_or("not analysed")
        );
    }
    Ok(ExitCode::SUCCESS)
}
