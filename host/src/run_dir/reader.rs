//! Reading a run's sample rows back, as the writer wrote them, with the line of every row
//! that cannot be read.

use std::fs::File;
use std::io::{self, Read};
use std::path::Path;

use super::meta::{io_err, RunDirError, SAMPLES_FILE, SAMPLES_HEADER};

/// A row that could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct RowError {
    /// Its line in the file (1 is the header).
    pub line: u64,
    /// Why.
    pub reason: String,
}

/// Bytes of rows parsed per chunk; two chunks are parsed at once, one on each core.
pub const CHUNK_BYTES: usize = 4 << 20;

/// A row read by a caller's parser, with its line; or why it could not be.
pub type Parsed<T> = Result<(u64, T), RowError>;

/// Parse one chunk of whole lines, the first of which is line `first_line`, into `out`.
fn parse_chunk<T>(
    chunk: &[u8],
    first_line: u64,
    parse: &(dyn Fn(&[u8]) -> Result<T, String> + Sync),
    out: &mut Vec<Parsed<T>>,
) {
    out.clear();
    let mut line = first_line;
    for raw in chunk.split_inclusive(|&b| b == b'\n') {
        let row = if raw.trim_ascii().is_empty() {
            line += 1;
            continue;
        } else if !raw.ends_with(b"\n") {
            Err(RowError {
                line,
                reason: "no line end: the record was cut off here".into(),
            })
        } else {
            parse(raw)
                .map(|r| (line, r))
                .map_err(|reason| RowError { line, reason })
        };
        out.push(row);
        line += 1;
    }
}

/// Whole lines of the file, about [`CHUNK_BYTES`] at a time: `chunk` gets what was carried
/// over plus a block read, cut after its last line end (the rest is carried to the next).
/// Returns false at the end of the file with nothing left.
fn next_chunk(file: &mut File, chunk: &mut Vec<u8>, carry: &mut Vec<u8>) -> io::Result<bool> {
    chunk.clear();
    chunk.append(carry);
    let mut eof = false;
    while chunk.len() < CHUNK_BYTES {
        let n = file
            .by_ref()
            .take((CHUNK_BYTES - chunk.len()) as u64)
            .read_to_end(chunk)?;
        if n == 0 {
            eof = true;
            break;
        }
    }
    if !eof {
        if let Some(end) = chunk.iter().rposition(|&b| b == b'\n') {
            carry.extend_from_slice(&chunk[end + 1..]);
            chunk.truncate(end + 1);
        }
    }
    Ok(!chunk.is_empty())
}

/// A chunk to parse: its order, its bytes and its first line.
type Job = (usize, Vec<u8>, u64);

/// Chunks in flight between the reading thread, the parsers and the caller.
const IN_FLIGHT: usize = 2;

/// Check the header at the start of the first chunk; the offset of the first row.
fn header_end(chunk: &[u8]) -> Result<usize, RowError> {
    let end = chunk
        .iter()
        .position(|&b| b == b'\n')
        .unwrap_or(chunk.len());
    let header = chunk[..end].strip_suffix(b"\r").unwrap_or(&chunk[..end]);
    if header != SAMPLES_HEADER.as_bytes() {
        return Err(RowError {
            line: 1,
            reason: format!("header is not the samples header `{SAMPLES_HEADER}`"),
        });
    }
    Ok((end + 1).min(chunk.len()))
}

/// Every row of `dir/samples.csv` read by `parse`, in order, to `f` with whether it is the
/// file's last. A pipeline: one thread reads whole-line chunks, two parse them, and the
/// calling thread hands the rows to `f` in order, so reading, parsing and placing overlap.
/// Stops at the first row `f` refuses (the other threads then stop too).
pub fn for_each_row<T: Send, E>(
    dir: &Path,
    parse: &(dyn Fn(&[u8]) -> Result<T, String> + Sync),
    mut f: impl FnMut(Parsed<T>, bool) -> Result<(), E>,
) -> Result<Result<(), E>, RunDirError> {
    use std::sync::mpsc::{sync_channel, Receiver};
    use std::sync::{Arc, Mutex};
    let path = dir.join(SAMPLES_FILE);
    let mut file = File::open(&path).map_err(io_err(&path))?;
    let (work_tx, work_rx) = sync_channel::<Job>(IN_FLIGHT);
    // the parsers alone hold the work queue: when they stop, the reader's next send fails
    let work_rx: Arc<Mutex<Receiver<Job>>> = Arc::new(Mutex::new(work_rx));
    let (done_tx, done_rx) = sync_channel::<(usize, Vec<Parsed<T>>)>(IN_FLIGHT);
    std::thread::scope(|sc| {
        let reader = sc.spawn(move || -> Result<(), RunDirError> {
            let mut carry = Vec::new();
            let mut line = 1u64;
            for seq in 0.. {
                let mut chunk = Vec::new();
                if !next_chunk(&mut file, &mut chunk, &mut carry).map_err(io_err(&path))? {
                    return Ok(());
                }
                let lines = chunk.iter().filter(|&&c| c == b'\n').count() as u64;
                if work_tx.send((seq, chunk, line)).is_err() {
                    return Ok(()); // the caller stopped
                }
                line += lines;
            }
            Ok(())
        });
        for _ in 0..2 {
            let (rx, tx) = (Arc::clone(&work_rx), done_tx.clone());
            sc.spawn(move || loop {
                let job = rx.lock().map(|r| r.recv());
                let Ok(Ok((seq, chunk, first))) = job else {
                    return;
                };
                let mut out = Vec::with_capacity(chunk.len() / 64);
                let start = if seq == 0 {
                    match header_end(&chunk) {
                        Ok(k) => k,
                        Err(e) => {
                            out.push(Err(e));
                            let _ = tx.send((seq, out));
                            return;
                        }
                    }
                } else {
                    0
                };
                let first = if seq == 0 { first + 1 } else { first };
                parse_chunk(&chunk[start..], first, parse, &mut out);
                if tx.send((seq, out)).is_err() {
                    return;
                }
            });
        }
        drop((done_tx, work_rx));
        let result = deliver(done_rx, &mut f);
        // a refusal drops the receiver: the reader and parsers stop at their next send
        let read = reader.join().expect("row reader");
        match result {
            Err(e) => Ok(Err(e)),
            Ok(()) => read.map(Ok),
        }
    })
}

/// Hand the parsed chunks to `f` in their order, marking the file's last row.
fn deliver<T, E>(
    rx: std::sync::mpsc::Receiver<(usize, Vec<Parsed<T>>)>,
    f: &mut impl FnMut(Parsed<T>, bool) -> Result<(), E>,
) -> Result<(), E> {
    let mut pending = std::collections::BTreeMap::new();
    let mut next = 0usize;
    // a chunk is handed on once the one after it has arrived (or none will): only then is
    // its last row known to be the file's last or not
    let mut held: Option<Vec<Parsed<T>>> = None;
    let mut hand = |rows: Vec<Parsed<T>>, last: bool| -> Result<(), E> {
        let n = rows.len();
        for (k, row) in rows.into_iter().enumerate() {
            f(row, last && k + 1 == n)?;
        }
        Ok(())
    };
    for (seq, rows) in rx.iter() {
        pending.insert(seq, rows);
        while let Some(rows) = pending.remove(&next) {
            next += 1;
            if let Some(prev) = held.replace(rows) {
                hand(prev, false)?;
            }
        }
    }
    if let Some(last) = held {
        hand(last, true)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fmt::Write as _;

    /// A samples file of `n` rows whose hall code counts the row, over several chunks.
    fn file(n: usize, bad_at: Option<usize>, torn: bool) -> tempfile::TempDir {
        let dir = tempfile::tempdir().unwrap();
        let mut text = format!("{SAMPLES_HEADER}\n");
        for i in 0..n {
            let hall = if Some(i) == bad_at {
                "x".to_string()
            } else {
                (i % 30000).to_string()
            };
            writeln!(
                text,
                "{i},{:.3},{hall},16000,01901880,0.0,0,0,,25.000,25.0000,25.000,200.0000,",
                i as f64 * 0.1
            )
            .unwrap();
        }
        if torn {
            text.truncate(text.len() - 4);
        }
        std::fs::write(dir.path().join(SAMPLES_FILE), text).unwrap();
        dir
    }

    fn codes(line: &[u8]) -> Result<i16, String> {
        super::super::CodesRow::parse_line(line).map(|r| r.hall_code)
    }

    #[test]
    fn rows_arrive_in_order_with_their_lines_across_chunks() {
        let n = 250_000; // about 20 MB: several chunks for the parsers
        let dir = file(n, None, false);
        let mut seen = 0usize;
        let mut last_flag = 0;
        for_each_row(dir.path(), &codes, |row, last| -> Result<(), ()> {
            let (line, hall) = row.unwrap();
            assert_eq!(line, seen as u64 + 2);
            assert_eq!(hall as usize, seen % 30000);
            seen += 1;
            last_flag += usize::from(last);
            Ok(())
        })
        .unwrap()
        .unwrap();
        assert_eq!((seen, last_flag), (n, 1));
    }

    #[test]
    fn a_refused_row_stops_every_thread() {
        let dir = file(250_000, Some(1000), false);
        let r = for_each_row(dir.path(), &codes, |row, _| row.map(|_| ()));
        let e = r.unwrap().unwrap_err();
        assert_eq!(e.line, 1002);
        assert!(e.reason.contains("`hall_code`: `x`"), "{}", e.reason);
    }

    #[test]
    fn the_torn_last_row_is_marked_last() {
        let dir = file(1000, None, true);
        let mut torn = None;
        for_each_row(dir.path(), &codes, |row, last| -> Result<(), ()> {
            if let Err(e) = row {
                torn = Some((e.line, last));
            }
            Ok(())
        })
        .unwrap()
        .unwrap();
        assert_eq!(torn, Some((1001, true)));
    }
}
