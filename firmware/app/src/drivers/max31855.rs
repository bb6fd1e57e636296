//! Driver for the common Type K thermocouple-to-digital converter on SPI (MAX31855 format):
//! one 32-bit read returns thermocouple, cold junction and fault bits
//! (see `remanent_protocol::thermo_word` for the layout). The word travels to the host verbatim.

use embedded_hal::spi::SpiDevice;
use remanent_protocol::ThermoWord;

use crate::traits::Thermocouple;

/// Driver error.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Error<E> {
    /// The SPI transaction failed.
    Bus(E),
    /// All 32 bits read as ones: MISO floating, chip absent or unpowered.
    NoDevice,
}

/// The converter on its SPI device (chip select handled by the `SpiDevice`).
pub struct Max31855<SPI> {
    spi: SPI,
}

impl<SPI: SpiDevice> Max31855<SPI> {
    /// A driver on `spi` (mode 0, up to 5 MHz).
    pub fn new(spi: SPI) -> Self {
        Max31855 { spi }
    }

    /// Hand the SPI device back.
    pub fn release(self) -> SPI {
        self.spi
    }
}

impl<SPI: SpiDevice> Thermocouple for Max31855<SPI> {
    type Error = Error<SPI::Error>;
    fn read_word(&mut self) -> Result<ThermoWord, Self::Error> {
        let mut buf = [0u8; 4];
        self.spi.read(&mut buf).map_err(Error::Bus)?;
        let word = u32::from_be_bytes(buf);
        // reserved bits 17 and 3 always read zero on a real chip
        if word == u32::MAX {
            return Err(Error::NoDevice);
        }
        Ok(ThermoWord(word))
    }
    /// The MAX31855 reports a temperature linear in the junction's voltage (41.276 µV/K).
    fn kind(&self) -> remanent_protocol::ThermoKind {
        remanent_protocol::ThermoKind::TypeKLinear
    }
}
