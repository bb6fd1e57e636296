//! `remanent calibrate fixture`: identify the fixture on a bench or the virtual rig and keep it
//! in the calibration file.

use std::process::ExitCode;
use std::time::Instant;

use remanent::jobs::calibrate::procedure::fixture::{Phase, Plan, Progress};
use remanent::jobs::calibrate::{self, Files};
use remanent::units::{temp_q, DisplayUnits};
use remanent::virtual_rig::{FixtureFile, SimulatedPort, VirtualRigOptions};

use super::calibrate::Args;

struct Live {
    last: Instant,
    units: DisplayUnits,
}

impl Progress for Live {
    fn at(&mut self, phase: Phase, time_s: f64, temp_c: f64) {
        if self.last.elapsed().as_secs_f64() >= 1.0 {
            self.last = Instant::now();
            let what = match phase {
                Phase::Baseline => "baseline",
                Phase::Heating => "heating at the duty step",
                Phase::Cooling => "cooling on its own",
            };
            eprintln!(
                "  {what}: {:.0} s, thermocouple {}",
                time_s,
                temp_q(temp_c, 2).render(&self.units)
            );
        }
    }
}

/// Identify, write, and print what was found.
pub fn run(a: &Args, u: &DisplayUnits) -> anyhow::Result<ExitCode> {
    let files = Files {
        from: a.from.clone(),
        out: a.out.clone(),
        force: a.force.force,
    };
    let plan = Plan {
        duty_pct: a.duty_pct,
        rise_k: a.rise_k,
        hot_c: (!a.no_hot_pass).then_some(a.hot_c),
        ..Plan::default()
    };
    let mut live = Live {
        last: Instant::now(),
        units: *u,
    };
    let hot = if a.no_hot_pass {
        String::new()
    } else {
        format!(
            "; then, under that first identification, heating toward {} and 10 min more of cooling",
            temp_q(a.hot_c, 0).render(u)
        )
    };
    eprintln!(
        "identifying the fixture: a {} % duty step until the block has risen {:.0} K, then 10 min of cooling{hot}; the heater comes on — keep clear of the fixture",
        a.duty_pct, a.rise_k
    );
    let (_, f) = if a.virtual_rig {
        let part = remanent_rig_model::catalogue::PARTS[0].magnet;
        let mut opts = VirtualRigOptions::new(part);
        if let Some(path) = &a.fixture {
            FixtureFile::load(path)?.apply(&mut opts);
        }
        calibrate::identify_fixture(SimulatedPort::new(opts), &files, &plan, &mut live)?
    } else {
        let port = remanent::link::port::open(a.port.as_deref().unwrap_or_default())?;
        calibrate::identify_fixture(port, &files, &plan, &mut live)?
    };
    println!("wrote {} (fixture)", a.out.display());
    println!(
        "  heating at full duty: {:.3} ± {:.3} K/s",
        f.rate_k_per_s.0, f.rate_k_per_s.1
    );
    println!(
        "  cooling time constant: {:.0} ± {:.0} s",
        f.cooling_tau_s.0, f.cooling_tau_s.1
    );
    println!("  thermocouple lag: {:.2} ± {:.2} s", f.lag_s.0, f.lag_s.1);
    let (fall, u_fall) = f.rate_fall_per_k;
    if u_fall > 0.0 {
        println!(
            "  heating effect falls {:.1} ± {:.1} % per 100 K as the block warms",
            fall * 1e4,
            u_fall * 1e4
        );
    } else {
        println!(
            "  heating effect's fall with temperature: not measured (no hot pass, or the block could not be heated 30 K past the first step)"
        );
    }
    println!(
        "  from {} readings, residual {:.3} K (standard uncertainties)",
        f.points, f.residual_k
    );
    Ok(ExitCode::SUCCESS)
}
