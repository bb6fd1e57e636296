//! `remanent virtual-rig`: serve the simulated bench on a pseudo-terminal until Ctrl-C.

use std::process::ExitCode;
use std::sync::atomic::Ordering;
use std::time::Duration;

use remanent::magnets;
use remanent::virtual_rig::{VirtualRig, VirtualRigOptions};
use remanent_rig_model::RigFaults;

#[derive(clap::Args)]
pub struct Args {
    /// Magnet in the fixture: a demo part id or a magnet TOML file with a [model] section.
    #[arg(long, default_value = "RM-N42SH-D10x5")]
    magnet: String,
    /// Simulated seconds per wall-clock second.
    #[arg(long, default_value_t = 60.0, value_parser = super::options::parse_speed)]
    speed: f64,
    /// Noise seed.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// The thermocouple goes open after this many simulated seconds.
    #[arg(long)]
    thermocouple_open_at_s: Option<f64>,
    /// The heater is detached after this many simulated seconds.
    #[arg(long)]
    heater_detached_at_s: Option<f64>,
    /// The heater's switch fails on (full power whatever the firmware says) at this time.
    #[arg(long)]
    switch_stuck_on_at_s: Option<f64>,
    /// The thermocouple slips off the plate at this time and reads warming air.
    #[arg(long)]
    thermocouple_detached_at_s: Option<f64>,
    /// The thermocouple converter loses power at this time (its words read all zeros).
    #[arg(long)]
    converter_absent_at_s: Option<f64>,
    /// The heater switch is a zero-crossing relay on 50 Hz mains (the firmware then uses
    /// time-proportioning) instead of a DC MOSFET.
    #[arg(long)]
    zero_cross_relay: bool,
    /// Probability that a byte to the host has a bit flipped.
    #[arg(long, default_value_t = 0.0)]
    link_flip_probability: f64,
    /// Survey mode: this many copies of the magnet are placed one after another (no heating).
    #[arg(long)]
    survey: Option<usize>,
    /// In survey mode, these magnets (1-based, comma-separated) have lost 5 % of their flux.
    #[arg(long, value_delimiter = ',')]
    survey_damaged: Vec<usize>,
    /// Your own fixture (TOML: heater_w, heat_capacity_j_per_k, loss_w_per_k,
    /// thermocouple_lag_s, mains_hz, mains_deviation_pct; examples in hardware-notes/fixtures/):
    /// the virtual board then starts unidentified, as a new bench does.
    #[arg(long)]
    fixture: Option<std::path::PathBuf>,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let m = magnets::resolve(&a.magnet)?;
    let model = m.model.ok_or_else(|| {
        anyhow::anyhow!(
            "magnet {} has no [model] section for the virtual rig",
            m.info.id
        )
    })?;
    let mut opts = VirtualRigOptions::new(model);
    opts.speed = a.speed;
    opts.seed = a.seed;
    opts.faults = RigFaults {
        thermocouple_open_at_s: a.thermocouple_open_at_s,
        heater_detached_at_s: a.heater_detached_at_s,
        switch_stuck_on_at_s: a.switch_stuck_on_at_s,
        thermocouple_detached_at_s: a.thermocouple_detached_at_s,
        converter_absent_at_s: a.converter_absent_at_s,
    };
    if a.zero_cross_relay {
        opts.params.switch = remanent_rig_model::HeaterSwitch::ZeroCross { half_cycle_s: 0.01 };
    }
    if let Some(path) = &a.fixture {
        remanent::virtual_rig::FixtureFile::load(path)?.apply(&mut opts);
    }
    opts.link_flip_probability = a.link_flip_probability;
    if let Some(n) = a.survey {
        opts.survey = remanent::virtual_rig::survey_set(model, n, &a.survey_damaged, 0.05, a.seed);
    }
    let rig = VirtualRig::start(opts)?;
    println!("{}", rig.path());
    eprintln!(
        "virtual rig with {} at {}× speed; open the port above (Ctrl-C to stop)",
        m.info.id, a.speed
    );
    let stop = super::record::stop_flag()?;
    while !stop.load(Ordering::Relaxed) {
        std::thread::sleep(Duration::from_millis(100));
    }
    rig.stop()?;
    Ok(ExitCode::SUCCESS)
}
