//! Command-line front end: one module per subcommand, clap derive, anyhow at the edge.

use clap::{Parser, Subcommand};
use remanent::units::DisplayUnits;

mod analyze;
mod calibrate;
mod calibrate_fixture;
mod clear_fault;
mod console;
mod demo;
mod history;
mod lot;
mod magnets;
mod options;
mod ports;
mod profiles;
mod progress;
mod record;
mod reference;
mod replay;
mod report;
mod sampling_plan;
mod self_test;
mod specs;
mod survey;
mod verify;
mod virtual_rig;

/// Remanent: temperature behaviour of permanent magnets on a heated bench fixture.
#[derive(Parser)]
#[command(name = "remanent", version, about)]
struct Cli {
    #[command(subcommand)]
    command: Cmd,
    #[command(flatten)]
    units: options::UnitOpts,
}

#[derive(Subcommand)]
enum Cmd {
    /// Run the whole job on the built-in virtual rig: record, analyse, plot, report.
    Demo(demo::Args),
    /// The bench console: a lot inspected part by part from a browser page, live.
    Console(console::Args),
    /// Record a heat cycle from a bench (or a virtual rig) into a new run directory.
    Record(record::Args),
    /// Serve a virtual rig on a pseudo-terminal for any program to open.
    VirtualRig(virtual_rig::Args),
    /// List serial ports.
    Ports,
    /// List the built-in demo magnets.
    Magnets,
    /// List the built-in heating profiles.
    Profiles,
    /// List the grade spec table.
    Specs(specs::Args),
    /// Show the device's latched fault and clear it when it is safe to.
    ClearFault(clear_fault::Args),
    /// Analyse a run directory or a CSV log: α, irreversible loss, verdict.
    Analyze(analyze::Args),
    /// Write plots and an HTML and Markdown report for a run.
    Report(report::Args),
    /// Check a certificate's fingerprint: does the record still match what was certified?
    Verify(verify::Args),
    /// Rebuild a run directory from its raw byte stream (optionally with a new calibration).
    Replay(replay::Args),
    /// Compare the runs of a shipment: table, spread, outliers, pass and fail counts.
    Lot(lot::Args),
    /// Design a single sampling plan (n, c) for lot acceptance.
    SamplingPlan(sampling_plan::Args),
    /// Read many magnets at room temperature and rank them to find the damaged ones.
    Survey(survey::Args),
    /// Check a bench: sensors, heating, and that a fault drives the heater off.
    SelfTest(self_test::Args),
    /// Calibrate a rig step by step (probe zero, sensitivity, coefficients, thermocouple, gap).
    Calibrate(calibrate::Args),
    /// Read a reference magnet of known Br to refer later runs' Br to (--reference).
    Reference(reference::Args),
    /// The test history: import runs, find them, a lot's summary, a supplier's trend, export.
    History(history::Args),
}

pub fn main() -> std::process::ExitCode {
    let cli = Cli::parse();
    let result = cli.units.resolve().and_then(|u| dispatch(cli.command, &u));
    match result {
        Ok(code) => code,
        Err(e) => {
            eprintln!("error: {e:#}");
            std::process::ExitCode::from(2)
        }
    }
}

/// Each subcommand, with the display units for what it shows.
fn dispatch(command: Cmd, u: &DisplayUnits) -> anyhow::Result<std::process::ExitCode> {
    match command {
        Cmd::Demo(a) => demo::run(a, u),
        Cmd::Record(a) => record::run(a, u),
        Cmd::Console(a) => console::run(a, u),
        Cmd::VirtualRig(a) => virtual_rig::run(a),
        Cmd::Ports => ports::run(),
        Cmd::Magnets => magnets::run(u),
        Cmd::Profiles => profiles::run(u),
        Cmd::Specs(a) => specs::run(a, u),
        Cmd::ClearFault(a) => clear_fault::run(a),
        Cmd::Analyze(a) => analyze::run(a, u),
        Cmd::Report(a) => report::run(a, u),
        Cmd::Verify(a) => verify::run(a),
        Cmd::Replay(a) => replay::run(a),
        Cmd::Lot(a) => lot::run(a, u),
        Cmd::SamplingPlan(a) => sampling_plan::run(a),
        Cmd::Calibrate(a) => calibrate::run(a, u),
        Cmd::Reference(a) => reference::run(a, u),
        Cmd::Survey(a) => survey::run(a, u),
        Cmd::SelfTest(a) => self_test::run(a, u),
        Cmd::History(a) => history::run(a, u),
    }
}

#[cfg(test)]
mod tests {
    use clap::CommandFactory;

    /// Every option of every command, however deep, with the command's path, that has no help.
    fn undocumented(c: &clap::Command, path: &str, out: &mut Vec<String>) {
        for a in c.get_arguments() {
            let id = a.get_id().as_str();
            if id != "help" && id != "version" && a.get_help().is_none() {
                out.push(format!("{path} --{}", a.get_long().unwrap_or(id)));
            }
        }
        for s in c.get_subcommands() {
            undocumented(s, &format!("{path} {}", s.get_name()), out);
        }
    }

    #[test]
    fn every_option_of_every_command_has_help_text() {
        // `calibrate --help` once showed --radius-u-mm, --current-u-a and --pressure-u-kpa bare
        let mut missing = Vec::new();
        undocumented(&super::Cli::command(), "remanent", &mut missing);
        assert!(missing.is_empty(), "no help text: {missing:#?}");
    }
}
