//! `remanent ports`: the serial ports the system knows.

use std::process::ExitCode;

pub fn run() -> anyhow::Result<ExitCode> {
    let ports = remanent::link::port::list()?;
    if ports.is_empty() {
        println!("no serial ports found (is the board plugged in? on Linux, USB serial shows as /dev/ttyACM* or /dev/ttyUSB*)");
    }
    for p in ports {
        println!("{:<24} {}", p.path, p.description);
    }
    Ok(ExitCode::SUCCESS)
}
