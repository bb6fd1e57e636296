//! The Remanent firmware on a Raspberry Pi Pico (RP2040).
//!
//! Pins (hardware-notes/wiring.md): I2C0 SDA GP4 / SCL GP5 to the ADC; SPI0 SCK GP18,
//! MISO GP16, CS GP17 to the thermocouple converter; heater PWM on GP14 (slice 7 A); heater
//! enable on GP15; status LED on GP25. The host link is USB CDC-ACM on the Pico's own USB port,
//! so one cable carries power-independent data and the user needs no adapter. Logs go out over
//! RTT with defmt when a debug probe is attached.
#![no_std]
#![no_main]

use defmt_rtt as _;
use panic_probe as _;

use embedded_hal::digital::OutputPin;
use embedded_hal_bus::spi::ExclusiveDevice;
use fugit::RateExtU32;
use remanent_firmware::device::{BoardInfo, Device};
use remanent_firmware::drivers::{ads1115, max31855};
use remanent_firmware::heater::Heater;
use remanent_firmware::{Clock, FirmwareConfig};
use remanent_protocol::MAX_DEVICE_FRAME;
use rp2040_hal as hal;
use rp2040_hal::clocks::Clock as _;
use rp2040_hal::pac;
use usb_device::class_prelude::UsbBusAllocator;
use usb_device::prelude::{StringDescriptors, UsbDeviceBuilder, UsbVidPid};
use usbd_serial::SerialPort;

/// Second-stage boot loader for the Pico's W25Q080 flash.
#[link_section = ".boot2"]
#[used]
pub static BOOT2: [u8; 256] = rp2040_boot2::BOOT_LOADER_W25Q080;

const XTAL_FREQ_HZ: u32 = 12_000_000;
/// Heater PWM: 125 MHz / 250 / 1000 steps = 500 Hz, slow enough for a MOSFET or SSR driver.
const PWM_DIV: u8 = 250;
const PWM_TOP: u16 = 999;

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
    let mut pac = pac::Peripherals::take().unwrap();
    let mut watchdog = hal::Watchdog::new(pac.WATCHDOG);
    let clocks = hal::clocks::init_clocks_and_plls(
        XTAL_FREQ_HZ,
        pac.XOSC,
        pac.CLOCKS,
        pac.PLL_SYS,
        pac.PLL_USB,
        &mut pac.RESETS,
        &mut watchdog,
    )
    .ok()
    .unwrap();
    let sio = hal::Sio::new(pac.SIO);
    let pins = hal::gpio::Pins::new(pac.IO_BANK0, pac.PADS_BANK0, sio.gpio_bank0, &mut pac.RESETS);
    let timer = hal::Timer::new(pac.TIMER, &mut pac.RESETS, &clocks);

    // heater first, and off, before anything else can fail
    let mut enable = pins.gpio15.into_push_pull_output();
    let _ = enable.set_low();
    let slices = hal::pwm::Slices::new(pac.PWM, &mut pac.RESETS);
    let mut pwm = slices.pwm7;
    pwm.set_div_int(PWM_DIV);
    pwm.set_top(PWM_TOP);
    pwm.enable();
    let mut channel = pwm.channel_a;
    channel.output_to(pins.gpio14);
    let cfg = FirmwareConfig::REFERENCE;
    let heater = Heater::new(channel, enable, cfg.limits.duty_cap_pct);

    // sensors
    let sda: hal::gpio::Pin<_, hal::gpio::FunctionI2C, hal::gpio::PullUp> = pins.gpio4.reconfigure();
    let scl: hal::gpio::Pin<_, hal::gpio::FunctionI2C, hal::gpio::PullUp> = pins.gpio5.reconfigure();
    let i2c = hal::I2C::i2c0(pac.I2C0, sda, scl, 400.kHz(), &mut pac.RESETS, &clocks.system_clock);
    let adc = ads1115::Ads1115::new(i2c, timer, ads1115::DEFAULT_ADDRESS);
    let sck = pins.gpio18.into_function::<hal::gpio::FunctionSpi>();
    let miso = pins.gpio16.into_function::<hal::gpio::FunctionSpi>();
    let mosi = pins.gpio19.into_function::<hal::gpio::FunctionSpi>();
    let spi = hal::spi::Spi::<_, _, _, 8>::new(pac.SPI0, (mosi, miso, sck)).init(
        &mut pac.RESETS,
        clocks.peripheral_clock.freq(),
        4.MHz(),
        embedded_hal::spi::MODE_0,
    );
    let cs = pins.gpio17.into_push_pull_output_in_state(hal::gpio::PinState::High);
    let tc_dev = ExclusiveDevice::new(spi, cs, timer).unwrap();
    let tc = max31855::Max31855::new(tc_dev);

    // USB serial to the host
    let usb_bus = UsbBusAllocator::new(hal::usb::UsbBus::new(
        pac.USBCTRL_REGS,
        pac.USBCTRL_DPRAM,
        clocks.usb_clock,
        true,
        &mut pac.RESETS,
    ));
    let mut serial = SerialPort::new(&usb_bus);
    let mut usb = UsbDeviceBuilder::new(&usb_bus, UsbVidPid(0x16c0, 0x27dd))
        .strings(&[StringDescriptors::default().manufacturer("Remanent").product("Remanent bench").serial_number("R1")])
        .unwrap()
        .device_class(usbd_serial::USB_CLASS_CDC)
        .build();

    let mut led = pins.gpio25.into_push_pull_output();
    let mut clock = TimerClock(timer);
    let board = BoardInfo { name: "pico", supply_mv: 3300, ntc_series_ohm: 10_000 };
    let mut device = Device::new(cfg, board, adc, tc, heater, clock.now_ms());
    defmt::info!("Remanent firmware {} on the Pico", remanent_firmware::device::FIRMWARE_VERSION);

    let mut rx = [0u8; 64];
    let mut tx = TxBuffer::new();
    let mut frame = [0u8; MAX_DEVICE_FRAME];
    loop {
        if usb.poll(&mut [&mut serial]) {
            if let Ok(n) = serial.read(&mut rx) {
                device.receive(clock.now_ms(), &rx[..n]);
            }
        }
        device.poll(clock.now_ms());
        // move frames into the buffer while whole frames fit; never block on the host
        while tx.capacity() - tx.len() >= MAX_DEVICE_FRAME {
            match device.next_frame(&mut frame) {
                Some(f) => {
                    let _ = tx.extend_from_slice(f);
                }
                None => break,
            }
        }
        if !tx.is_empty() {
            if let Ok(n) = serial.write(&tx) {
                let rest = tx.len() - n;
                tx.copy_within(n.., 0);
                tx.truncate(rest);
            }
        }
        let _ = if device.heater_duty() > 0.0 { led.set_high() } else { led.set_low() };
    }
}
