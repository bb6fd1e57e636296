//! Other loggers' CSV files as an analysis input: comma, semicolon or tab separated, decimal
//! commas, units in the column names (°C/°F/K; mT/T/G/kG; seconds or clock timestamps), blank
//! cells skipped and counted, a torn last line (no line end) left out and said; columns found by
//! our names, by `--column`, or by the names people write ([`column_names`]), every missing one
//! reported at once.

use std::collections::HashMap;
use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::Path;

use super::column_names::{Quantity, Unit, FLUX, PROBE, TEMP, TIME};
use super::csv_cells::{parse_cell, spans, Cell};
use super::csv_header::{pick_columns, Col, Header};
use super::repair::Verdict;
use super::series::{InputError, Series, MIN_ROWS};
use crate::timestamps;

/// Options for plain CSV logs.
#[derive(Debug, Clone, Default)]
pub struct CsvOptions {
    /// Our column name → the file's column name.
    pub rename: HashMap<String, String>,
    /// Probe sensitivity coefficient, %/°C, to correct flux with `probe_temp_C`.
    pub probe_tc_pct_per_c: Option<f64>,
    /// Refuse duplicate rows and a restarting time column rather than repair them.
    pub strict: bool,
}

/// Load a CSV log with a time, a temperature and a flux column (and optionally the probe's
/// temperature). The columns' names carry their units: see [`TIME`], [`TEMP`], [`FLUX`].
pub fn load_csv(path: &Path, opts: &CsvOptions) -> Result<Series, InputError> {
    let p = path.display().to_string();
    let io = |e: std::io::Error| InputError::Io {
        path: p.clone(),
        reason: e.to_string(),
    };
    let mut rdr = BufReader::with_capacity(1 << 20, File::open(path).map_err(io)?);
    let mut buf = Vec::new();
    let mut line_no = 0usize;
    // the header: the first line that is neither blank nor a comment
    let header = loop {
        buf.clear();
        if rdr.read_until(b'\n', &mut buf).map_err(io)? == 0 {
            return Err(InputError::TooFew {
                path: p,
                n: 0,
                min: MIN_ROWS,
            });
        }
        line_no += 1;
        let l = String::from_utf8_lossy(&buf);
        if !l.trim().is_empty() && !l.trim_start().starts_with('#') {
            break Header::parse(&l);
        }
    };
    let known: Vec<&str> = [TIME, TEMP, FLUX, PROBE]
        .iter()
        .flat_map(|q| q.iter().map(|c| c.0))
        .collect();
    if let Some(bad) = opts.rename.keys().find(|k| !known.contains(&k.as_str())) {
        return Err(InputError::Row {
            path: p,
            line: 1,
            reason: format!(
                "`--column {bad}=…`: `{bad}` is not one of our names ({})",
                known.join(", ")
            ),
        });
    }
    let (cols, notes) = pick_columns(&header, &p, &opts.rename)?;
    let probe = header.resolve(&p, PROBE, &opts.rename)?;
    if opts.probe_tc_pct_per_c.is_some() && probe.is_none() {
        return Err(InputError::MissingColumn {
            path: p,
            column: "`probe_temp_C` column (needed by `--probe-tc-pct-per-c`)".into(),
            found: header.found(),
        });
    }
    let probe = match probe {
        Some(c) => Some(c),
        None => header.understood(Quantity::Probe).map(|(c, _)| c),
    };
    let mut rows = Rows::new(p.clone(), header, cols, probe, opts.probe_tc_pct_per_c);
    rows.strict = opts.strict;
    rows.s.notes.extend(notes);
    loop {
        buf.clear();
        if rdr.read_until(b'\n', &mut buf).map_err(io)? == 0 {
            break;
        }
        line_no += 1;
        rows.line(&buf, line_no, rdr.fill_buf().map_err(io)?.is_empty())?;
    }
    rows.finish()
}

/// The rows read so far, into a series.
struct Rows {
    path: String,
    header: Header,
    cols: [Col; 3],
    probe: Option<Col>,
    probe_tc: Option<f64>,
    s: Series,
    probe_c: Vec<f64>,
    clock: timestamps::Clock,
    scratch: String,
    cells: Vec<std::ops::Range<usize>>,
    strict: bool,
}

impl Rows {
    fn new(
        path: String,
        header: Header,
        cols: [Col; 3],
        probe: Option<Col>,
        probe_tc: Option<f64>,
    ) -> Rows {
        Rows {
            path,
            header,
            cols,
            probe,
            probe_tc,
            s: Series::default(),
            probe_c: Vec::new(),
            clock: timestamps::Clock::default(),
            scratch: String::new(),
            cells: Vec::new(),
            strict: false,
        }
    }

    /// One line of the file (`last`: nothing follows it).
    fn line(&mut self, raw: &[u8], line: usize, last: bool) -> Result<(), InputError> {
        let torn = last && !raw.ends_with(b"\n");
        let text = String::from_utf8_lossy(raw);
        let text = text.trim_end_matches(['\n', '\r']);
        if text.trim().is_empty() || text.trim_start().starts_with('#') {
            return Ok(());
        }
        if torn {
            // a record cut off mid-line may have lost digits that still parse: never trust it
            self.skip(
                line,
                "last line incomplete (no line end: the record was cut off)",
            )?;
            return Ok(());
        }
        spans(text, self.header.delimiter, &mut self.cells);
        let wanted = [
            Some(self.cols[0]),
            Some(self.cols[1]),
            Some(self.cols[2]),
            self.probe,
        ];
        let mut values = [0.0f64; 4];
        for (k, col) in wanted.into_iter().enumerate() {
            let Some(col) = col else { continue };
            match self.cell(text, col, line)? {
                Some(v) => values[k] = v,
                None => return Ok(()),
            }
        }
        let [t, temp, mut flux, probe] = values;
        if let (Some(tc), Some(_)) = (self.probe_tc, self.probe) {
            flux /= 1.0 + tc / 100.0 * (probe - 25.0);
        }
        let mut t = t + self.s.repairs.offset_s;
        if let Some(&prev) = self.s.time_s.last() {
            if t <= prev {
                let order = |why: String| InputError::Row {
                    path: self.path.clone(),
                    line,
                    reason: format!(
                        "column `{}`: time {t} s does not increase (previous {prev} s){why}",
                        self.header.names[self.cols[0].index]
                    ),
                };
                if self.strict {
                    return Err(order(" (--strict: no repairs)".into()));
                }
                let mut repairs = std::mem::take(&mut self.s.repairs);
                let verdict = repairs.judge(&self.s, t, temp, flux, line);
                self.s.repairs = repairs;
                match verdict {
                    Verdict::Duplicate => return Ok(()),
                    Verdict::Continue(at) => t = at,
                    Verdict::Split(at) => {
                        t = at;
                        self.s.breaks.push(self.s.time_s.len());
                    }
                    Verdict::Refuse(why) => return Err(order(format!(": {why}"))),
                }
            }
        }
        self.s.time_s.push(t);
        self.s.temp_c.push(temp);
        self.s.flux_mt.push(flux);
        if self.probe.is_some() {
            self.probe_c.push(probe);
        }
        Ok(())
    }

    /// The value of `col` in this line, converted to our unit; `None` when the row is
    /// skipped (a blank cell).
    fn cell(&mut self, text: &str, col: Col, line: usize) -> Result<Option<f64>, InputError> {
        let Some(raw) = self.cells.get(col.index).map(|r| &text[r.clone()]) else {
            return Err(InputError::Row {
                path: self.path.clone(),
                line,
                reason: format!(
                    "{} fields, {} in the header",
                    self.cells.len(),
                    self.header.names.len()
                ),
            });
        };
        let parsed = match col.unit {
            Unit::Clock => match self.clock.seconds(raw) {
                Some(v) => Some(Cell::Value(v)),
                None if raw.trim().is_empty() => Some(Cell::Missing),
                None => None,
            },
            Unit::Linear(..) => parse_cell(raw, self.header.decimal_comma, &mut self.scratch),
        };
        let v = match parsed {
            Some(Cell::Value(v)) => v,
            Some(Cell::Missing) => {
                let why = format!("blank `{}`", self.header.names[col.index]);
                return self.skip(line, &why);
            }
            None => {
                return Err(InputError::NotANumber {
                    path: self.path.clone(),
                    line,
                    column: self.header.names[col.index].clone(),
                    value: raw.trim().to_string(),
                })
            }
        };
        if !v.is_finite() {
            return Err(InputError::NotFinite {
                path: self.path.clone(),
                line,
                column: self.header.names[col.index].clone(),
                value: raw.trim().to_string(),
            });
        }
        Ok(Some(match col.unit {
            Unit::Linear(f, o) => v * f + o,
            Unit::Clock => v,
        }))
    }

    fn skip(&mut self, line: usize, why: &str) -> Result<Option<f64>, InputError> {
        self.s.skipped.push((line, why.to_string()));
        Ok(None)
    }

    fn finish(mut self) -> Result<Series, InputError> {
        if self.probe.is_some() {
            self.s.probe_c = Some(self.probe_c);
        }
        let repaired = self.s.repairs.notes();
        self.s.notes.extend(repaired);
        super::clean::despike(&mut self.s);
        if self.s.time_s.len() < MIN_ROWS {
            return Err(InputError::TooFew {
                path: self.path,
                n: self.s.time_s.len(),
                min: MIN_ROWS,
            });
        }
        Ok(self.s)
    }
}
