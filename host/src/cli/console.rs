//! `remanent console`: the bench console in a browser — a lot inspected part by part, live.

use std::net::SocketAddr;
use std::path::PathBuf;
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;

use anyhow::Context;
use remanent::console::{access, rig::Bench, serve, ConsoleOptions};
use remanent::specs::SpecTable;
use remanent::units::DisplayUnits;
use remanent::virtual_rig::{VirtualRig, VirtualRigOptions};

#[derive(clap::Args)]
pub struct Args {
    /// A rig's serial port (or the path `remanent virtual-rig` printed); repeat for more rigs.
    #[arg(long = "port")]
    ports: Vec<String>,
    /// A virtual rig with this magnet in its fixture, started by the console itself; repeat
    /// for more.
    #[arg(long = "virtual", value_name = "MAGNET")]
    virtual_rigs: Vec<String>,
    /// Simulated seconds per wall-clock second of the virtual rigs.
    #[arg(long, default_value_t = 60.0, value_parser = super::options::parse_speed)]
    virtual_speed: f64,
    /// Listen on this address for a bench network (default: 127.0.0.1 only, a free port);
    /// every request then needs the access token.
    #[arg(long)]
    listen: Option<SocketAddr>,
    /// The access token for --listen (default: a new one, printed once in the address).
    #[arg(long, env = "REMANENT_CONSOLE_TOKEN", hide_env_values = true)]
    token: Option<String>,
    /// Where the parts' run directories go (a folder per lot).
    #[arg(long, default_value = "remanent-runs/console")]
    out: PathBuf,
    #[command(flatten)]
    calibration: super::options::CalibrationOpts,
    #[command(flatten)]
    specs: super::options::SpecOpts,
    #[command(flatten)]
    store: super::options::StoreOpts,
}

pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let mut rigs = Vec::new();
    let mut ports = a.ports.clone();
    for m in &a.virtual_rigs {
        let part = remanent::magnets::resolve(m)?;
        let model = part
            .model
            .with_context(|| format!("magnet {m} has no [model] section for a virtual rig"))?;
        let mut opts = VirtualRigOptions::new(model);
        opts.speed = a.virtual_speed;
        let rig = VirtualRig::start(opts)?;
        ports.push(rig.path().to_string());
        rigs.push(rig);
    }
    if ports.is_empty() {
        anyhow::bail!(
            "no rig: name a bench with --port (or start a virtual one with --virtual MAGNET)"
        );
    }
    let token = match (a.listen, a.token) {
        (Some(_), Some(t)) if t.len() >= 16 => Some(t),
        (Some(_), Some(_)) => anyhow::bail!("the access token must be at least 16 characters"),
        (Some(_), None) => Some(access::new_token().context("making an access token")?),
        (None, _) => None,
    };
    let specs = match &a.specs.specs {
        Some(p) => SpecTable::load(p)?,
        None => SpecTable::builtin(),
    };
    let shutdown = Arc::new(AtomicBool::new(false));
    let s = shutdown.clone();
    ctrlc::set_handler(move || s.store(true, Ordering::Relaxed))
        .context("installing the Ctrl-C handler")?;
    let opts = ConsoleOptions {
        ports,
        listen: a
            .listen
            .unwrap_or_else(|| SocketAddr::from(([127, 0, 0, 1], 0))),
        token,
        bench: Bench {
            out: a.out,
            store: a.store.location(),
            policy: a.calibration.policy(),
            judging: a.specs.judging(),
            specs,
            look: remanent::report::Look {
                units: *u,
                issuer: remanent::units::issuer()?,
                ..Default::default()
            },
        },
        shutdown,
    };
    serve(opts, |url| {
        println!("{url}");
        eprintln!("bench console at the address above; Ctrl-C stops every heater and ends it");
    })?;
    for rig in rigs {
        rig.stop()?;
    }
    Ok(ExitCode::SUCCESS)
}
