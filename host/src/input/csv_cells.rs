//! The cells of a logger's CSV line: split at the delimiter outside double quotes, missing
//! values told from numbers, decimal commas read as points.

/// Cells that mean "no value" in common loggers' exports.
const MISSING: &[&str] = &["", "NA", "N/A", "n/a", "-", "--", "null", "NULL", "None"];

/// The cells of a line split at `delimiter` (delimiters inside double quotes kept), as byte
/// ranges into `out`, which is reused from line to line.
pub fn spans(line: &str, delimiter: u8, out: &mut Vec<std::ops::Range<usize>>) {
    out.clear();
    let mut start = 0;
    let mut quoted = false;
    for (i, &b) in line.as_bytes().iter().enumerate() {
        if b == b'"' {
            quoted = !quoted;
        } else if b == delimiter && !quoted {
            out.push(start..i);
            start = i + 1;
        }
    }
    out.push(start..line.len());
}

/// What one cell held (`None` from [`parse_cell`]: not a number).
pub enum Cell {
    /// A number.
    Value(f64),
    /// No value (blank, NA, …).
    Missing,
}

pub fn parse_cell(raw: &str, decimal_comma: bool, scratch: &mut String) -> Option<Cell> {
    let v = raw.trim().trim_matches('"').trim();
    if MISSING.contains(&v) {
        return Some(Cell::Missing);
    }
    let text = if decimal_comma && v.contains(',') {
        scratch.clear();
        scratch.extend(v.chars().map(|c| if c == ',' { '.' } else { c }));
        scratch.as_str()
    } else {
        v
    };
    crate::run_dir::decimal(text.as_bytes()).map(Cell::Value)
}
