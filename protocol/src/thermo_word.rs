//! The thermocouple converter's 32-bit output word, carried verbatim.
//!
//! Layout of the common SPI Type K converter (14-bit thermocouple, 12-bit cold junction):
//! bits 31..18 thermocouple temperature, signed, 0.25 °C per count; bit 16 any fault;
//! bits 15..4 cold-junction temperature, signed, 0.0625 °C per count; bit 2 short to VCC;
//! bit 1 short to GND; bit 0 open circuit. Bits 17 and 3 are reserved (zero).

use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// The raw 32-bit word as read from the converter.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ThermoWord(pub u32);

/// Fault bits of the word's low three bits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ThermoFault {
    /// Thermocouple open circuit (bit 0).
    Open,
    /// Thermocouple shorted to GND (bit 1).
    ShortToGnd,
    /// Thermocouple shorted to VCC (bit 2).
    ShortToVcc,
}

/// Degrees Celsius per thermocouple count.
pub const TC_C_PER_COUNT: f32 = 0.25;
/// Degrees Celsius per cold-junction count.
pub const CJ_C_PER_COUNT: f32 = 0.0625;

impl ThermoWord {
    /// Build a word from its fields (what the converter would output).
    pub fn from_parts(tc_counts: i16, cj_counts: i16, fault: Option<ThermoFault>) -> Self {
        let tc = ((tc_counts as u32) & 0x3FFF) << 18;
        let cj = ((cj_counts as u32) & 0x0FFF) << 4;
        let bits = match fault {
            None => 0,
            Some(ThermoFault::Open) => 0x1,
            Some(ThermoFault::ShortToGnd) => 0x2,
            Some(ThermoFault::ShortToVcc) => 0x4,
        };
        let any = if bits != 0 { 1 << 16 } else { 0 };
        ThermoWord(tc | cj | any | bits)
    }

    /// Thermocouple reading in counts of 0.25 °C (sign-extended 14 bits).
    pub fn tc_counts(self) -> i16 {
        ((self.0 as i32) >> 18) as i16
    }

    /// Cold-junction reading in counts of 0.0625 °C (sign-extended 12 bits).
    pub fn cj_counts(self) -> i16 {
        (((self.0 << 16) as i32) >> 20) as i16
    }

    /// Thermocouple temperature as the chip reports it (its linear approximation), °C.
    pub fn tc_c(self) -> f32 {
        self.tc_counts() as f32 * TC_C_PER_COUNT
    }

    /// Thermocouple reading in tenths of a degree Celsius, rounded toward zero (for the
    /// firmware's integer control loop).
    pub fn tc_tenth_c(self) -> i16 {
        // counts × 2.5 = counts × 5 / 2
        ((self.tc_counts() as i32 * 5) / 2) as i16
    }

    /// Cold-junction temperature in tenths of a degree Celsius, rounded toward zero
    /// (counts × 0.625).
    pub fn cj_tenth_c(self) -> i16 {
        ((self.cj_counts() as i32 * 5) / 8) as i16
    }

    /// Cold-junction temperature, °C.
    pub fn cj_c(self) -> f32 {
        self.cj_counts() as f32 * CJ_C_PER_COUNT
    }

    /// The reported fault, if any. A set fault flag with no cause bit counts as open circuit.
    pub fn fault(self) -> Option<ThermoFault> {
        if self.0 & 0x1 != 0 {
            Some(ThermoFault::Open)
        } else if self.0 & 0x2 != 0 {
            Some(ThermoFault::ShortToGnd)
        } else if self.0 & 0x4 != 0 {
            Some(ThermoFault::ShortToVcc)
        } else if self.0 & (1 << 16) != 0 {
            Some(ThermoFault::Open)
        } else {
            None
        }
    }
}

impl Serialize for ThermoWord {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        // big-endian: the byte order the converter shifts out
        self.0.to_be_bytes().serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for ThermoWord {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        <[u8; 4]>::deserialize(deserializer).map(|b| ThermoWord(u32::from_be_bytes(b)))
    }
}

impl postcard::experimental::max_size::MaxSize for ThermoWord {
    const POSTCARD_MAX_SIZE: usize = 4;
}

#[cfg(test)]
mod tests {
    use super::*;

    // Example words from the converter's datasheet tables (common practice: the 14-bit
    // format is shared by the whole family): +100.00 °C = 0x0190 counts, −0.25 °C = 0x3FFF.
    #[test]
    fn fields_round_trip_through_the_word() {
        let w = ThermoWord::from_parts(400, 25 * 16, None);
        assert_eq!(w.tc_counts(), 400);
        assert_eq!(w.tc_c(), 100.0);
        assert_eq!(w.cj_c(), 25.0);
        assert_eq!(w.fault(), None);
        let neg = ThermoWord::from_parts(-1, -16, Some(ThermoFault::ShortToGnd));
        assert_eq!(neg.tc_counts(), -1);
        assert_eq!(neg.cj_counts(), -16);
        assert_eq!(neg.fault(), Some(ThermoFault::ShortToGnd));
        assert_eq!(neg.0 >> 18, 0x3FFF);
    }
}
