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
    /// Heating while commanded off: after the heater has been off this long, ms…
    pub off_settle_ms: u32,
    /// …a rise of this much, 0.1 °C…
    pub off_rise_tenth_c: i16,
    /// …within this long is heating while off, ms.
    pub off_window_ms: u32,
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
}

/// A first-order energy balance of the heated block: what the firmware expects a duty to do.
///
/// The heating-response interlock compares the measured rise with the rise this model predicts
/// from the energy put in; the board's values are refined by what the interlock itself sees
/// (within bounds), so a modest error in them does not trip a normal run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlantModel {
    /// Heater power at full duty, W.
    pub heater_w: f32,
    /// Heat capacity of the block the thermocouple sits on, J/K.
    pub heat_capacity_j_per_k: f32,
    /// Loss of that block to ambient, W/K.
    pub loss_w_per_k: f32,
    /// The rise is judged once the model predicts this much, 0.1 °C.
    pub judge_rise_tenth_c: i16,
    /// A measured rise below this fraction of the predicted one trips.
    pub min_fraction: f32,
}

impl PlantModel {
    /// The reference fixture (hardware-notes/fixture.md): 600 W into a 150 J/K plate.
    pub const REFERENCE: PlantModel = PlantModel {
        heater_w: 600.0,
        heat_capacity_j_per_k: 150.0,
        loss_w_per_k: 1.2,
        judge_rise_tenth_c: 40,
        min_fraction: 0.3,
    };
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

/// Highest temperature any build may heat to: 400.0 °C. Above this a fixture's insulation and
/// a magnet's coating are no longer safe (hardware-notes/safety.md).
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
        off_settle_ms: 60_000,
        off_rise_tenth_c: 20,
        off_window_ms: 30_000,
        ambient_band_tenth_c: 150,
        lockout_trips: 3,
        lockout_window_ms: 3_600_000,
        kp_per_c: 0.08,
        ki_per_c_s: 0.0015,
        soak_band_tenth_c: 10,
        soak_wait_max_ms: 20 * 60_000,
        period_ms: 100,
        oversample: 4,
    };

    /// The ceiling actually enforced: the configured one, never above the absolute ceiling.
    pub fn ceiling_tenth_c(&self) -> i16 {
        self.limits.ceiling_tenth_c.min(ABSOLUTE_CEILING_TENTH_C)
    }
}
