//! The analogue front end every Remanent board carries (hardware-notes/wiring.md): the Hall
//! sensor and the probe's thermistor divider on the 3.3 V rail with a 10 kΩ fixed resistor,
//! read by an ADS1115 in single-shot conversions at 860 samples per second.

use remanent_firmware::device::BoardInfo;

/// Supply of the Hall sensor and the thermistor divider, mV.
pub const SUPPLY_MV: u16 = 3300;
/// The thermistor divider's fixed resistor, Ω.
pub const NTC_SERIES_OHM: u32 = 10_000;
/// One ADS1115 single-shot conversion at 860 SPS with its I2C traffic, µs.
pub const CONVERSION_US: u32 = 1_500;

/// What the board `name` tells the host about itself; `drills`: it carries out fault drills
/// (test builds only).
pub const fn board_info(name: &'static str, drills: bool) -> BoardInfo {
    BoardInfo {
        name,
        supply_mv: SUPPLY_MV,
        ntc_series_ohm: NTC_SERIES_OHM,
        conversion_us: CONVERSION_US,
        drills,
    }
}
