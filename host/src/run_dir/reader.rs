//! Reading a run's sample rows back, as the writer wrote them, with the line of every row
//! that cannot be read.

use std::fs::File;
use std::path::{Path, PathBuf};

use super::meta::{io_err, RunDirError, SAMPLES_FILE};
use super::row::SampleRow;

/// A row that could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct RowError {
    /// Its line in the file (1 is the header).
    pub line: u64,
    /// Why.
    pub reason: String,
}

/// A row with its line number, or why it could not be read.
pub type Row = Result<(u64, SampleRow), RowError>;

/// The rows of `dir/samples.csv`, each with its line number; and the file's path.
pub fn read_samples(dir: &Path) -> Result<(PathBuf, impl Iterator<Item = Row>), RunDirError> {
    let path = dir.join(SAMPLES_FILE);
    let file = File::open(&path).map_err(io_err(&path))?;
    let rows = csv::ReaderBuilder::new()
        .flexible(false)
        .from_reader(file)
        .into_deserialize::<SampleRow>()
        .enumerate()
        .map(|(k, r)| {
            let fallback = k as u64 + 2;
            r.map(|row| (fallback, row)).map_err(|e| RowError {
                line: e.position().map_or(fallback, |p| p.line()),
                reason: match e.kind() {
                    csv::ErrorKind::Deserialize { err, .. } => err.to_string(),
                    other => format!("{other:?}"),
                },
            })
        });
    Ok((path, rows))
}
