//! Every workflow a user runs, in one home, as library functions the CLI and the bench console
//! only call: record a heat cycle (`record/`), survey a set at room temperature, self-test a
//! bench, clear a latched fault, run a fault drill, replay a raw stream, read the fixture's
//! reference, calibrate a rig, analyse an input (a run directory or a CSV log), write a run's
//! report, analyse a lot, keep the test history, verify a certificate, run the demo, and try a
//! profile on the virtual rig against its truth.

pub mod analyze_input;
pub mod calibrate;
pub mod clear_fault;
pub mod demo;
pub mod drill;
pub mod history;
pub mod lot;
pub mod record;
pub mod reference;
pub mod replay;
pub mod report;
pub mod selftest;
pub mod survey;
pub mod trial;
pub mod verify;

pub use analyze_input::{load_and_analyze, Analyzed, InputRequest, JobError, Judging};
