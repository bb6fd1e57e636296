//! The analysis input: a time series of temperature and flux density (and the probe's
//! temperature when known), from a run directory (re-converted from raw codes) or a CSV log.

use std::path::Path;

use super::blocks::{self, Blocks};
use crate::calibration::Calibration;
use crate::conversion;
use crate::magnets::MagnetInfo;
use crate::run_dir::{self, CodesRow, RunMeta};
use remanent_protocol::ThermoWord;

/// Time series, equal lengths, strictly increasing time.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Series {
    /// Time, s.
    pub time_s: Vec<f64>,
    /// Thermocouple temperature, °C.
    pub temp_c: Vec<f64>,
    /// Flux density, mT.
    pub flux_mt: Vec<f64>,
    /// Probe temperature, °C, when known.
    pub probe_c: Option<Vec<f64>>,
    /// Heater duty, %, when known (for plots).
    pub duty_pct: Option<Vec<f64>>,
    /// Setpoint, °C, when the heater was following one (NaN while off; for plots).
    pub setpoint_c: Option<Vec<f64>>,
    /// Faults the device reported: device time, s, and what (for plots).
    pub faults: Vec<(f64, String)>,
    /// Rows left out (thermocouple faults, saturated Hall readings, blank cells), with their
    /// line and why.
    pub skipped: Vec<(usize, String)>,
    /// Thermocouple spikes rejected: time, s, and the reading, °C.
    pub spikes: Vec<(f64, f64)>,
    /// What the loader did that the report should say.
    pub notes: Vec<String>,
}

/// Where the series came from and what is known about it.
#[derive(Debug, Clone)]
pub struct Source {
    /// File or directory.
    pub path: String,
    /// Run metadata, for a run directory.
    pub meta: Option<RunMeta>,
    /// Calibration used.
    pub calibration: Option<Calibration>,
    /// Magnet facts.
    pub magnet: Option<MagnetInfo>,
}

/// Input problems, naming the file, line and column.
#[derive(Debug, thiserror::Error)]
pub enum InputError {
    /// Unreadable.
    #[error("cannot read {path}: {reason}")]
    Io {
        /// File.
        path: String,
        /// Why.
        reason: String,
    },
    /// A required column is missing.
    #[error("{path}: line 1: no {column} (columns found: {found})")]
    MissingColumn {
        /// File.
        path: String,
        /// Column wanted, in words with its backticks and any hint.
        column: String,
        /// Columns present.
        found: String,
    },
    /// A cell is not a number.
    #[error("{path}: line {line}, column `{column}`: `{value}` is not a number")]
    NotANumber {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// Column.
        column: String,
        /// The cell.
        value: String,
    },
    /// A value that cannot be true (NaN, infinity).
    #[error("{path}: line {line}, column `{column}`: `{value}` is not a finite number")]
    NotFinite {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// Column.
        column: String,
        /// The cell.
        value: String,
    },
    /// Time goes backwards or repeats.
    #[error("{path}: line {line}, column `time_s`: time {value} s does not increase (previous {previous} s)")]
    TimeOrder {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// This time.
        value: f64,
        /// Previous time.
        previous: f64,
    },
    /// A row has the wrong number of fields.
    #[error("{path}: line {line}: {reason}")]
    Row {
        /// File.
        path: String,
        /// 1-based line.
        line: usize,
        /// Why.
        reason: String,
    },
    /// Not enough rows.
    #[error("{path}: only {n} usable rows; at least {min} are needed")]
    TooFew {
        /// File.
        path: String,
        /// Rows.
        n: usize,
        /// Needed.
        min: usize,
    },
    /// Metadata problem.
    #[error(transparent)]
    Run(#[from] run_dir::RunDirError),
}

pub use super::csv_log::{load_csv, CsvOptions};

/// Fewest rows worth analysing.
pub const MIN_ROWS: usize = 20;

fn check_time(path: &str, line: usize, t: f64, times: &[f64]) -> Result<(), InputError> {
    if let Some(&prev) = times.last() {
        if t <= prev {
            return Err(InputError::TimeOrder {
                path: path.into(),
                line,
                value: t,
                previous: prev,
            });
        }
    }
    Ok(())
}

/// A row of a run as the loader's threads hand it over.
enum Converted {
    /// Time, temperature, flux, probe temperature, duty, setpoint.
    Values([f64; 6]),
    /// Left out (at this time), and why.
    Skip(f64, Skip),
}

/// Why a run's row is left out.
#[derive(Clone, Copy)]
enum Skip {
    Thermocouple(ThermoWord),
    Probe,
    Saturated,
}

impl std::fmt::Display for Skip {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Skip::Thermocouple(w) => write!(
                f,
                "thermocouple fault {}",
                w.fault().map_or("", conversion::thermo_fault_name)
            ),
            Skip::Probe => f.write_str("probe thermistor open or shorted"),
            Skip::Saturated => f.write_str("Hall reading at the converter's limit"),
        }
    }
}

/// The faults listed in a run's events file (missing or unreadable: none).
fn read_faults(path: &Path) -> Vec<(f64, String)> {
    let Ok(mut rdr) = csv::Reader::from_path(path) else {
        return Vec::new();
    };
    rdr.records()
        .flatten()
        .filter(|r| r.get(1) == Some("fault"))
        .filter_map(|r| Some((r.get(0)?.parse().ok()?, r.get(2)?.to_string())))
        .collect()
}

/// Load a run directory, converting the raw codes again with `calibration` (default: the one
/// recorded with the run).
pub fn load_run(
    dir: &Path,
    calibration: Option<Calibration>,
) -> Result<(Series, Source), InputError> {
    let meta = run_dir::read_meta(dir)?;
    let cal = calibration.unwrap_or(meta.calibration);
    let path = dir.join(run_dir::SAMPLES_FILE);
    let p = path.display().to_string();
    let lines = blocks::estimate_rows(&path).map_err(|e| InputError::Io {
        path: p.clone(),
        reason: e.to_string(),
    })?;
    let mut blocks = Blocks::<6>::for_rows(lines);
    let mut s = Series::default();
    let mut probe = Vec::with_capacity(lines / blocks.k() + 1);
    let mut duty = Vec::with_capacity(lines / blocks.k() + 1);
    let mut setpoint = Vec::with_capacity(lines / blocks.k() + 1);
    let mut push = |s: &mut Series, v: [f64; 6]| {
        s.time_s.push(v[0]);
        s.temp_c.push(v[1]);
        s.flux_mt.push(v[2]);
        probe.push(v[3]);
        duty.push(v[4]);
        setpoint.push(v[5]);
    };
    let mut last_t = f64::NEG_INFINITY;
    // rows are read and converted on two threads into plain values; placed here in order
    let parse = |line: &[u8]| -> Result<Converted, String> {
        let r = CodesRow::parse_line(line)?;
        let c = conversion::convert_memo(r.hall_code, r.probe_code, r.thermo_word, &cal);
        Ok(match (c.temp_c, c.probe_c, c.flux_mt) {
            (None, _, _) => Converted::Skip(r.device_time_s, Skip::Thermocouple(r.thermo_word)),
            (_, None, _) | (_, _, None) => Converted::Skip(r.device_time_s, Skip::Probe),
            _ if c.hall_saturated => Converted::Skip(r.device_time_s, Skip::Saturated),
            (Some(tc), Some(tp), Some(flux)) => Converted::Values([
                r.device_time_s,
                tc,
                flux,
                tp,
                r.heater_duty_pct,
                r.setpoint_c.unwrap_or(f64::NAN),
            ]),
        })
    };
    run_dir::for_each_row(dir, &parse, |row, is_last| -> Result<(), InputError> {
        let (line, row) = match row {
            Ok(x) => x,
            // a record cut off by power loss or a full disk ends in a torn row: use the rest
            Err(e) if is_last => {
                s.skipped
                    .push((e.line as usize, format!("last row torn ({})", e.reason)));
                return Ok(());
            }
            Err(e) => {
                return Err(InputError::Row {
                    path: p.clone(),
                    line: e.line as usize,
                    reason: e.reason,
                })
            }
        };
        let line = line as usize;
        let t = match row {
            Converted::Values(v) => v[0],
            Converted::Skip(t, _) => t,
        };
        check_time(&p, line, t, &[last_t])?;
        last_t = t;
        match row {
            Converted::Values(v) => {
                if let Some(m) = blocks.add(v) {
                    push(&mut s, m);
                }
            }
            Converted::Skip(_, why) => s.skipped.push((line, why.to_string())),
        }
        Ok(())
    })??;
    if let Some(m) = blocks.finish() {
        push(&mut s, m);
    }
    if blocks.k() > 1 {
        s.notes.push(format!(
            "a long record ({lines} rows): analysed as means of {} consecutive samples",
            blocks.k()
        ));
    }
    s.probe_c = Some(probe);
    s.duty_pct = Some(duty);
    s.setpoint_c = Some(setpoint);
    s.faults = read_faults(&dir.join(run_dir::EVENTS_FILE));
    super::clean::despike(&mut s);
    if s.time_s.len() < MIN_ROWS {
        return Err(InputError::TooFew {
            path: p,
            n: s.time_s.len(),
            min: MIN_ROWS,
        });
    }
    let magnet = Some(meta.magnet.clone());
    Ok((
        s,
        Source {
            path: dir.display().to_string(),
            meta: Some(meta),
            calibration: Some(cal),
            magnet,
        },
    ))
}
