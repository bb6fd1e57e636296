//! Reading a run's sample rows back, as the writer wrote them, with the line of every row
//! that cannot be read.

use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};

use super::meta::{io_err, RunDirError, SAMPLES_FILE, SAMPLES_HEADER};
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

/// The rows of `dir/samples.csv`, each with its line number; and the file's path. Rows are
/// read line by line into one reused buffer (no allocation per row).
pub fn read_samples(dir: &Path) -> Result<(PathBuf, impl Iterator<Item = Row>), RunDirError> {
    let path = dir.join(SAMPLES_FILE);
    let file = File::open(&path).map_err(io_err(&path))?;
    let mut rdr = BufReader::with_capacity(1 << 20, file);
    let mut buf = String::new();
    let mut line = 0u64;
    let mut failed = false;
    let rows = std::iter::from_fn(move || {
        if failed {
            return None;
        }
        loop {
            buf.clear();
            line += 1;
            match rdr.read_line(&mut buf) {
                Ok(0) => return None,
                Ok(_) if line == 1 => {
                    // the header: the writer's, or the rows cannot be trusted
                    if buf.trim_end() != SAMPLES_HEADER {
                        failed = true;
                        return Some(Err(RowError {
                            line,
                            reason: format!("header is not the samples header `{SAMPLES_HEADER}`"),
                        }));
                    }
                }
                Ok(_) if buf.trim().is_empty() => {}
                Ok(_) if !buf.ends_with('\n') => {
                    // the writer ends every row: a row without its end was cut off mid-write
                    // and may have lost digits that still parse
                    return Some(Err(RowError {
                        line,
                        reason: "no line end: the record was cut off here".into(),
                    }));
                }
                Ok(_) => {
                    return Some(
                        SampleRow::parse_line(&buf)
                            .map(|r| (line, r))
                            .map_err(|reason| RowError { line, reason }),
                    )
                }
                Err(e) => {
                    failed = true;
                    return Some(Err(RowError {
                        line,
                        reason: e.to_string(),
                    }));
                }
            }
        }
    });
    Ok((path, rows))
}

/// Bytes of rows parsed per chunk; two chunks are parsed at once, one on each core.
pub const CHUNK_BYTES: usize = 4 << 20;

/// Parse one chunk of whole lines, the first of which is line `first_line`.
fn parse_chunk(chunk: &[u8], first_line: u64) -> Vec<Row> {
    let mut out = Vec::with_capacity(chunk.len() / 64);
    let mut line = first_line;
    for raw in chunk.split_inclusive(|&b| b == b'\n') {
        let row = match std::str::from_utf8(raw) {
            Err(_) => Err(RowError {
                line,
                reason: "not UTF-8 text".into(),
            }),
            Ok(t) if t.trim().is_empty() => {
                line += 1;
                continue;
            }
            Ok(t) if !t.ends_with('\n') => Err(RowError {
                line,
                reason: "no line end: the record was cut off here".into(),
            }),
            Ok(t) => SampleRow::parse_line(t)
                .map(|r| (line, r))
                .map_err(|reason| RowError { line, reason }),
        };
        out.push(row);
        line += 1;
    }
    out
}

/// Every row of `dir/samples.csv` in order to `f`, with whether it is the file's last; rows
/// are parsed two chunks at a time on two threads. Stops at the first row `f` refuses.
pub fn for_each_row<E>(
    dir: &Path,
    mut f: impl FnMut(Row, bool) -> Result<(), E>,
) -> Result<Result<(), E>, RunDirError> {
    let path = dir.join(SAMPLES_FILE);
    let file = File::open(&path).map_err(io_err(&path))?;
    let mut rdr = BufReader::with_capacity(1 << 20, file);
    let mut header = String::new();
    rdr.read_line(&mut header).map_err(io_err(&path))?;
    if header.trim_end() != SAMPLES_HEADER {
        return Ok(f(
            Err(RowError {
                line: 1,
                reason: format!("header is not the samples header `{SAMPLES_HEADER}`"),
            }),
            true,
        ));
    }
    let mut next_line = 2u64;
    let mut read_chunk = |rdr: &mut BufReader<File>| -> Result<(Vec<u8>, u64), RunDirError> {
        let mut chunk = Vec::with_capacity(CHUNK_BYTES + 4096);
        while chunk.len() < CHUNK_BYTES {
            if rdr.read_until(b'\n', &mut chunk).map_err(io_err(&path))? == 0 {
                break;
            }
        }
        let first = next_line;
        next_line += chunk.iter().filter(|&&b| b == b'\n').count() as u64;
        Ok((chunk, first))
    };
    loop {
        let (a, la) = read_chunk(&mut rdr)?;
        let (b, lb) = read_chunk(&mut rdr)?;
        if a.is_empty() {
            return Ok(Ok(()));
        }
        let (ra, rb) = std::thread::scope(|sc| {
            let h = sc.spawn(|| parse_chunk(&b, lb));
            let ra = parse_chunk(&a, la);
            (ra, h.join().expect("row parser"))
        });
        let end = b.is_empty() || rdr.fill_buf().map_err(io_err(&path))?.is_empty();
        let total = ra.len() + rb.len();
        for (k, row) in ra.into_iter().chain(rb).enumerate() {
            if let Err(e) = f(row, end && k + 1 == total) {
                return Ok(Err(e));
            }
        }
        if end {
            return Ok(Ok(()));
        }
    }
}
