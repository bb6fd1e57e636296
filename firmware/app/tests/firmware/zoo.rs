//! A zoo of fixtures that are not the firmware's model: 20–600 W, 50–500 g, a thermocouple
//! lagging 0–5 s, 50 and 60 Hz mains from −10 % to +10 %, heaters 25 % off what their
//! identification says, each driven the way its board drives its switch (a DC switch by PWM,
//! a zero-crossing relay by whole mains half-cycles). The plant here is its own: a block with
//! a loss to ambient, a heater whose power goes with the square of the mains voltage and falls
//! as the block warms (three of them, by 10–15 % per 100 K, one of those unidentified), a
//! thermocouple that follows the block through its own lag and reads in 0.25 °C counts.
//! The firmware is configured with each fixture's *identified* values (what
//! `remanent calibrate fixture` measures), never with the truth.

use remanent_firmware::FirmwareConfig;
use remanent_protocol::HeaterDrive;

/// One fixture of the zoo.
#[derive(Debug, Clone, Copy)]
pub struct Fixture {
    pub name: &'static str,
    /// Heater power at nominal mains, as identified, W.
    pub heater_w: f64,
    /// The heater's true power over the identified one.
    pub heater_factor: f64,
    /// Block heat capacity, J/K, and loss to ambient, W/K.
    pub c_j_per_k: f64,
    pub loss_w_per_k: f64,
    /// The thermocouple's lag behind the block, s.
    pub tc_lag_s: f64,
    /// Mains frequency, Hz (0: a DC switch driven by PWM), and its voltage off nominal.
    pub mains_hz: u32,
    pub mains_dev: f64,
    /// How the heater's power truly falls per kelvin above 20 °C, fraction, and what the
    /// identification said of it.
    pub fall_per_k: f64,
    pub fall_identified_per_k: f64,
}

/// The zoo: the bill of materials' fixture, a cartridge in a small block, a band heater on a
/// large one, and five more across the ranges.
pub const ZOO: [Fixture; 8] = [
    fx(
        "bill of materials: 450 W into 150 J/K",
        450.0,
        1.0,
        150.0,
        1.2,
        1.0,
        50,
        0.0,
    ),
    fx(
        "20 W cartridge in a 60 g aluminium block",
        20.0,
        0.95,
        54.0,
        0.12,
        0.5,
        60,
        -0.10,
    ),
    fx(
        "200 W band heater on a 500 g aluminium block, falling 12 %/100 K",
        200.0,
        1.1,
        450.0,
        1.0,
        3.0,
        50,
        0.10,
    )
    .falling(0.0012, 0.0012),
    fx(
        "600 W into a 50 g block",
        600.0,
        1.0,
        45.0,
        0.8,
        0.0,
        60,
        0.05,
    ),
    fx(
        "300 W into 300 g, slow junction, falling 10 %/100 K unidentified",
        300.0,
        1.0,
        270.0,
        1.5,
        5.0,
        50,
        -0.10,
    )
    .falling(0.0010, 0.0),
    fx(
        "100 W into 100 g, heater 25 % weak, falling 15 %/100 K",
        100.0,
        0.75,
        90.0,
        0.5,
        2.0,
        60,
        0.0,
    )
    .falling(0.0015, 0.0015),
    fx(
        "600 W into 500 g, heater 25 % strong",
        600.0,
        1.25,
        450.0,
        2.0,
        4.0,
        50,
        0.10,
    ),
    fx(
        "60 W into 200 g on a DC switch",
        60.0,
        0.8,
        180.0,
        0.4,
        1.0,
        0,
        -0.10,
    ),
];

#[allow(clippy::too_many_arguments)]
const fn fx(
    name: &'static str,
    heater_w: f64,
    heater_factor: f64,
    c_j_per_k: f64,
    loss_w_per_k: f64,
    tc_lag_s: f64,
    mains_hz: u32,
    mains_dev: f64,
) -> Fixture {
    Fixture {
        name,
        heater_w,
        heater_factor,
        c_j_per_k,
        loss_w_per_k,
        tc_lag_s,
        mains_hz,
        mains_dev,
        fall_per_k: 0.0,
        fall_identified_per_k: 0.0,
    }
}

impl Fixture {
    /// This fixture with a heater whose power falls `per_k` per kelvin above 20 °C, of which
    /// the identification found `identified_per_k`.
    const fn falling(self, per_k: f64, identified_per_k: f64) -> Fixture {
        Fixture {
            fall_per_k: per_k,
            fall_identified_per_k: identified_per_k,
            ..self
        }
    }
}

pub const AMBIENT_C: f64 = 22.0;

impl Fixture {
    /// True heater power at full output with the block at 20 °C, W.
    pub fn true_w(&self) -> f64 {
        self.heater_w * self.heater_factor * (1.0 + self.mains_dev).powi(2)
    }

    /// True heater power at full output with the block at `block_c`, W.
    pub fn true_w_at(&self, block_c: f64) -> f64 {
        self.true_w() * (1.0 - self.fall_per_k * (block_c - 20.0)).max(0.0)
    }

    /// The firmware's settings from this fixture's identification.
    pub fn config(&self) -> FirmwareConfig {
        let mut cfg = FirmwareConfig::REFERENCE;
        cfg.plant.heater_w = self.heater_w as f32;
        cfg.plant.heat_capacity_j_per_k = self.c_j_per_k as f32;
        cfg.plant.loss_w_per_k = self.loss_w_per_k as f32;
        cfg.plant.max_lag_s = (1.5 * self.tc_lag_s + 0.5) as f32;
        cfg.plant.heater_fall_per_k = self.fall_identified_per_k as f32;
        cfg
    }

    /// As its builder would set the board: a relay's window short enough that one window's
    /// burst at full power stays under a kelvin or so (hardware-notes/fixtures.md).
    pub fn drive(&self) -> HeaterDrive {
        let rate = self.true_w() / self.c_j_per_k;
        match self.mains_hz {
            0 => HeaterDrive::Pwm { frequency_hz: 500 },
            hz => HeaterDrive::TimeProportioning {
                window_ms: if rate > 5.0 { 500 } else { 2000 },
                half_cycle_us: (500_000 / hz) as u16,
            },
        }
    }
}
