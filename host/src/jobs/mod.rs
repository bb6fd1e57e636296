//! The workflows a user runs, as library functions the CLI only calls: analyse an input (a
//! run directory or a CSV log), write a run's report, analyse a lot, calibrate a rig, and
//! choose the calibration a recording converts with, keep the test history, and try a profile on the virtual rig against its truth.

pub mod analyze_input;
pub mod calibrate;
pub mod demo;
pub mod history;
pub mod lot;
pub mod reference;
pub mod report;
pub mod trial;
pub mod verify;

pub use analyze_input::{load_and_analyze, Analyzed, InputRequest, JobError, Judging};
