//! Remanent host library: talk to the bench over a serial port (or to the built-in virtual
//! rig), record heat cycles into run directories, convert raw codes with the rig's
//! calibration, fit the reversible temperature coefficient with its uncertainty, measure
//! irreversible loss, judge the magnet, and plot and report it.

pub mod acceptance_plan;
pub mod analysis;
pub mod calibration;
pub mod console;
pub mod conversion;
pub mod event;
pub mod families;
pub mod formats;
pub mod frame_log;
pub mod history;
pub mod input;
pub mod inspection;
pub mod jobs;
pub mod link;
pub mod lot;
pub mod magnets;
pub mod master;
pub mod output;
pub mod plots;
pub mod profiles;
pub mod report;
pub mod rig_time;
pub mod run_dir;
pub mod safe_peak;
pub mod specs;
pub mod survey_rank;
pub mod test_plan;
pub mod timestamps;
pub mod units;
pub mod user_dirs;
pub mod values;
pub mod virtual_rig;
