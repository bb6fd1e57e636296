//! Live progress of a record on the terminal, with indicatif.

use std::time::Duration;

use indicatif::{ProgressBar, ProgressStyle};
use remanent::event::{words, Notice};
use remanent::jobs::record::{LiveStatus, Progress};
use remanent::units::DisplayUnits;

pub struct Bar {
    bar: ProgressBar,
    units: DisplayUnits,
}

impl Bar {
    pub fn new(nominal_s: f64, units: &DisplayUnits) -> Bar {
        let bar = ProgressBar::new(nominal_s.max(1.0) as u64);
        bar.set_style(
            ProgressStyle::with_template("{spinner} [{bar:28}] {msg}")
                .expect("valid template")
                .progress_chars("=> "),
        );
        bar.enable_steady_tick(Duration::from_millis(200));
        Bar { bar, units: *units }
    }

    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}

fn fmt_opt(v: Option<f64>, unit: &str, prec: usize) -> String {
    v.map(|x| format!("{x:.prec$} {unit}"))
        .unwrap_or_else(|| format!("— {unit}"))
}

impl Progress for Bar {
    fn update(&mut self, s: &LiveStatus) {
        let u = &self.units;
        let deg = u.temp_symbol();
        self.bar.set_position(s.elapsed_s as u64);
        let fault = s
            .fault
            .map(|f| format!("  FAULT: {}", remanent::link::words::describe_fault(f)))
            .unwrap_or_default();
        self.bar.set_message(format!(
            "device time {:>5.0} s, ~{:>5.0} s left | {} | {} | heater {:>3.0} % | {} | {} samples, {} missing, {} bad frames{fault}",
            s.elapsed_s,
            s.remaining_s,
            fmt_opt(s.temp_c.map(|t| u.temp(t)), deg, 1),
            fmt_opt(
                s.flux_mt.map(|b| u.flux(b)),
                u.flux_symbol(),
                u.flux_decimals(2)
            ),
            s.duty_pct,
            fmt_opt(
                s.ramp_c_per_min.map(|r| u.temp_span(r)),
                &format!("{deg}/min"),
                1
            ),
            s.samples,
            s.gap_samples,
            s.bad_frames,
        ));
    }

    fn notice(&mut self, n: &Notice) {
        self.bar.println(words::notice(n).render(&self.units));
    }
}
