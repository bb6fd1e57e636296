//! What the history subcommands share: opening the store the options name, and the search
//! terms of `find` and `export`.

use crate::cli::options::StoreOpts;
use remanent::analysis::verdict::Outcome;
use remanent::history::When;

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
    #[arg(long)]
    since: Option<When>,
    /// Started on or before this date (the whole day) or instant.
    #[arg(long)]
    until: Option<When>,
    /// The latest analysis's verdict.
    #[arg(long, value_parser = verdicts())]
    verdict: Option<Outcome>,
}

/// The verdicts `--verdict` takes, listed in its help.
fn verdicts() -> impl clap::builder::TypedValueParser<Value = Outcome> {
    use clap::builder::TypedValueParser as _;
    clap::builder::PossibleValuesParser::new(["pass", "fail", "indeterminate"])
        .try_map(|w| w.parse::<Outcome>())
}

impl FilterOpts {
    pub fn filter(&self, limit: Option<u64>) -> remanent::history::Filter {
        remanent::history::Filter {
            magnet: self.magnet.clone(),
            lot: self.lot.clone(),
            supplier: self.supplier.clone(),
            grade: self.grade.clone(),
            since: self.since,
            until: self.until,
            verdict: self.verdict,
            limit,
        }
    }
}
