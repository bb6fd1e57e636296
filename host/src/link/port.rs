//! Opening serial ports and listing them.

use std::time::Duration;

/// Link speed used by every Remanent board, baud.
pub const BAUD: u32 = 115_200;

/// A serial port could not be opened or listed.
#[derive(Debug, thiserror::Error)]
pub enum PortError {
    /// Opening failed.
    #[error("cannot open serial port {path}: {source}{hint}")]
    Open {
        /// The port.
        path: String,
        /// Why.
        source: serialport::Error,
        /// What to try.
        hint: &'static str,
    },
    /// Listing failed.
    #[error("cannot list serial ports: {0}")]
    List(serialport::Error),
}

/// Open `path` at the link speed with a short read timeout.
pub fn open(path: &str) -> Result<Box<dyn serialport::SerialPort>, PortError> {
    serialport::new(path, BAUD).timeout(Duration::from_millis(20)).open().map_err(|source| {
        let hint = match source.kind() {
            // several rigs on one host: each port belongs to one recorder at a time
            serialport::ErrorKind::NoDevice if source.description.contains("exclusive lock") => {
                " (another program has this port open — another `remanent record`? one rig, one recorder)"
            }
            serialport::ErrorKind::NoDevice => " (is the board plugged in? `remanent ports` lists what is there)",
            serialport::ErrorKind::Io(std::io::ErrorKind::PermissionDenied) => {
                " (permission denied: add yourself to the group that owns the port, e.g. `dialout`, and log in again)"
            }
            _ => "",
        };
        PortError::Open { path: path.to_string(), source, hint }
    })
}

/// One listed port.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PortInfo {
    /// Path to open.
    pub path: String,
    /// What it is, as far as the system says.
    pub description: String,
}

/// Serial ports the system knows.
pub fn list() -> Result<Vec<PortInfo>, PortError> {
    let ports = serialport::available_ports().map_err(PortError::List)?;
    Ok(ports
        .into_iter()
        .map(|p| {
            let description = match p.port_type {
                serialport::SerialPortType::UsbPort(u) => format!(
                    "USB {:04x}:{:04x} {}",
                    u.vid,
                    u.pid,
                    u.product.unwrap_or_default()
                ),
                serialport::SerialPortType::PciPort => "PCI serial".into(),
                serialport::SerialPortType::BluetoothPort => "Bluetooth serial".into(),
                serialport::SerialPortType::Unknown => "serial".into(),
            };
            PortInfo {
                path: p.port_name,
                description,
            }
        })
        .collect())
}
