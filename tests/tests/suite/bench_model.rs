//! An independent bench for the analysis tests: its own thermal model (a heated block read by a
//! thermocouple with its own small lag, the magnet following the block through a contact
//! resistance, integrated by fourth-order Runge–Kutta on 0.05 s steps), its own magnet
//! (reversible B(T) with a quadratic term, irreversible loss that grows toward an equilibrium
//! set by the highest temperature reached, with a time constant), its own noise (xorshift64*
//! with Box–Muller normals) and its own logger resolution. Nothing here uses the rig model.

/// A magnet as the test knows it.
#[derive(Debug, Clone, Copy)]
pub struct TrueMagnet {
    /// B at 20 °C, mT.
    pub b20_mt: f64,
    /// Linear and quadratic reversible terms, %/°C and %/°C².
    pub a1_pct: f64,
    pub a2_pct: f64,
    /// Irreversible loss: none below `onset_c`; the equilibrium loss rises by `loss_per_k_pct`
    /// per K above it, approached with `loss_tau_s`.
    pub onset_c: f64,
    pub loss_per_k_pct: f64,
    pub loss_tau_s: f64,
}

impl TrueMagnet {
    /// The mean α between 20 °C and `top_c`, %/°C (the two-point form).
    pub fn alpha_pct(&self, top_c: f64) -> f64 {
        self.a1_pct + self.a2_pct * (top_c - 20.0)
    }

    fn reversible_mt(&self, t: f64) -> f64 {
        let x = t - 20.0;
        self.b20_mt * (1.0 + self.a1_pct / 100.0 * x + self.a2_pct / 100.0 * x * x)
    }
}

/// A sintered NdFeB-like part with no loss below 200 °C.
pub const NDFEB: TrueMagnet = TrueMagnet {
    b20_mt: 215.0,
    a1_pct: -0.105,
    a2_pct: -0.00012,
    onset_c: 500.0,
    loss_per_k_pct: 0.0,
    loss_tau_s: 300.0,
};

/// A program step of the block: go to `target_c` at `rate_k_per_min` (0: as fast as the
/// block cools or heats on its own, time constant `BLOCK_FREE_TAU_S`) and hold `hold_s`.
#[derive(Debug, Clone, Copy)]
pub struct Step {
    pub target_c: f64,
    pub rate_k_per_min: f64,
    pub hold_s: f64,
}

/// How the bench behaves.
#[derive(Debug, Clone)]
pub struct Bench {
    pub ambient_c: f64,
    /// Magnet behind the block, s.
    pub magnet_tau_s: f64,
    /// Thermocouple behind the block, s.
    pub tc_tau_s: f64,
    /// Logger sample interval, s.
    pub dt_s: f64,
    /// Noise (standard deviations) and the logger's resolution.
    pub temp_noise_k: f64,
    pub temp_step_k: f64,
    pub flux_noise_mt: f64,
    pub flux_step_mt: f64,
    /// The thermocouple's gain error, % of its reading in °C (Type K's tolerance is a
    /// percentage of the reading, IEC 60584-1; 0: a perfect thermocouple).
    pub tc_gain_pct: f64,
    /// The probe's zero drifting linearly in time (a sensor or amplifier warming up), mT/h.
    pub zero_drift_mt_per_h: f64,
    pub seed: u64,
}

impl Default for Bench {
    fn default() -> Self {
        Bench {
            ambient_c: 23.0,
            magnet_tau_s: 35.0,
            tc_tau_s: 2.0,
            dt_s: 0.5,
            temp_noise_k: 0.04,
            temp_step_k: 0.1,
            flux_noise_mt: 0.015,
            flux_step_mt: 0.01,
            tc_gain_pct: 0.0,
            zero_drift_mt_per_h: 0.0,
            seed: 0x5eed_1234,
        }
    }
}

/// Free heating or cooling of the block toward a target, s.
pub const BLOCK_FREE_TAU_S: f64 = 400.0;

/// One logged row.
#[derive(Debug, Clone, Copy)]
pub struct Row {
    pub time_s: f64,
    pub temp_c: f64,
    pub flux_mt: f64,
}

/// What the record truly holds.
#[derive(Debug, Clone)]
pub struct Truth {
    /// Loss fraction at the end of each program step, %.
    pub loss_after_step_pct: Vec<f64>,
    /// Highest magnet temperature, °C.
    pub peak_magnet_c: f64,
}

struct Rng(u64);

impl Rng {
    fn next(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let v = self.0.wrapping_mul(0x2545_f491_4f6c_dd1d);
        ((v >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    fn normal(&mut self) -> f64 {
        let (u, v) = (self.next(), self.next());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

/// Run the program on the bench with the magnet; the logged rows and the truth.
pub fn run(bench: &Bench, magnet: &TrueMagnet, program: &[Step]) -> (Vec<Row>, Truth) {
    const H: f64 = 0.05;
    let mut rng = Rng(bench.seed | 1);
    // state: block, thermocouple, magnet temperatures and the loss fraction
    let mut st = [bench.ambient_c; 4];
    st[3] = 0.0;
    let mut t = 0.0;
    let mut next_log = 0.0;
    let mut rows = Vec::new();
    let mut truth = Truth {
        loss_after_step_pct: Vec::new(),
        peak_magnet_c: bench.ambient_c,
    };
    for step in program {
        let start_c = st[0];
        let ramp_s = if step.rate_k_per_min > 0.0 {
            (step.target_c - start_c).abs() / step.rate_k_per_min * 60.0
        } else {
            0.0
        };
        let step_end = t + ramp_s + step.hold_s;
        let t0 = t;
        // the block's driven temperature: a linear ramp then the target; with rate 0 it relaxes
        let drive = |time: f64, block: f64| -> f64 {
            if step.rate_k_per_min > 0.0 {
                let f = ((time - t0) / ramp_s.max(1e-9)).min(1.0);
                let set = start_c + (step.target_c - start_c) * f;
                // the controller holds the block 0.2 s behind its setpoint
                (set - block) / 0.2_f64.max(H)
            } else {
                (step.target_c - block) / BLOCK_FREE_TAU_S
            }
        };
        while t < step_end {
            let f = |time: f64, s: [f64; 4]| -> [f64; 4] {
                let eq = (magnet.loss_per_k_pct / 100.0 * (s[2] - magnet.onset_c)).max(0.0);
                [
                    drive(time, s[0]),
                    (s[0] - s[1]) / bench.tc_tau_s,
                    (s[0] - s[2]) / bench.magnet_tau_s,
                    ((eq - s[3]) / magnet.loss_tau_s).max(0.0),
                ]
            };
            let add = |a: [f64; 4], k: [f64; 4], h: f64| std::array::from_fn(|i| a[i] + k[i] * h);
            let k1 = f(t, st);
            let k2 = f(t + H / 2.0, add(st, k1, H / 2.0));
            let k3 = f(t + H / 2.0, add(st, k2, H / 2.0));
            let k4 = f(t + H, add(st, k3, H));
            st = std::array::from_fn(|i| {
                st[i] + H / 6.0 * (k1[i] + 2.0 * k2[i] + 2.0 * k3[i] + k4[i])
            });
            t += H;
            truth.peak_magnet_c = truth.peak_magnet_c.max(st[2]);
            if t >= next_log - 1e-9 {
                let q = |v: f64, step: f64| (v / step).round() * step;
                let read_c = st[1] * (1.0 + bench.tc_gain_pct / 100.0);
                let temp = q(
                    read_c + bench.temp_noise_k * rng.normal(),
                    bench.temp_step_k,
                );
                let b = magnet.reversible_mt(st[2]) * (1.0 - st[3])
                    + bench.zero_drift_mt_per_h * next_log / 3600.0;
                let flux = q(b + bench.flux_noise_mt * rng.normal(), bench.flux_step_mt);
                rows.push(Row {
                    time_s: next_log,
                    temp_c: temp,
                    flux_mt: flux,
                });
                next_log += bench.dt_s;
            }
        }
        truth.loss_after_step_pct.push(st[3] * 100.0);
    }
    (rows, truth)
}

/// The rows as our CSV (`time_s,temp_C,flux_mT`).
pub fn csv(rows: &[Row]) -> String {
    let mut out = String::from("time_s,temp_C,flux_mT\n");
    for r in rows {
        out.push_str(&format!(
            "{:.2},{:.2},{:.3}\n",
            r.time_s, r.temp_c, r.flux_mt
        ));
    }
    out
}

/// A program from (target °C, rate K/min, hold s) triples (rate 0: the block relaxes freely).
pub fn program(steps: &[(f64, f64, f64)]) -> Vec<Step> {
    steps
        .iter()
        .map(|&(target_c, rate_k_per_min, hold_s)| Step {
            target_c,
            rate_k_per_min,
            hold_s,
        })
        .collect()
}

/// A program: settle at ambient, ramp to `top_c`, hold, ramp back to `end_c`, hold.
pub fn cycle(ambient_c: f64, top_c: f64, end_c: f64, rate: f64) -> Vec<Step> {
    program(&[
        (ambient_c, 0.0, 400.0),
        (top_c, rate, 300.0),
        (end_c, rate, 900.0),
    ])
}
