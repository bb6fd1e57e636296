//! What the history subcommands share: opening the store the options name, and the search
//! terms of `find` and `export`.

use crate::cli::options::StoreOpts;

/// Open the store the options name (refusing `off`).
pub fn open(store: &StoreOpts) -> anyhow::Result<remanent::history::Store> {
    let at = store.location();
    // reading a store that is not there would make an empty one where a path was mistyped
    if let remanent::history::Location::Sqlite(p) = &at {
        if !p.exists() {
            anyhow::bail!(
                "no history store at {}: nothing was recorded, analysed or imported into it yet \
                 (`remanent history import RUN…` adds run directories; --store names another)",
                p.display()
            );
        }
    }
    Ok(remanent::history::Store::open(&at)?)
}

/// Search terms shared by `find` and `export`.
#[derive(clap::Args, Clone, Debug, Default)]
pub struct FilterOpts {
    /// The magnet's id.
    #[arg(long)]
    magnet: Option<String>,
    /// The lot.
    #[arg(long)]
    lot: Option<String>,
    /// The supplier.
    #[arg(long)]
    supplier: Option<String>,
    /// The stated grade.
    #[arg(long)]
    grade: Option<String>,
    /// Started on or after this date (YYYY-MM-DD) or instant (RFC 3339, UTC).
    #[arg(long, value_parser = parse_when)]
    since: Option<String>,
    /// Started on or before this date (the whole day) or instant.
    #[arg(long, value_parser = parse_when)]
    until: Option<String>,
    /// The latest analysis's verdict.
    #[arg(long, value_parser = ["pass", "fail", "indeterminate"])]
    verdict: Option<String>,
}

fn parse_when(s: &str) -> Result<String, String> {
    remanent::timestamps::parse_utc(s)
        .map(|_| s.trim().to_string())
        .ok_or_else(|| format!("`{s}` is not a date (YYYY-MM-DD) or an RFC 3339 UTC instant"))
}

impl FilterOpts {
    pub fn filter(&self, limit: Option<u64>) -> remanent::history::Filter {
        remanent::history::Filter {
            magnet: self.magnet.clone(),
            lot: self.lot.clone(),
            supplier: self.supplier.clone(),
            grade: self.grade.clone(),
            since: self.since.clone(),
            until: self.until.clone(),
            verdict: self.verdict.clone(),
            limit,
        }
    }
}
