//! The host link: USB CDC-ACM serviced from the USB interrupt, so sensor conversions in the
//! main loop never delay it. The interrupt also takes every packet the host sent into a
//! receive queue: the controller holds its interrupt asserted until an OUT buffer is read, so a
//! packet left for the main loop would re-enter the handler for ever and starve the loop (the
//! watchdog then resets the chip — found by running this image on the emulated RP2040). The
//! main loop moves bytes in and out under a critical section. Each board's serial number is
//! the flash chip's unique id.

use core::cell::RefCell;

use critical_section::Mutex;
use rp2040_hal as hal;
use rp2040_hal::pac::{self, interrupt};
use usb_device::class_prelude::UsbBusAllocator;
use usb_device::prelude::{StringDescriptors, UsbDevice, UsbDeviceBuilder, UsbVidPid};
use usbd_serial::SerialPort;

/// USB ids: the vendor/product pair shared by CDC-ACM devices that tell themselves apart by
/// their manufacturer and product strings (hardware-notes/wiring.md says which ids a builder
/// may use and when a bench needs its own).
const VID_PID: UsbVidPid = UsbVidPid(0x16c0, 0x27dd);

/// Bytes from the host waiting for the main loop (several frames' worth).
type RxQueue = heapless::Deque<u8, 512>;

struct Link {
    device: UsbDevice<'static, hal::usb::UsbBus>,
    serial: SerialPort<'static, hal::usb::UsbBus>,
    rx: RxQueue,
}

static LINK: Mutex<RefCell<Option<Link>>> = Mutex::new(RefCell::new(None));

/// The flash chip's unique id as 16 hex digits; zeros when no boot ROM answers (an emulator).
pub fn serial_number(buf: &'static mut [u8; 16]) -> &'static str {
    let mut id = [0u8; 8];
    // SAFETY: the boot ROM's magic bytes at 0x10 ("Mu", version 1) are read to see whether ROM
    // routines exist; the unique-id read runs from RAM with interrupts off before anything else
    // touches the flash.
    unsafe {
        let magic = core::ptr::read_volatile(0x10 as *const [u8; 3]);
        if magic == *b"Mu\x01" {
            cortex_m::interrupt::free(|_| rp2040_flash::flash::flash_unique_id(&mut id, true));
        }
    }
    const HEX: &[u8; 16] = b"0123456789ABCDEF";
    for (i, b) in id.iter().enumerate() {
        buf[2 * i] = HEX[usize::from(b >> 4)];
        buf[2 * i + 1] = HEX[usize::from(b & 0xf)];
    }
    core::str::from_utf8(buf).unwrap_or("0000000000000000")
}

/// Build the device and start servicing it from the interrupt.
pub fn start(bus: &'static UsbBusAllocator<hal::usb::UsbBus>, serial_number: &'static str) {
    let serial = SerialPort::new(bus);
    let strings = StringDescriptors::default()
        .manufacturer("Remanent")
        .product("Remanent bench")
        .serial_number(serial_number);
    let Ok(builder) = UsbDeviceBuilder::new(bus, VID_PID).strings(&[strings]) else {
        return; // one language: cannot fail
    };
    let device = builder.device_class(usbd_serial::USB_CLASS_CDC).build();
    critical_section::with(|cs| {
        LINK.borrow(cs).replace(Some(Link {
            device,
            serial,
            rx: RxQueue::new(),
        }))
    });
    // SAFETY: the handler only touches LINK, under a critical section.
    unsafe { pac::NVIC::unmask(pac::Interrupt::USBCTRL_IRQ) };
}

/// Bytes from the host, if any.
pub fn read(buf: &mut [u8]) -> usize {
    critical_section::with(|cs| match LINK.borrow_ref_mut(cs).as_mut() {
        Some(l) => {
            let mut n = 0;
            while n < buf.len() {
                match l.rx.pop_front() {
                    Some(b) => {
                        buf[n] = b;
                        n += 1;
                    }
                    None => break,
                }
            }
            n
        }
        None => 0,
    })
}

/// Queue bytes for the host; how many were taken.
pub fn write(buf: &[u8]) -> usize {
    critical_section::with(|cs| match LINK.borrow_ref_mut(cs).as_mut() {
        Some(l) => l.serial.write(buf).unwrap_or(0),
        None => 0,
    })
}

#[interrupt]
fn USBCTRL_IRQ() {
    critical_section::with(|cs| {
        if let Some(l) = LINK.borrow_ref_mut(cs).as_mut() {
            l.device.poll(&mut [&mut l.serial]);
            // take what the host sent, so its buffer is free and the interrupt clears; a full
            // queue drops bytes (the frame's CRC then fails and the host sends it again)
            let mut packet = [0u8; 64];
            while let Ok(n @ 1..) = l.serial.read(&mut packet) {
                for &b in &packet[..n] {
                    let _ = l.rx.push_back(b);
                }
            }
        }
    });
}
