//! Repairs of a logger's file that the data itself supports: rows pasted twice (exact copies
//! of rows already read at the same time) are dropped, and a time column that restarts (a
//! logger rebooted, two files joined) continues from where it stopped when the rows on both
//! sides join up in temperature and flux, else the file is split there and the parts analysed
//! apart. Each repair is counted for the result and named in a note with its lines; `--strict`
//! refuses instead.

use serde::Serialize;

use super::series::Series;
use crate::units::Phrase;

/// A restart joins up when the temperature moved less than this across it, K …
pub const JOIN_TEMP_K: f64 = 1.0;
/// … and the flux less than this, relative.
pub const JOIN_FLUX_REL: f64 = 0.002;

/// What was repaired, for the result and the notes.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct Repairs {
    /// Rows dropped as exact copies of rows already read.
    pub duplicate_rows: usize,
    /// Their lines, as first–last ranges.
    pub duplicate_lines: Vec<[usize; 2]>,
    /// Lines where the time restarted and was continued.
    pub restart_lines: Vec<usize>,
    /// Lines where the time restarted and the rows did not join up: a new part begins there,
    /// analysed apart.
    pub split_lines: Vec<usize>,
    /// The time added from each restart on, s.
    #[serde(skip)]
    pub offset_s: f64,
}

/// What to do with a row whose time does not increase.
pub enum Verdict {
    /// An exact copy of a row already read: drop it.
    Duplicate,
    /// A restart that joins up: keep the row at this time.
    Continue(f64),
    /// A restart that does not join up: a new record begins here; keep the row at this time
    /// and analyse the parts apart.
    Split(f64),
    /// Neither: the reason it cannot be repaired.
    Refuse(String),
}

impl Repairs {
    /// Judge a row at time `t` (restart offset already applied) that does not come after
    /// the last row read; `line` for the record.
    pub fn judge(&mut self, s: &Series, t: f64, temp: f64, flux: f64, line: usize) -> Verdict {
        if let Ok(i) = s.time_s.binary_search_by(|x| x.total_cmp(&t)) {
            if s.temp_c[i] == temp && s.flux_mt[i] == flux {
                match self.duplicate_lines.last_mut() {
                    Some(r) if r[1] + 1 == line => r[1] = line,
                    _ => self.duplicate_lines.push([line, line]),
                }
                self.duplicate_rows += 1;
                return Verdict::Duplicate;
            }
        }
        let n = s.time_s.len();
        let (last_t, last_temp, last_flux) = (s.time_s[n - 1], s.temp_c[n - 1], s.flux_mt[n - 1]);
        let step = if n >= 2 {
            last_t - s.time_s[n - 2]
        } else {
            1.0
        };
        if t > last_t - 0.5 * step {
            return Verdict::Refuse(
                "other readings at the same time (a timestamp repeated, not a restart)".into(),
            );
        }
        let joins = (temp - last_temp).abs() <= JOIN_TEMP_K
            && (flux - last_flux).abs() <= JOIN_FLUX_REL * last_flux.abs();
        let continued = last_t + step;
        self.offset_s += continued - t;
        if !joins {
            self.split_lines.push(line);
            return Verdict::Split(continued);
        }
        self.restart_lines.push(line);
        Verdict::Continue(continued)
    }

    /// The notes that name each repair.
    pub fn notes(&self) -> Vec<Phrase> {
        let mut out = Vec::new();
        if self.duplicate_rows > 0 {
            let lines: Vec<String> = self
                .duplicate_lines
                .iter()
                .map(|[a, b]| {
                    if a == b {
                        format!("{a}")
                    } else {
                        format!("{a}–{b}")
                    }
                })
                .collect();
            out.push(
                format!(
                    "{} exact copies of rows already read dropped (lines {}: pasted twice)",
                    self.duplicate_rows,
                    lines.join(", ")
                )
                .into(),
            );
        }
        let restarts = [
            (&self.restart_lines, "(a logger restarted, or files joined): continued from where it stopped, the rows on both sides joining up in temperature and flux"),
            (&self.split_lines, "and the rows on either side do not join up in temperature and flux: the file holds more than one record, and each part is analysed apart"),
        ];
        for (at, what) in restarts.into_iter().filter(|(at, _)| !at.is_empty()) {
            let lines: Vec<String> = at.iter().map(|l| l.to_string()).collect();
            out.push(
                format!(
                    "the time column restarts at line {} {what}",
                    lines.join(", ")
                )
                .into(),
            );
        }
        out
    }
}
