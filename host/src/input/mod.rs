//! Reading a record into memory, before any analysis: run directories ([`dataset`]: a
//! reading thread and two parsers over `run_dir`'s rows, records over about a million rows
//! averaged in [`blocks`]), other loggers' CSV files ([`csv_log`], its header in
//! [`csv_header`], column names as people write them in [`column_names`], cells in
//! [`csv_cells`]), what a logger's file needed repaired ([`repair`]), thermocouple spikes
//! rejected ([`clean`]); the result is a [`series::Series`], the analysis's input.

pub mod blocks;
pub mod clean;
pub mod column_names;
pub mod csv_cells;
pub mod csv_header;
pub mod csv_log;
pub mod dataset;
pub mod repair;
pub mod series;
