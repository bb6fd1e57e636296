//! Another program writing to the bench's link while a record runs: its Stop ends the record
//! for what it was, not as a finished profile. Before, a Stop the recorder never sent ended the
//! record as "profile finished" with exit 0 and 1000 of 1720 rows.

use std::io::{Read, Write};

use remanent::calibration::Calibration;
use remanent::magnets;
use remanent::profiles::ProfileSpec;
use remanent::record::{record, Quiet, RecordEnd, RecordOptions};
use remanent::virtual_rig::{SimulatedPort, VirtualRigOptions};
use remanent_protocol::{encode, Command, HostMsg, MAX_HOST_FRAME};

/// The simulated bench with a second writer on its link: after `at_read` reads it sends
/// `command` as another program would (its own id), once.
struct SecondWriter {
    port: SimulatedPort,
    reads: usize,
    at_read: usize,
    command: Option<Command>,
}

impl Read for SecondWriter {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        self.reads += 1;
        if self.reads >= self.at_read {
            if let Some(command) = self.command.take() {
                let mut frame = [0u8; MAX_HOST_FRAME];
                let bytes = encode(
                    &HostMsg {
                        id: 0xBEEF,
                        command,
                    },
                    &mut frame,
                )
                .unwrap();
                self.port.write_all(bytes)?;
            }
        }
        self.port.read(buf)
    }
}

impl Write for SecondWriter {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.port.write(buf)
    }
    fn flush(&mut self) -> std::io::Result<()> {
        self.port.flush()
    }
}

#[test]
fn a_stop_from_another_program_is_named_and_is_no_finished_profile() {
    let part = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let opts = VirtualRigOptions::new(part.model.unwrap());
    let params = opts.params;
    let profile = ProfileSpec::resolve("quick-alpha").unwrap();
    let dir = tempfile::tempdir().unwrap();
    let port = SecondWriter {
        port: SimulatedPort::new(opts),
        reads: 0,
        // each read is 0.1 s of device time: the Stop comes about 10 minutes in
        at_read: 6000,
        command: Some(Command::Stop),
    };
    let rec = RecordOptions {
        port_label: "simulated, with a second writer".into(),
        silence_timeout: std::time::Duration::from_secs(5),
        ..RecordOptions::new(
            part.info,
            profile,
            Calibration::virtual_rig(&params),
            dir.path().join("run"),
        )
    };
    let summary = record(port, rec, &mut Quiet).unwrap();
    assert!(
        matches!(summary.end, RecordEnd::StoppedElsewhere { .. }),
        "{:?}",
        summary.end
    );
    assert!(!summary.end.is_complete());
    assert!(
        summary.end.describe().contains("another program"),
        "{}",
        summary.end.describe()
    );
    let meta = std::fs::read_to_string(dir.path().join("run").join("run.toml")).unwrap();
    assert!(
        meta.contains("another program"),
        "the end's reason is kept: {meta}"
    );
}
