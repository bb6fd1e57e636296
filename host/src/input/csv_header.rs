//! A logger's CSV header: its separator, its column names, and which column holds time,
//! temperature, flux and the probe's temperature — by our names or `--column` first, else by the
//! names people write ([`super::column_names`]), every missing one reported at once.

use std::collections::HashMap;

use super::column_names::{self, Quantity, Unit, FLUX, TEMP, TIME};
use super::csv_cells::spans;
use super::series::InputError;

/// A column found in the header.
#[derive(Debug, Clone, Copy)]
pub struct Col {
    /// Its place in a row.
    pub index: usize,
    /// How its numbers become ours.
    pub unit: Unit,
}

pub struct Header {
    /// The column names.
    pub names: Vec<String>,
    /// The separator.
    pub delimiter: u8,
    /// Decimal commas (a `;` or tab separator).
    pub decimal_comma: bool,
}

impl Header {
    pub fn parse(line: &str) -> Header {
        let line = line.trim_start_matches('\u{feff}').trim_end();
        let delimiter = if line.contains(';') {
            b';'
        } else if line.contains('\t') {
            b'\t'
        } else {
            b','
        };
        let mut cells = Vec::new();
        spans(line, delimiter, &mut cells);
        let names = cells
            .into_iter()
            .map(|r| line[r].trim().trim_matches('"').trim().to_string())
            .collect();
        Header {
            names,
            delimiter,
            decimal_comma: delimiter != b',',
        }
    }

    pub fn found(&self) -> String {
        self.names.join(", ")
    }

    /// The first column whose name's words say it holds `q`, with a note when its unit was
    /// assumed or another column would also have fitted.
    pub fn understood(&self, q: Quantity) -> Option<(Col, Option<crate::units::Phrase>)> {
        let hits: Vec<(usize, column_names::Understood)> = self
            .names
            .iter()
            .enumerate()
            .filter_map(|(i, n)| column_names::understand(n).map(|u| (i, u)))
            .filter(|(_, u)| u.quantity == q)
            .collect();
        let (index, u) = *hits.first()?;
        let name = &self.names[index];
        let mut said = Vec::new();
        if let Some(unit) = u.assumed {
            said.push(format!("`{name}` names no unit: taken as {unit}"));
        }
        if hits.len() > 1 {
            let others: Vec<String> = hits[1..]
                .iter()
                .map(|(i, _)| format!("`{}`", self.names[*i]))
                .collect();
            said.push(format!(
                "`{name}` is used rather than {} (choose with `--column`)",
                others.join(", ")
            ));
        }
        let note = (!said.is_empty()).then(|| said.join("; ").into());
        Some((
            Col {
                index,
                unit: u.unit,
            },
            note,
        ))
    }

    /// The column for one quantity: the first of `ours` present (under its `--column` name,
    /// else in any case), or an error when a `--column` name is not there.
    pub fn resolve(
        &self,
        path: &str,
        ours: &[(&str, Unit)],
        rename: &HashMap<String, String>,
    ) -> Result<Option<Col>, InputError> {
        for (name, unit) in ours {
            let theirs = rename.get(*name).map_or(*name, String::as_str);
            match self.names.iter().position(|h| h == theirs) {
                Some(index) => return Ok(Some(Col { index, unit: *unit })),
                None if rename.contains_key(*name) => {
                    return Err(InputError::MissingColumn {
                        path: path.into(),
                        column: format!("`{theirs}` column (given by `--column {name}={theirs}`)"),
                        found: self.found(),
                    })
                }
                None => {}
            }
        }
        // our names in any case (`Temp_c`, `TIME_S`)
        for (name, unit) in ours {
            if let Some(index) = self.names.iter().position(|h| h.eq_ignore_ascii_case(name)) {
                return Ok(Some(Col { index, unit: *unit }));
            }
        }
        Ok(None)
    }
}

/// The time, temperature and flux columns: by our names or `--column` first, else by the names
/// people write; every one that cannot be found is reported at once. Notes say which columns
/// were taken by their names' words, with an assumed unit or over another candidate.
pub fn pick_columns(
    header: &Header,
    p: &str,
    rename: &HashMap<String, String>,
) -> Result<([Col; 3], Vec<crate::units::Phrase>), InputError> {
    let wanted = [
        (TIME, Quantity::Time, "time"),
        (TEMP, Quantity::Temp, "temperature"),
        (FLUX, Quantity::Flux, "flux"),
    ];
    let (mut cols, mut missing, mut notes) = (Vec::new(), Vec::new(), Vec::new());
    for (ours, q, what) in wanted {
        if let Some(c) = header.resolve(p, ours, rename)? {
            cols.push(c);
            continue;
        }
        match header.understood(q) {
            Some((c, note)) => {
                cols.push(c);
                notes.extend(note);
            }
            None => missing.push(format!(
                "{what} column ({}; name yours with `--column {}=<its name>`)",
                ours.iter()
                    .map(|c| format!("`{}`", c.0))
                    .collect::<Vec<_>>()
                    .join(", "),
                ours[0].0
            )),
        }
    }
    if !missing.is_empty() {
        return Err(InputError::MissingColumn {
            path: p.into(),
            column: missing.join("; no "),
            found: header.found(),
        });
    }
    Ok(([cols[0], cols[1], cols[2]], notes))
}
