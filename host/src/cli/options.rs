//! Option groups shared by several subcommands, flattened into each.

use std::path::PathBuf;

use remanent::units::{DisplayUnits, FluxUnit, TempUnit};

/// The units numbers are shown in (every command; JSON and CSV files stay SI-based).
#[derive(clap::Args, Clone, Debug, Default)]
pub struct UnitOpts {
    /// Show flux density in mT, G or T (default: the config file's choice, else mT; Br is
    /// shown in T unless G is chosen). Files written for machines stay in mT and T.
    #[arg(long, global = true, value_name = "mT|G|T", value_parser = parse_flux_unit)]
    pub flux_unit: Option<FluxUnit>,
    /// Show temperatures in C or F (default: the config file's choice, else C). Files written
    /// for machines stay in °C.
    #[arg(long, global = true, value_name = "C|F", value_parser = parse_temp_unit)]
    pub temp_unit: Option<TempUnit>,
}

impl UnitOpts {
    /// The units: these options, else the user's config file, else SI-based.
    pub fn resolve(&self) -> anyhow::Result<DisplayUnits> {
        Ok(remanent::units::choose(self.flux_unit, self.temp_unit)?)
    }
}

fn parse_flux_unit(s: &str) -> Result<FluxUnit, String> {
    s.parse()
        .map_err(|e: remanent::units::UnknownUnit| e.to_string())
}

fn parse_temp_unit(s: &str) -> Result<TempUnit, String> {
    s.parse()
        .map_err(|e: remanent::units::UnknownUnit| e.to_string())
}

/// What a verdict is judged against: the spec table, and the fixture reference Br is referred to.
#[derive(clap::Args, Clone, Debug)]
pub struct SpecOpts {
    /// Grade spec table (TOML); default: the built-in table of typical values.
    #[arg(long)]
    pub specs: Option<PathBuf>,
    /// Refer Br to this fixture reference (written by `remanent reference`) instead of the
    /// geometry at the calibrated gap.
    #[arg(long)]
    pub reference: Option<PathBuf>,
}

impl SpecOpts {
    /// As the library takes it.
    pub fn judging(&self) -> remanent::jobs::Judging {
        remanent::jobs::Judging {
            specs: self.specs.clone(),
            reference: self.reference.clone(),
            master: None,
        }
    }
}

/// Replacing files that are already there.
#[derive(clap::Args, Clone, Debug)]
pub struct ForceOpts {
    /// Replace output files that are already there.
    #[arg(long)]
    pub force: bool,
}

/// Which calibration converts the raw codes, and whether a bench may measure without one.
#[derive(clap::Args, Clone, Debug)]
pub struct CalibrationOpts {
    /// Rig calibration TOML from `remanent calibrate` (a virtual rig needs none: it hands
    /// over its own constants).
    #[arg(long)]
    pub calibration: Option<PathBuf>,
    /// Measure on a bench without a valid calibration; every output is marked UNCALIBRATED.
    #[arg(long)]
    pub uncalibrated: bool,
    /// Refuse a calibration whose oldest step is older than this, days.
    #[arg(long, default_value_t = remanent::calibration::policy::DEFAULT_MAX_AGE_DAYS)]
    pub max_calibration_age_days: f64,
}

impl CalibrationOpts {
    /// The policy these options state.
    pub fn policy(&self) -> remanent::calibration::policy::Policy {
        remanent::calibration::policy::Policy {
            file: self.calibration.clone(),
            uncalibrated: self.uncalibrated,
            max_age_days: self.max_calibration_age_days,
        }
    }
}

/// A speed-up of simulated time: finite and above zero (zero would never advance, and a
/// negative one would run backwards).
pub fn parse_speed(s: &str) -> Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(v) if v.is_finite() && v > 0.0 && v <= 10_000.0 => Ok(v),
        Ok(v) => Err(format!(
            "{v} is not a speed: give a number above 0 and at most 10000"
        )),
        Err(_) => Err(format!("`{s}` is not a number")),
    }
}

/// Any finite number, negative ones included (a probe coefficient is usually negative).
pub fn parse_finite(s: &str) -> Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        Ok(v) => Err(format!("{v} is not a finite number")),
        Err(_) => Err(format!("`{s}` is not a number")),
    }
}

/// A quality level in percent defective, as AQL tables and practitioners write it (`1`, `1%`,
/// `0.65`), as a fraction; between 0 and 100 % exclusive.
pub fn parse_percent(s: &str) -> Result<f64, String> {
    let v = parse_finite(s.trim().trim_end_matches('%'))?;
    if v <= 0.0 || v >= 100.0 {
        return Err(format!(
            "{v} % is not a fraction defective a lot can have (between 0 and 100 %)"
        ));
    }
    Ok(v / 100.0)
}

/// A tick for every line typed on the terminal (Enter pressed), read on a thread of its own;
/// the channel closes when the terminal does.
pub fn enter_presses() -> std::sync::mpsc::Receiver<()> {
    use std::io::BufRead;
    let (tx, rx) = std::sync::mpsc::channel();
    std::thread::spawn(move || {
        for _ in std::io::stdin().lock().lines() {
            if tx.send(()).is_err() {
                break;
            }
        }
    });
    rx
}

/// Which history store results are written to and read from.
#[derive(clap::Args, Clone, Debug, Default)]
pub struct StoreOpts {
    /// History store: an SQLite file, a postgres:// URL, or `off` (default: history.sqlite in
    /// the user's data folder).
    #[arg(long = "store", env = remanent::history::STORE_ENV, value_name = "PATH|URL|off")]
    pub store: Option<String>,
}

impl StoreOpts {
    /// Where the store is.
    pub fn location(&self) -> remanent::history::Location {
        remanent::history::Location::choose(self.store.as_deref())
    }

    /// Write something to the store as it happens; a failure is a warning (the run directory
    /// keeps everything and can be imported later), never a lost record.
    pub fn keep(
        &self,
        what: &str,
        write: impl FnOnce(
            &remanent::history::Location,
        ) -> Result<bool, remanent::jobs::history::HistoryError>,
    ) {
        let at = self.location();
        if at == remanent::history::Location::Off {
            return;
        }
        match write(&at) {
            Ok(true) => eprintln!("history: {what} stored in {}", at.describe()),
            Ok(false) => eprintln!("history: {what} already in {}", at.describe()),
            Err(e) => eprintln!(
                "warning: {what} not stored in the history ({e}); nothing is lost: \
                 `remanent history import` adds it later"
            ),
        }
    }
}

/// Lot, purchase order, supplier and operator of an inspection.
#[derive(clap::Args, Clone, Debug, Default)]
pub struct InspectionOpts {
    /// The lot (or batch) the magnet belongs to.
    #[arg(long)]
    pub lot: Option<String>,
    /// The purchase order it came on.
    #[arg(long = "order")]
    pub purchase_order: Option<String>,
    /// Who supplied it.
    #[arg(long)]
    pub supplier: Option<String>,
    /// Who runs the test.
    #[arg(long)]
    pub operator: Option<String>,
}

impl InspectionOpts {
    /// As the library takes it (blanks dropped).
    pub fn inspection(&self) -> remanent::inspection::Inspection {
        remanent::inspection::Inspection {
            lot: self.lot.clone(),
            purchase_order: self.purchase_order.clone(),
            supplier: self.supplier.clone(),
            operator: self.operator.clone(),
        }
        .tidied()
    }
}

/// How a logger's CSV file is read (a run directory needs none of this).
#[derive(clap::Args, Clone, Debug, Default)]
pub struct CsvOpts {
    /// The magnet (demo part id or TOML file), for CSV input.
    #[arg(long)]
    pub magnet: Option<String>,
    /// Map a column for CSV input, e.g. `--column temp_C=Temperature`.
    #[arg(long = "column", value_parser = parse_mapping)]
    pub columns: Vec<(String, String)>,
    /// For CSV input: the probe's sensitivity coefficient, %/°C, usually negative (needs a
    /// probe_temp_C column).
    #[arg(long, allow_negative_numbers = true, value_parser = parse_finite)]
    pub probe_tc_pct_per_c: Option<f64>,
    /// For CSV input: refuse rows pasted twice and a restarting time column rather than
    /// repair them.
    #[arg(long)]
    pub strict: bool,
}

/// `OURS=THEIRS`.
pub fn parse_mapping(s: &str) -> Result<(String, String), String> {
    s.split_once('=')
        .map(|(a, b)| (a.trim().to_string(), b.trim().to_string()))
        .ok_or_else(|| format!("`{s}` is not OURS=THEIRS"))
}
