//! Compiled-in limits and tuning. The safety limits here bound everything the host may ask.

use remanent_protocol::SafetyLimits;

/// Firmware settings fixed at build time by the board crate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FirmwareConfig {
    /// The limits the interlocks enforce.
    pub limits: SafetyLimits,
    /// A thermocouple word unchanged this long while heating is a stuck sensor, ms.
    pub stuck_timeout_ms: u32,
    /// Full duty must raise the temperature by at least this much within
    /// `limits.no_rise_timeout_s`, 0.1 °C.
    pub min_rise_tenth_c: i16,
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
            no_rise_timeout_s: 90,
            reset_margin_tenth_c: 100,
            duty_cap_pct: 85,
        },
        stuck_timeout_ms: 60_000,
        min_rise_tenth_c: 20,
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
