//! The cross-crate test suite: reference-data checks and end-to-end runs.

mod accuracy;
mod analysis_input;
mod bench_model;
mod calibration_steps;
mod certificate;
mod coverage;
mod display_units;
mod end_to_end;
mod history;
mod identification;
mod imperfect_records;
mod impossible_values;
mod integrity;
mod judged_with;
mod messy_files;
mod operator;
mod outputs;
mod plots_truth;
mod reference_field;
mod reference_lsq;
mod reference_path;
mod reference_type_k;
mod rig_safety;
mod safe_peak;
mod throughput;
mod util;
