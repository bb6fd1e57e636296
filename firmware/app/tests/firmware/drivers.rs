//! Drivers against embedded-hal-mock: exact bus transactions, fault bits, bus errors.

use embedded_hal::i2c::ErrorKind as I2cErrorKind;
use embedded_hal::spi::{ErrorKind as SpiErrorKind, ErrorType, Operation, SpiDevice};
use embedded_hal_mock::eh1::delay::NoopDelay;
use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as PinTx};
use embedded_hal_mock::eh1::i2c::{Mock as I2cMock, Transaction as I2cTx};
use embedded_hal_mock::eh1::pwm::{Mock as PwmMock, Transaction as PwmTx};
use embedded_hal_mock::eh1::spi::{Mock as SpiMock, Transaction as SpiTx};
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::heater::Heater;
use remanent_firmware::{Adc, AdcInput, Thermocouple};
use remanent_protocol::thermo_word::ThermoFault;

const ADDR: u8 = ads1115::DEFAULT_ADDRESS;

// Config words from the ADS1115 datasheet register map (TI SBAS444): OS=1, MUX, PGA,
// MODE=1 single-shot, DR=111 (860 SPS), COMP_QUE=11 (comparator off).
const HALL_CONFIG: [u8; 2] = [0b1000_0101, 0b1110_0011]; // MUX 000, PGA 010 (±2.048 V)
const PROBE_CONFIG: [u8; 2] = [0b1110_0011, 0b1110_0011]; // MUX 110, PGA 001 (±4.096 V)

#[test]
fn adc_converts_the_hall_input_with_exact_transactions() {
    let expectations = [
        I2cTx::write(
            ADDR,
            vec![ads1115::REG_CONFIG, HALL_CONFIG[0], HALL_CONFIG[1]],
        ),
        I2cTx::write_read(ADDR, vec![ads1115::REG_CONFIG], vec![0x85, 0xe3]), // ready
        I2cTx::write_read(ADDR, vec![ads1115::REG_CONVERSION], vec![0xf0, 0x00]),
    ];
    let mut adc = ads1115::Ads1115::new(I2cMock::new(&expectations), NoopDelay::new(), ADDR);
    assert_eq!(adc.convert(AdcInput::Hall), Ok(-4096)); // 0xF000 two's complement
    let (mut i2c, _) = adc.release();
    i2c.done();
}

#[test]
fn adc_waits_for_the_ready_bit_and_reads_the_thermistor_input() {
    let expectations = [
        I2cTx::write(
            ADDR,
            vec![ads1115::REG_CONFIG, PROBE_CONFIG[0], PROBE_CONFIG[1]],
        ),
        I2cTx::write_read(ADDR, vec![ads1115::REG_CONFIG], vec![0x63, 0xe3]), // busy (OS=0)
        I2cTx::write_read(ADDR, vec![ads1115::REG_CONFIG], vec![0xe3, 0xe3]), // ready
        I2cTx::write_read(ADDR, vec![ads1115::REG_CONVERSION], vec![0x3e, 0x80]),
    ];
    let mut adc = ads1115::Ads1115::new(I2cMock::new(&expectations), NoopDelay::new(), ADDR);
    assert_eq!(adc.convert(AdcInput::ProbeThermistor), Ok(16_000));
    let (mut i2c, _) = adc.release();
    i2c.done();
}

#[test]
fn adc_reports_a_converter_that_never_finishes_and_bus_errors() {
    let mut expectations = vec![I2cTx::write(
        ADDR,
        vec![ads1115::REG_CONFIG, HALL_CONFIG[0], HALL_CONFIG[1]],
    )];
    for _ in 0..ads1115::READY_POLLS {
        expectations.push(I2cTx::write_read(
            ADDR,
            vec![ads1115::REG_CONFIG],
            vec![0x05, 0xe3],
        ));
    }
    expectations.push(
        I2cTx::write(
            ADDR,
            vec![ads1115::REG_CONFIG, HALL_CONFIG[0], HALL_CONFIG[1]],
        )
        .with_error(I2cErrorKind::Other),
    );
    let mut adc = ads1115::Ads1115::new(I2cMock::new(&expectations), NoopDelay::new(), ADDR);
    assert_eq!(adc.convert(AdcInput::Hall), Err(ads1115::Error::NotReady));
    assert_eq!(
        adc.convert(AdcInput::Hall),
        Err(ads1115::Error::Bus(I2cErrorKind::Other))
    );
    let (mut i2c, _) = adc.release();
    i2c.done();
}

fn spi_read(bytes: [u8; 4]) -> Vec<SpiTx<u8>> {
    vec![
        SpiTx::transaction_start(),
        SpiTx::read_vec(bytes.to_vec()),
        SpiTx::transaction_end(),
    ]
}

#[test]
fn thermocouple_converter_reads_temperature_and_fault_bits() {
    // Example words from the MAX31855 datasheet's temperature-data table (Maxim 19-5793):
    // +100.00 °C thermocouple = 0x0190 in bits 31..18; cold junction +25.0 °C = 0x190 in 15..4.
    let ok = ((0x0190u32) << 18) | (0x190 << 4);
    // −250.00 °C = 0x3C18 (14-bit two's complement); open-circuit fault: bit 16 and bit 0
    let open = (0x3C18u32 << 18) | (0x190 << 4) | (1 << 16) | 0x1;
    let short_vcc = (0x0190u32 << 18) | (1 << 16) | 0x4;
    let mut tx = spi_read(ok.to_be_bytes());
    tx.extend(spi_read(open.to_be_bytes()));
    tx.extend(spi_read(short_vcc.to_be_bytes()));
    tx.extend(spi_read([0xff; 4]));
    let mut tc = max31855::Max31855::new(SpiMock::new(&tx));
    let w = tc.read_word().unwrap();
    assert_eq!((w.tc_c(), w.cj_c(), w.fault()), (100.0, 25.0, None));
    let w = tc.read_word().unwrap();
    assert_eq!((w.tc_c(), w.fault()), (-250.0, Some(ThermoFault::Open)));
    assert_eq!(
        tc.read_word().unwrap().fault(),
        Some(ThermoFault::ShortToVcc)
    );
    assert_eq!(tc.read_word(), Err(max31855::Error::NoDevice));
    tc.release().done();
}

/// An SPI device whose every transaction fails (the mock has no error injection for SPI).
struct BrokenSpi;
impl ErrorType for BrokenSpi {
    type Error = SpiErrorKind;
}
impl SpiDevice for BrokenSpi {
    fn transaction(&mut self, _ops: &mut [Operation<'_, u8>]) -> Result<(), SpiErrorKind> {
        Err(SpiErrorKind::ModeFault)
    }
}

#[test]
fn thermocouple_converter_passes_bus_errors_on() {
    let mut tc = max31855::Max31855::new(BrokenSpi);
    assert_eq!(
        tc.read_word(),
        Err(max31855::Error::Bus(SpiErrorKind::ModeFault))
    );
}

#[test]
fn heater_drives_pwm_and_enable_and_turns_both_off() {
    let pwm_tx = [
        // drive at 50 %: fraction 500/1000 of max duty 1000
        PwmTx::max_duty_cycle(1000),
        PwmTx::set_duty_cycle(500),
        // a request above the cap is capped at 85 %
        PwmTx::max_duty_cycle(1000),
        PwmTx::set_duty_cycle(850),
        // off
        PwmTx::set_duty_cycle(0),
    ];
    let pin_tx = [
        PinTx::set(State::High),
        PinTx::set(State::High),
        PinTx::set(State::Low),
    ];
    let drive = remanent_protocol::HeaterDrive::Pwm { frequency_hz: 500 };
    let heater = Heater::new(PwmMock::new(&pwm_tx), PinMock::new(&pin_tx), 85, drive);
    // The permit can only come from the interlocks: run one check on a healthy reading.
    let mut heater = heater;
    let mut interlocks =
        remanent_firmware::safety::Interlocks::new(remanent_firmware::FirmwareConfig::REFERENCE, 0);
    let reading = remanent_firmware::safety::Reading::Word(
        remanent_protocol::ThermoWord::from_parts(100, 400, None),
    );
    let permit = interlocks
        .check(0, reading, (0.0, 0.0), true)
        .unwrap()
        .unwrap();
    heater.drive(permit, 0.5).unwrap();
    let permit = interlocks
        .check(100, reading, (0.5, 0.5), true)
        .unwrap()
        .unwrap();
    heater.drive(permit, 1.0).unwrap();
    assert!((heater.duty() - 0.85).abs() < 1e-6);
    heater.off().unwrap();
    let (mut pwm, mut pin) = heater.release();
    pwm.done();
    pin.done();
}
