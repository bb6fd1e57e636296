//! Host tests of the firmware library: drivers against bus mocks, and the safety scenarios
//! run through the real control loop with fake sensors, a fake plant and a fake clock.

mod drivers;
mod flash;
mod identify;
mod latches;
mod link;
mod safety_scenarios;
mod util;
mod zoo;
mod zoo_rig;
mod zoo_runs;
