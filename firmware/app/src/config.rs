//! Compiled-in limits and tuning. The safety limits here bound everything the host may ask.

use remanent_protocol::SafetyLimits;

/// Firmware settings fixed at build time by the board crate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirmwareConfig {
    /// The limits the interlocks enforce.
    pub limits: SafetyLimits,
    /// A thermocouple reading unchanged this long while heating is a stuck sensor, ms.
    pub stuck_timeout_ms: u32,
    /// How the fixture heats, for the heating-response interlock.
    pub plant: PlantModel,
    /// Plausibility of the converter's words.
    pub plausible: Plausible,
    /// Heating that the duty cannot explain: a rise this much beyond the most the duty of the
    /// recent past could give, 0.1 °C…
    pub excess_allowance_tenth_c: i16,
    /// …judged over at least this long, ms (longer for a slow fixture: see
    /// [`crate::safety::response::ExcessWatch`])…
    pub excess_window_min_ms: u32,
    /// …counting the duty of this long before the window too (at least four of the plant's
    /// longest thermocouple lags): what a lagging thermocouple still shows of heat put in
    /// earlier, ms.
    pub lag_allowance_ms: u32,
    /// A heating fault clears only within this much of ambient (the cold junction), 0.1 °C.
    pub ambient_band_tenth_c: i16,
    /// This many trips…
    pub lockout_trips: u8,
    /// …within this long lock heating until the power is cycled, ms.
    pub lockout_window_ms: u32,
    /// Proportional gain, duty fraction per °C of error.
    pub kp_per_c: f32,
    /// Integral gain, duty fraction per °C·s.
    pub ki_per_c_s: f32,
    /// A soak's hold time starts once the reading is this close to the target, 0.1 °C.
    pub soak_band_tenth_c: i16,
    /// …or this long after the setpoint reached the target, whichever comes first, ms.
    pub soak_wait_max_ms: u32,
    /// Default sampling period, ms.
    pub period_ms: u16,
    /// Default conversions averaged per sample.
    pub oversample: u8,
    /// Whether `plant` is this fixture's identification. Until it is (a board for any
    /// fixture starts without one; the host sends it with `Command::Fixture`), heating runs
    /// under [`ModelFree`] limits and no energy balance judges it.
    pub identified: bool,
    /// The limits that need no model of the fixture.
    pub model_free: ModelFree,
}

/// Limits for a fixture nobody has identified yet: a low duty cap (a fifth of any heater,
/// slow on any block) and a low ceiling (below where coatings fume, and where a part of the
/// commonest grades starts to lose flux), which cannot false-trip and bound what a wrong
/// guess could do until the thermal cut-off takes over.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ModelFree {
    /// Duty cap, %.
    pub duty_cap_pct: u8,
    /// Ceiling, 0.1 °C.
    pub ceiling_tenth_c: i16,
}

impl ModelFree {
    /// 20 % and 80 °C.
    pub const REFERENCE: ModelFree = ModelFree {
        duty_cap_pct: 20,
        ceiling_tenth_c: 800,
    };
}

/// What the host's identification says, checked before the device takes it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Identified {
    /// Heating rate at full duty, K/s.
    pub rate_k_per_s: f32,
    /// Cooling time constant, s.
    pub cooling_tau_s: f32,
    /// Thermocouple lag, s.
    pub lag_s: f32,
    /// The heating rate's fall per kelvin above 20 °C, fraction.
    pub rate_fall_per_k: f32,
}

/// The heat capacity the device takes for an identified fixture, J/K: a temperature record
/// determines only rates, so the plant is scaled to this and the heater and loss follow.
const NOMINAL_CAPACITY_J_PER_K: f32 = 1000.0;

impl Identified {
    /// Bounds an identification must lie within: 5 mK/s … 50 K/s at full duty, a cooling
    /// time constant of 20 s … 6 h, a lag of at most 5 s, a heating rate falling by at most
    /// 0.2 % per kelvin.
    pub fn checked(self) -> Option<Identified> {
        let ok = (0.005..=50.0).contains(&self.rate_k_per_s)
            && (20.0..=21_600.0).contains(&self.cooling_tau_s)
            && (0.0..=5.0).contains(&self.lag_s)
            && (0.0..=0.002).contains(&self.rate_fall_per_k);
        ok.then_some(self)
    }

    /// The plant model for `base`'s bounds with these values.
    pub fn plant(self, base: PlantModel) -> PlantModel {
        PlantModel {
            heater_w: self.rate_k_per_s * NOMINAL_CAPACITY_J_PER_K,
            heat_capacity_j_per_k: NOMINAL_CAPACITY_J_PER_K,
            loss_w_per_k: NOMINAL_CAPACITY_J_PER_K / self.cooling_tau_s,
            max_lag_s: 1.5 * self.lag_s + 0.5,
            heater_fall_per_k: self.rate_fall_per_k,
            ..base
        }
    }
}

/// A first-order energy balance of the heated block, as identified for this fixture, with the
/// bounds the interlocks allow around it.
///
/// The heating-response interlock asks whether the measured rise could come from *any* fixture
/// within these bounds (a heater from `gain_min` to `gain_max` of its identified effect, which
/// covers a heater ±25 % off and mains ±10 %; a loss up to `loss_max_factor` of the identified
/// one; a thermocouple lagging the block by up to `max_lag_s`): too little rise for the weakest
/// such fixture is [`remanent_protocol::Fault::NoHeatingResponse`], more than the strongest
/// could give is [`remanent_protocol::Fault::HeatingWhileOff`]. The loss is taken from the
/// measured temperature every period, so the prediction follows the measurement.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlantModel {
    /// Heater power at full duty and nominal mains, with the block at 20 °C, W.
    pub heater_w: f32,
    /// How that falls as the block warms: the fraction lost per kelvin above 20 °C.
    pub heater_fall_per_k: f32,
    /// Heat capacity of the block the thermocouple sits on, J/K.
    pub heat_capacity_j_per_k: f32,
    /// Loss of that block to ambient, W/K.
    pub loss_w_per_k: f32,
    /// The weakest heating effect allowed, as a fraction of the identified one.
    pub gain_min: f32,
    /// The strongest, likewise.
    pub gain_max: f32,
    /// The largest loss allowed, as a multiple of the identified one.
    pub loss_max_factor: f32,
    /// The longest thermocouple lag allowed, s.
    pub max_lag_s: f32,
    /// The rise is judged once the weakest fixture, seen through the longest lag, must have
    /// risen this much, 0.1 °C.
    pub judge_rise_tenth_c: i16,
    /// A measured rise below this fraction of that trips.
    pub min_fraction: f32,
}

impl PlantModel {
    /// The reference fixture (hardware-notes/fixture.md): 600 W into a 150 J/K plate.
    pub const REFERENCE: PlantModel = PlantModel {
        heater_w: 600.0,
        heater_fall_per_k: 0.0,
        heat_capacity_j_per_k: 150.0,
        loss_w_per_k: 1.2,
        gain_min: 0.55,
        gain_max: 1.6,
        // the identification measures the loss to about ±10 %
        loss_max_factor: 1.2,
        // the junction clamped in the plate answers within half a second: 1.5× that plus
        // 0.5 s (an identified lag is budgeted the same way, up to 5 s)
        max_lag_s: 1.25,
        judge_rise_tenth_c: 20,
        min_fraction: 0.5,
    };

    /// Heater power at full duty with the block at `temp_c`, W: the identified fall, never
    /// below a quarter of the power at 20 °C nor above it.
    pub fn heater_w_at(&self, temp_c: f32) -> f32 {
        let fall = self.heater_fall_per_k * (temp_c - 20.0);
        self.heater_w * (1.0 - fall).clamp(0.25, 1.0)
    }

    /// Full-power rise rate of the identified block at 20 °C, K/s (the fastest it heats).
    pub fn full_rate_k_per_s(&self) -> f32 {
        self.heater_w / self.heat_capacity_j_per_k.max(1.0)
    }

    /// The block's cooling time constant, s.
    pub fn cooling_tau_s(&self) -> f32 {
        self.heat_capacity_j_per_k / self.loss_w_per_k.max(1e-3)
    }
}

/// What a working thermocouple converter can report.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Plausible {
    /// Coldest believable cold junction (the board), 0.1 °C.
    pub cj_min_tenth_c: i16,
    /// Warmest believable cold junction, 0.1 °C.
    pub cj_max_tenth_c: i16,
    /// A cold junction that does not change by a single count this long while heating is
    /// frozen (a live one flickers in its last bit), ms.
    pub cj_frozen_ms: u32,
}

impl Plausible {
    /// Limits for a bench board indoors.
    pub const REFERENCE: Plausible = Plausible {
        cj_min_tenth_c: -200,
        cj_max_tenth_c: 850,
        cj_frozen_ms: 300_000,
    };
}

/// Highest temperature any build may heat to: 400.0 °C, set by the fixture's wiring insulation
/// and the thermocouple's own rating. It says nothing about the magnet: coatings and adhesives
/// decompose and fume above about 120–150 °C, so a profile above that needs ventilation and
/// accepts a damaged coating (hardware-notes/safety.md).
pub const ABSOLUTE_CEILING_TENTH_C: i16 = 4000;

impl FirmwareConfig {
    /// Settings for the reference fixture (hardware-notes/fixture.md).
    pub const REFERENCE: FirmwareConfig = FirmwareConfig {
        limits: SafetyLimits {
            ceiling_tenth_c: 3500,
            heartbeat_timeout_ms: 2000,
            max_rise_tenth_c_per_s: 50,
            response_window_s: 60,
            reset_margin_tenth_c: 100,
            duty_cap_pct: 85,
        },
        stuck_timeout_ms: 60_000,
        plant: PlantModel::REFERENCE,
        plausible: Plausible::REFERENCE,
        excess_allowance_tenth_c: 20,
        excess_window_min_ms: 5_000,
        lag_allowance_ms: 2_000,
        ambient_band_tenth_c: 150,
        lockout_trips: 3,
        lockout_window_ms: 3_600_000,
        kp_per_c: 0.08,
        ki_per_c_s: 0.0015,
        soak_band_tenth_c: 10,
        soak_wait_max_ms: 20 * 60_000,
        period_ms: 100,
        oversample: 4,
        identified: true,
        model_free: ModelFree::REFERENCE,
    };

    /// The reference settings on a fixture nobody has identified yet (a board for any
    /// fixture): model-free limits until the host sends the identification.
    pub const UNIDENTIFIED: FirmwareConfig = FirmwareConfig {
        identified: false,
        ..FirmwareConfig::REFERENCE
    };

    /// The duty the controller may ask: the configured cap, and never so much that the
    /// strongest fixture the identification allows would rise faster than nine tenths of the
    /// rise-rate limit (a small block under a large heater heats at a fraction of full power).
    pub fn duty_cap(&self) -> f32 {
        let cap = f32::from(self.limits.duty_cap_pct.min(100)) / 100.0;
        if !self.identified {
            return cap.min(f32::from(self.model_free.duty_cap_pct) / 100.0);
        }
        let max_rise = f32::from(self.limits.max_rise_tenth_c_per_s) / 10.0;
        let fastest = self.plant.gain_max * self.plant.full_rate_k_per_s();
        cap.min(0.9 * max_rise / fastest.max(1e-6))
    }

    /// The ceiling actually enforced: the configured one, never above the absolute ceiling.
    pub fn ceiling_tenth_c(&self) -> i16 {
        let ceiling = self.limits.ceiling_tenth_c.min(ABSOLUTE_CEILING_TENTH_C);
        if self.identified {
            ceiling
        } else {
            ceiling.min(self.model_free.ceiling_tenth_c)
        }
    }
}
