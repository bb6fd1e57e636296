//! `remanent calibrate`: the guided calibration steps on a bench or the virtual rig.

use remanent::units::{temp_q, DisplayUnits};
use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Instant;

use remanent::jobs::calibrate::procedure::reading::Raw;
use remanent::jobs::calibrate::procedure::setup::Person;
use remanent::jobs::calibrate::procedure::steps::{Coil, Pressure, Reference};
use remanent::jobs::calibrate::procedure::{Options, Progress, Step, VirtualSetup};
use remanent::jobs::calibrate::{self, Files};
use remanent::virtual_rig::{SimulatedPort, VirtualRigOptions};

use super::options::{parse_finite, ForceOpts};

#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq)]
pub(super) enum Which {
    /// The probe's zero in a zero-field can.
    Zero,
    /// The zero's drift: the probe warmed alone in the can.
    OffsetDrift,
    /// The sensitivity at the centre of a Helmholtz pair.
    Sensitivity,
    /// The sensitivity's own coefficient: the probe warmed alone in the coil.
    ProbeTc,
    /// The thermocouple at the ice point.
    IcePoint,
    /// The thermocouple in boiling water.
    BoilingPoint,
    /// The gap, from a reference magnet in the fixture.
    Gap,
    /// Every step above, in that order.
    All,
    /// The fixture itself: a duty step and a cool-down, unattended (heats the block about
    /// 20 K under the device's model-free limits); what the firmware judges heating against.
    Fixture,
}

#[derive(clap::Args)]
pub struct Args {
    /// Which step.
    #[arg(value_enum)]
    pub(super) step: Which,
    /// Serial port of the bench.
    #[arg(long, required_unless_present = "virtual_rig")]
    pub(super) port: Option<String>,
    /// Play the steps on the built-in virtual rig instead of a bench.
    #[arg(long = "virtual")]
    pub(super) virtual_rig: bool,
    /// Start from this calibration (default: the reference design's nominal constants).
    #[arg(long)]
    pub(super) from: Option<PathBuf>,
    /// Write the calibration here (updated after every step).
    #[arg(long)]
    pub(super) out: PathBuf,
    #[command(flatten)]
    pub(super) force: ForceOpts,
    /// Coil pair: turns in each coil.
    #[arg(long, default_value_t = 130.0)]
    turns: f64,
    /// Coil pair: radius (and spacing), mm, and its standard uncertainty.
    #[arg(long, default_value_t = 50.0)]
    radius_mm: f64,
    /// Standard uncertainty of the coil pair's radius, mm.
    #[arg(long, default_value_t = 0.05)]
    radius_u_mm: f64,
    /// Coil current as measured, A, and its standard uncertainty.
    #[arg(long, default_value_t = 8.0)]
    current_a: f64,
    /// Standard uncertainty of the measured coil current, A.
    #[arg(long, default_value_t = 0.008)]
    current_u_a: f64,
    /// Barometric pressure for the boiling point, kPa (else from --altitude-m).
    #[arg(long, value_parser = parse_finite)]
    pressure_kpa: Option<f64>,
    /// Standard uncertainty of the barometric pressure, kPa.
    #[arg(long, default_value_t = 0.1)]
    pressure_u_kpa: f64,
    /// Altitude of the bench, m, when no barometer reading is given.
    #[arg(long, default_value_t = 0.0, allow_negative_numbers = true)]
    altitude_m: f64,
    /// The reference magnet (demo part id or a magnet file with a [reference] Br).
    #[arg(long)]
    reference: Option<String>,
    /// Gap step: the standoff's length as measured, mm (default: keep the calibration's).
    #[arg(long)]
    standoff_mm: Option<f64>,
    /// Gap step: the standoff material's expansion coefficient, 1/K.
    #[arg(long, requires = "standoff_mm")]
    standoff_cte_per_k: Option<f64>,
    /// Fixture step: the duty step, % (the device's cap applies).
    #[arg(long, default_value_t = 20)]
    pub(super) duty_pct: u8,
    /// Fixture step: heat until the block has risen this much, K.
    #[arg(long, default_value_t = 20.0, value_parser = parse_finite)]
    pub(super) rise_k: f64,
    /// Fixture step: the hot pass's top, °C — with the first step's identification in force
    /// the block is heated toward it and left to cool, which shows how the heater's effect
    /// falls as it warms (use your hottest profile's peak).
    #[arg(long, default_value_t = remanent::jobs::calibrate::procedure::fixture::HOT_C, value_parser = parse_finite, conflicts_with = "no_hot_pass")]
    pub(super) hot_c: f64,
    /// Fixture step: no hot pass (the fall with temperature is then taken as none).
    #[arg(long)]
    pub(super) no_hot_pass: bool,
    /// Fixture step on the virtual rig: a fixture file of your own (as `virtual-rig --fixture`).
    #[arg(long, requires = "virtual_rig")]
    pub(super) fixture: Option<PathBuf>,
}

struct Live {
    last: Instant,
    units: DisplayUnits,
}

impl Progress for Live {
    fn reading(&mut self, r: &Raw) {
        if self.last.elapsed().as_secs_f64() >= 1.0 {
            self.last = Instant::now();
            let u = &self.units;
            let tc = r.tc_c.map_or("fault".into(), |t| temp_q(t, 2).render(u));
            eprintln!(
                "  live: Hall {:.3} mV, probe {}, thermocouple {tc}",
                r.hall_mv,
                temp_q(r.probe_c, 2).render(u)
            );
        }
    }
    fn notice(&mut self, n: &remanent::event::Notice) {
        eprintln!("{}", remanent::event::words::notice(n).render(&self.units));
    }
}

fn reference(a: &Args) -> anyhow::Result<Reference> {
    let id = a.reference.as_deref().ok_or_else(|| {
        anyhow::anyhow!("the gap step needs --reference: a magnet file with a [reference] Br")
    })?;
    let m = remanent::magnets::resolve(id)?;
    let (br, u) = match (&m.info.reference, m.model) {
        (Some(r), _) => (r.br_t, r.br_u_t),
        // a demo part on the virtual rig: its model's Br, known to 0.3 %
        (None, Some(model)) => (model.br_20_t, model.br_20_t * 0.003),
        (None, None) => anyhow::bail!("{id} has no [reference] section with its certified Br"),
    };
    let alpha = m.model.map_or(-0.11, |x| x.alpha_pct_per_c);
    let nominal = remanent_rig_model::RigParams::REFERENCE.hall.standoff;
    Ok(Reference {
        br_t: (br, u),
        shape: m.info.shape,
        alpha_pct_per_c: alpha,
        standoff: a.standoff_mm.map(|l| {
            (
                l,
                a.standoff_cte_per_k.unwrap_or(nominal.standoff_cte_per_k),
            )
        }),
    })
}

fn steps(a: &Args) -> anyhow::Result<Vec<Step>> {
    let coil = Coil {
        turns: a.turns,
        radius_m: (a.radius_mm / 1000.0, a.radius_u_mm / 1000.0),
        current_a: (a.current_a, a.current_u_a),
    };
    let pressure = match a.pressure_kpa {
        Some(p) => Pressure::Measured(p, a.pressure_u_kpa),
        None => Pressure::Altitude(a.altitude_m),
    };
    let one = |w: Which| -> anyhow::Result<Step> {
        Ok(match w {
            Which::Zero => Step::Zero,
            Which::OffsetDrift => Step::OffsetDrift,
            Which::Sensitivity => Step::Sensitivity(coil),
            Which::ProbeTc => Step::ProbeTc(coil),
            Which::IcePoint => Step::IcePoint,
            Which::BoilingPoint => Step::BoilingPoint(pressure),
            Which::Gap => Step::Gap(reference(a)?),
            Which::All | Which::Fixture => unreachable!("expanded below, or identified apart"),
        })
    };
    match a.step {
        Which::All => [
            Which::Zero,
            Which::OffsetDrift,
            Which::Sensitivity,
            Which::ProbeTc,
            Which::IcePoint,
            Which::BoilingPoint,
            Which::Gap,
        ]
        .into_iter()
        .map(one)
        .collect(),
        w => Ok(vec![one(w)?]),
    }
}

/// Calibrate; the constants found are printed as the calibration file holds them (SI-based),
/// the live readings in the display units `u`.
pub fn run(a: Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    if a.step == Which::Fixture {
        return super::calibrate_fixture::run(&a, u);
    }
    let steps = steps(&a)?;
    let files = Files {
        from: a.from.clone(),
        out: a.out.clone(),
        force: a.force.force,
    };
    let mut live = Live {
        last: Instant::now(),
        units: *u,
    };
    let opts = Options::default();
    let (cal, found) = if a.virtual_rig {
        let part = remanent_rig_model::catalogue::PARTS[0].magnet;
        let port = SimulatedPort::new(VirtualRigOptions::new(part));
        let mut setup = VirtualSetup::exact(port.bench().scene_control());
        calibrate::run(port, &steps, &files, &mut setup, &opts, &mut live)?
    } else {
        let port = remanent::link::port::open(a.port.as_deref().unwrap_or_default())?;
        let mut setup = Person {
            confirm: super::options::enter_presses(),
        };
        calibrate::run(port, &steps, &files, &mut setup, &opts, &mut live)?
    };
    let warned = found.iter().any(|f| f.warning.is_some());
    println!(
        "wrote {} ({} step{})",
        a.out.display(),
        found.len(),
        if found.len() == 1 { "" } else { "s" }
    );
    for (what, when) in cal.dates.required() {
        if when.is_none() {
            println!("  still to do before recording: {what}");
        }
    }
    Ok(if warned {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    })
}
