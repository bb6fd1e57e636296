//! The run directory of one heat cycle: the raw byte stream exactly as received, the decoded
//! samples as CSV (raw codes and converted values, units in the headers), events, and the
//! metadata. Written as data arrive and flushed at least every second; never overwritten.
//! The writer ([`writer`]) and the reader ([`reader`]) share one row type ([`row`]).

mod codes;
mod meta;
mod reader;
mod row;
mod writer;

pub use codes::{decimal, CodesRow};
pub use meta::*;
pub use reader::{for_each_row, Parsed, RowError};
pub use row::SampleRow;
pub use writer::{RunWriter, FLUSH_INTERVAL};
