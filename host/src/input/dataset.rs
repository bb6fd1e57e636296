//! The analysis input: a time series of temperature and flux density (and the probe's
//! temperature when known), from a run directory (re-converted from raw codes) or a CSV log.

use std::path::Path;

use super::blocks::{self, Blocks};
use crate::calibration::Calibration;
use crate::conversion;
use crate::magnets::MagnetInfo;
use crate::run_dir::{self, CodesRow, RunMeta};
use remanent_protocol::ThermoWord;

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

pub use super::csv_log::{load_csv, CsvOptions};
pub use super::series::{InputError, Series, MIN_ROWS};

/// Time must increase from row to row.
fn check_time(path: &str, line: usize, t: f64, previous: f64) -> Result<(), InputError> {
    if t <= previous {
        return Err(InputError::TimeOrder {
            path: path.into(),
            line,
            value: t,
            previous,
        });
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
        check_time(&p, line, t, last_t)?;
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
        s.notes.push(
            format!(
                "a long record ({lines} rows): analysed as means of {} consecutive samples",
                blocks.k()
            )
            .into(),
        );
    }
    s.probe_c = Some(probe);
    s.duty_pct = Some(duty);
    s.setpoint_c = Some(setpoint);
    s.faults = crate::event::file::faults(&dir.join(run_dir::EVENTS_FILE));
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
