//! The Remanent firmware on a Raspberry Pi Pico (RP2040).
//!
//! Pins (hardware-notes/wiring.md): I2C0 SDA GP4 / SCL GP5 to the ADC; SPI0 SCK GP18,
//! MISO GP16 (pulled up: an absent converter reads all ones), CS GP17 to the thermocouple
//! converter; heater output on GP14; heater enable on GP15; status LED on GP25. The heater
//! output drives a zero-crossing relay by time-proportioning (2 s windows of whole mains
//! half-cycles, 50 Hz or with `mains-60hz` 60 Hz; hardware-notes/heater-drive.md); the enable
//! pin is a square wave from the main loop while heating, for a retriggerable monostable that
//! drops the relay when the edges stop. The host link is USB CDC-ACM on the Pico's own
//! USB port, serviced from its interrupt ([`usb`]). A panic, a hard fault (a stack overflow
//! hits the MPU guard) or a hung loop reaches the safe state of [`safe`] and resets the chip;
//! it comes back latched and says why in its hello. Logs go out over RTT with defmt.
#![no_std]
#![no_main]

mod flash;
mod safe;
mod usb;

use defmt_rtt as _;

use embedded_hal::digital::OutputPin;
use embedded_hal_bus::spi::ExclusiveDevice;
use fugit::RateExtU32;
use remanent_firmware::device::Device;
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::fault_log::FaultLog;
use remanent_firmware::heater::Heater;
use remanent_firmware::{Clock, FirmwareConfig};
use remanent_protocol::HeaterDrive;
use rp2040_hal as hal;
use rp2040_hal::clocks::Clock as _;
use rp2040_hal::gpio::{
    bank0, FunctionNull, FunctionSioOutput, FunctionSpi, Pin, PullDown, PullUp,
};
use rp2040_hal::pac;
use usb_device::class_prelude::UsbBusAllocator;

/// Second-stage boot loader for the Pico's W25Q080 flash.
#[link_section = ".boot2"]
#[used]
pub static BOOT2: [u8; 256] = rp2040_boot2::BOOT_LOADER_W25Q080;

const XTAL_FREQ_HZ: u32 = 12_000_000;
/// The mains half-cycle, µs: part of the bench's configuration, chosen when the image is built
/// (`--features mains-60hz` for 60 Hz mains; 50 Hz otherwise).
#[cfg(not(feature = "mains-60hz"))]
const MAINS_HALF_CYCLE_US: u16 = 10_000;
#[cfg(feature = "mains-60hz")]
const MAINS_HALF_CYCLE_US: u16 = 8_333;
/// The heater's switch: a zero-crossing relay, in 2 s windows of whole mains half-cycles.
const HEATER_DRIVE: HeaterDrive = HeaterDrive::TimeProportioning {
    window_ms: 2000,
    half_cycle_us: MAINS_HALF_CYCLE_US,
};
/// Watchdog timeout: a few control periods (the longest period is 250 ms).
const WATCHDOG_MS: u32 = 500;

/// A pin as the chip leaves reset.
type ResetPin<I> = Pin<I, FunctionNull, PullDown>;
/// SPI0's pins: MOSI GP19, MISO GP16 (pulled up), SCK GP18.
type Spi0Pins = (
    Pin<bank0::Gpio19, FunctionSpi, PullDown>,
    Pin<bank0::Gpio16, FunctionSpi, PullUp>,
    Pin<bank0::Gpio18, FunctionSpi, PullDown>,
);

/// Bytes waiting for the USB endpoint.
type TxBuffer = heapless::Vec<u8, 512>;

/// The device clock: the RP2040's 1 MHz timer, in milliseconds.
struct TimerClock(hal::Timer);

impl Clock for TimerClock {
    fn now_ms(&mut self) -> u32 {
        (self.0.get_counter().ticks() / 1000) as u32
    }
}

#[hal::entry]
fn main() -> ! {
    // the heater outputs go low before anything else can fail, by register
    safe::outputs_off();
    // the latch and the lock that a power cycle keeps, then why this start happened
    let log = FaultLog::open(flash::LogFlash, flash::LOG_BASE).ok();
    let boot = safe::take_boot_report(log.as_ref().and_then(FaultLog::last));
    let _ = remanent_board_support::guard_stack();
    let Some(mut pac) = pac::Peripherals::take() else {
        panic!("peripherals taken twice")
    };
    let mut watchdog = hal::Watchdog::new(pac.WATCHDOG);
    let Ok(clocks) = hal::clocks::init_clocks_and_plls(
        XTAL_FREQ_HZ,
        pac.XOSC,
        pac.CLOCKS,
        pac.PLL_SYS,
        pac.PLL_USB,
        &mut pac.RESETS,
        &mut watchdog,
    ) else {
        panic!("clocks did not start")
    };
    let sio = hal::Sio::new(pac.SIO);
    let pins = hal::gpio::Pins::new(
        pac.IO_BANK0,
        pac.PADS_BANK0,
        sio.gpio_bank0,
        &mut pac.RESETS,
    );
    let timer = hal::Timer::new(pac.TIMER, &mut pac.RESETS, &clocks);
    // a board for any fixture: model-free limits until the host sends the identification
    let cfg = FirmwareConfig::UNIDENTIFIED;
    let heater = heater(pins.gpio14, pins.gpio15, pac.PWM, &mut pac.RESETS, &cfg);
    let adc = adc(
        pins.gpio4,
        pins.gpio5,
        pac.I2C0,
        &mut pac.RESETS,
        &clocks,
        timer,
    );
    let sck = pins.gpio18.into_function::<hal::gpio::FunctionSpi>();
    let mosi = pins.gpio19.into_function::<hal::gpio::FunctionSpi>();
    let cs = pins
        .gpio17
        .into_push_pull_output_in_state(hal::gpio::PinState::High);
    let spi_pins = (mosi, pins.gpio16.reconfigure(), sck);
    let tc = thermocouple(spi_pins, cs, pac.SPI0, &mut pac.RESETS, &clocks, timer);
    let Some(bus) = cortex_m::singleton!(: UsbBusAllocator<hal::usb::UsbBus> = UsbBusAllocator::new(
        hal::usb::UsbBus::new(pac.USBCTRL_REGS, pac.USBCTRL_DPRAM, clocks.usb_clock, true, &mut pac.RESETS),
    )) else {
        panic!("usb bus")
    };
    let serial_number = host_link(bus);

    let led = pins.gpio25.into_push_pull_output();
    let mut clock = TimerClock(timer);
    let board = remanent_board_support::front_end::board_info("pico", cfg!(feature = "drills"));
    let device = Device::new(cfg, board, adc, tc, heater, clock.now_ms(), boot);
    defmt::info!(
        "Remanent firmware {} on the Pico, serial {}",
        remanent_firmware::device::FIRMWARE_VERSION,
        serial_number
    );

    watchdog.pause_on_debug(true);
    watchdog.start(fugit::MicrosDurationU32::millis(WATCHDOG_MS));
    serve(device, clock, watchdog, led, log)
}

/// The heater: the output pin (GP14) driven fully on or off by PWM slice 7, the enable pin
/// (GP15) as the second path, toggled from the main loop while heating — the board's
/// retriggerable monostable holds the relay only while edges come (hardware-notes/safety.md).
fn heater(
    out: ResetPin<bank0::Gpio14>,
    enable: ResetPin<bank0::Gpio15>,
    pwm: pac::PWM,
    resets: &mut pac::RESETS,
    cfg: &FirmwareConfig,
) -> Heater<impl embedded_hal::pwm::SetDutyCycle, impl OutputPin> {
    let mut enable = enable.into_push_pull_output();
    let _ = enable.set_low();
    let slices = hal::pwm::Slices::new(pwm, resets);
    let mut pwm = slices.pwm7;
    pwm.set_div_int(250);
    pwm.set_top(999);
    pwm.enable();
    let mut channel = pwm.channel_a;
    channel.output_to(out);
    Heater::new(channel, enable, cfg.limits.duty_cap_pct, HEATER_DRIVE).with_toggling_enable()
}

/// The ADC on I2C0 (SDA GP4, SCL GP5, pulled up) at 400 kHz.
fn adc(
    sda: ResetPin<bank0::Gpio4>,
    scl: ResetPin<bank0::Gpio5>,
    i2c: pac::I2C0,
    resets: &mut pac::RESETS,
    clocks: &hal::clocks::ClocksManager,
    timer: hal::Timer,
) -> impl remanent_firmware::Adc {
    let sda: Pin<_, hal::gpio::FunctionI2C, PullUp> = sda.reconfigure();
    let scl: Pin<_, hal::gpio::FunctionI2C, PullUp> = scl.reconfigure();
    let i2c = hal::I2C::i2c0(i2c, sda, scl, 400.kHz(), resets, &clocks.system_clock);
    ads1115::Ads1115::new(i2c, timer, ads1115::DEFAULT_ADDRESS)
}

/// The thermocouple converter on SPI0 at 4 MHz, mode 0, chip select GP17. MISO (GP16) is
/// pulled up: with the converter absent the data line reads all ones, never a valid 0 °C.
fn thermocouple(
    (mosi, miso, sck): Spi0Pins,
    cs: Pin<bank0::Gpio17, FunctionSioOutput, PullDown>,
    spi: pac::SPI0,
    resets: &mut pac::RESETS,
    clocks: &hal::clocks::ClocksManager,
    timer: hal::Timer,
) -> impl remanent_firmware::Thermocouple {
    let spi = hal::spi::Spi::<_, _, _, 8>::new(spi, (mosi, miso, sck)).init(
        resets,
        clocks.peripheral_clock.freq(),
        4.MHz(),
        embedded_hal::spi::MODE_0,
    );
    let Ok(dev) = ExclusiveDevice::new(spi, cs, timer);
    max31855::Max31855::new(dev)
}

/// USB serial to the host (CDC-ACM on the Pico's own port, the flash id as serial number),
/// serviced from its interrupt; returns the serial number.
fn host_link(bus: &'static UsbBusAllocator<hal::usb::UsbBus>) -> &'static str {
    let Some(serial_buf) = cortex_m::singleton!(: [u8; 16] = [0; 16]) else {
        panic!("serial")
    };
    let serial_number = usb::serial_number(serial_buf);
    usb::start(bus, serial_number);
    serial_number
}

/// The main loop: bytes from the host in, the control period, the latch kept, frames out. Only
/// a whole control period feeds the watchdog.
fn serve<A, T, P, O>(
    mut device: Device<A, T, P, O>,
    mut clock: TimerClock,
    mut watchdog: hal::Watchdog,
    mut led: impl OutputPin,
    mut log: Option<FaultLog<flash::LogFlash>>,
) -> !
where
    A: remanent_firmware::Adc,
    T: remanent_firmware::Thermocouple,
    P: embedded_hal::pwm::SetDutyCycle,
    O: OutputPin,
{
    let mut rx = [0u8; 64];
    let mut tx = TxBuffer::new();
    loop {
        let n = usb::read(&mut rx);
        if n > 0 {
            device.receive(clock.now_ms(), &rx[..n]);
        }
        if remanent_board_support::main_loop::pass(&mut device, true, || clock.now_ms()) {
            watchdog.feed(); // only a whole control period feeds it
        }
        let kept = device.persisted();
        safe::persist(kept);
        if device.heater_duty() == 0.0 {
            keep_in_flash(&mut log, kept, &mut watchdog);
        }
        // move frames into the buffer while whole frames fit; never block on the host
        let room = tx.capacity() - tx.len();
        remanent_board_support::main_loop::frames_out(&mut device, room, |f| {
            let _ = tx.extend_from_slice(f);
        });
        if !tx.is_empty() {
            let n = usb::write(&tx);
            let rest = tx.len() - n;
            tx.copy_within(n.., 0);
            tx.truncate(rest);
        }
        let _ = if device.heater_duty() > 0.0 {
            led.set_high()
        } else {
            led.set_low()
        };
    }
}

/// The latch and the lock to the fault log when they changed (call with the heater off: the
/// ROM's routines run with interrupts off — a page in about a millisecond, a sector's erase,
/// once in 16 changes, in up to 400 ms on this flash, inside the watchdog's 500). A log that
/// fails is given up: the latch is then kept across resets only.
fn keep_in_flash(
    log: &mut Option<FaultLog<flash::LogFlash>>,
    kept: remanent_firmware::device::Persisted,
    watchdog: &mut hal::Watchdog,
) {
    if !log
        .as_ref()
        .is_some_and(|l| l.last().unwrap_or_default() != kept)
    {
        return;
    }
    watchdog.feed();
    if let Some(Err(e)) = log.as_mut().map(|l| l.store(kept)) {
        defmt::error!("fault log: {} (the latch is kept across resets only)", e);
        *log = None;
    }
}
