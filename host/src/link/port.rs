//! Opening serial ports and listing them.

use std::time::Duration;

/// Link speed used by every Remanent board, baud.
pub const BAUD: u32 = 115_200;

/// A serial port could not be opened or listed.
#[derive(Debug, thiserror::Error)]
pub enum PortError {
    /// Opening failed: what happened, in words, and what to try.
    #[error("{0}")]
    Open(String),
    /// Listing failed.
    #[error("cannot list serial ports: {0}")]
    List(serialport::Error),
}

/// Open `path` at the link speed with a short read timeout.
pub fn open(path: &str) -> Result<Box<dyn serialport::SerialPort>, PortError> {
    serialport::new(path, BAUD)
        .timeout(Duration::from_millis(20))
        .open()
        .map_err(|e| PortError::Open(open_words(path, &e)))
}

/// Each thing once, in the user's terms: what is wrong with `path`, and what to try.
fn open_words(path: &str, e: &serialport::Error) -> String {
    use serialport::ErrorKind;
    let listed = "`remanent ports` lists the serial ports there are";
    // the system's words, once (some platforms repeat them: "No such file or directory: No such…")
    let said = e.description.split(": ").next().unwrap_or_default();
    match e.kind() {
        ErrorKind::Io(std::io::ErrorKind::NotFound) => {
            format!("no serial port {path} (is the board plugged in? {listed})")
        }
        _ if said.contains("No such file") => {
            format!("no serial port {path} (is the board plugged in? {listed})")
        }
        _ if said.contains("typewriter") || said.contains("Inappropriate ioctl") => {
            format!("{path} is not a serial port ({listed})")
        }
        // several rigs on one host: each port belongs to one recorder at a time
        ErrorKind::NoDevice if said.contains("exclusive lock") => format!(
            "serial port {path} is in use by another program (another `remanent record`? one rig, one recorder)"
        ),
        ErrorKind::NoDevice => {
            format!("serial port {path} has no device behind it (is the board plugged in? {listed})")
        }
        ErrorKind::Io(std::io::ErrorKind::PermissionDenied) => format!(
            "no permission to open serial port {path}: add yourself to the group that owns it (e.g. `dialout`) and log in again"
        ),
        _ => format!("cannot open serial port {path}: {said}"),
    }
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_missing_port_and_a_file_that_is_no_port_are_named_once_in_the_users_terms() {
        // before: "No such file or directory: No such file or directory" and
        // "Not a typewriter: Not a typewriter"
        let missing = open("/dev/ttyUSB-remanent-absent")
            .err()
            .unwrap()
            .to_string();
        assert!(
            missing.starts_with("no serial port /dev/ttyUSB-remanent-absent"),
            "{missing}"
        );
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("notes.txt");
        std::fs::write(&file, "not a port").unwrap();
        let path = file.display().to_string();
        let not_port = open(&path).err().unwrap().to_string();
        assert_eq!(
            not_port,
            format!(
                "{path} is not a serial port (`remanent ports` lists the serial ports there are)"
            )
        );
    }
}
