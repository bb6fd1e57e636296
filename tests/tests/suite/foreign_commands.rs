//! Another program writing to the bench's link while a record runs: its Stop ends the record
//! for what it was, not as a finished profile. Before, a Stop the recorder never sent ended the
//! record as "profile finished" with exit 0 and 1000 of 1720 rows.

use std::io::{Read, Write};

use remanent::calibration::Calibration;
use remanent::jobs::record::{record, Quiet, RecordEnd, RecordOptions};
use remanent::magnets;
use remanent::profiles::ProfileSpec;
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

/// Record the demo N42SH with `profile` while a second writer sends `command` after `at_read`
/// reads (each 0.1 s of device time); the summary and the folder holding `run`.
fn record_beside(
    profile: &str,
    at_read: usize,
    command: Command,
    auto_end: bool,
) -> (remanent::jobs::record::RecordSummary, tempfile::TempDir) {
    let part = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let opts = VirtualRigOptions::new(part.model.unwrap());
    let params = opts.params;
    let dir = tempfile::tempdir().unwrap();
    let port = SecondWriter {
        port: SimulatedPort::new(opts),
        reads: 0,
        at_read,
        command: Some(command),
    };
    let rec = RecordOptions {
        port_label: "simulated, with a second writer".into(),
        silence_timeout: std::time::Duration::from_secs(5),
        auto_end: auto_end.then(Default::default),
        ..RecordOptions::new(
            part.info,
            ProfileSpec::resolve(profile).unwrap(),
            Calibration::virtual_rig(&params),
            dir.path().join("run"),
        )
    };
    (record(port, rec, &mut Quiet).unwrap(), dir)
}

#[test]
fn a_stop_from_another_program_is_named_and_is_no_finished_profile() {
    // the Stop comes about 10 minutes in
    let (summary, dir) = record_beside("quick-alpha", 6000, Command::Stop, false);
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

#[test]
fn a_configure_from_another_program_neither_corrupts_time_nor_goes_unreported() {
    // before: the samples held across the device's new sampling epoch were timed from it and
    // wrapped to 4.3e8 s (572 rows), and nothing said the period had changed
    // 20 s into the minute at rest, while the device is idle and accepts it
    let configure = Command::Configure(remanent_protocol::SamplingConfig {
        period_ms: 200,
        oversample: 4,
    });
    let (summary, dir) = record_beside("rapid", 200, configure, true);
    let run = dir.path().join("run");
    let samples = std::fs::read_to_string(run.join("samples.csv")).unwrap();
    let times: Vec<f64> = samples
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap().parse().unwrap())
        .collect();
    assert!(times.len() > 1000, "{} rows", times.len());
    let last = *times.last().unwrap();
    assert!(last < 3600.0, "the record's last sample at {last} s");
    for w in times.windows(2) {
        assert!(
            w[1] > w[0] && w[1] - w[0] < 1.0,
            "device time steps {} → {} s",
            w[0],
            w[1]
        );
    }
    let events = std::fs::read_to_string(run.join("events.csv")).unwrap();
    let line = events
        .lines()
        .find(|l| l.contains(",resampled,"))
        .unwrap_or_else(|| panic!("no resampled event:\n{events}"));
    assert!(
        line.contains("100 ms") && line.contains("200 ms") && line.contains("another program"),
        "{line}"
    );
    assert!(summary.end.is_complete(), "{:?}", summary.end);
}

#[test]
fn the_recorders_own_sampling_period_is_kept_and_is_no_news() {
    // `record --sample-period-ms 50`: the recorder asks for it before recording; the samples
    // come 50 ms apart and the change is not reported as another program's
    let part = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let opts = VirtualRigOptions::new(part.model.unwrap());
    let params = opts.params;
    let dir = tempfile::tempdir().unwrap();
    let rec = RecordOptions {
        port_label: "simulated".into(),
        silence_timeout: std::time::Duration::from_secs(5),
        auto_end: Some(Default::default()),
        sampling: Some(remanent_protocol::SamplingConfig {
            period_ms: 50,
            oversample: 4,
        }),
        ..RecordOptions::new(
            part.info,
            ProfileSpec::resolve("rapid").unwrap(),
            Calibration::virtual_rig(&params),
            dir.path().join("run"),
        )
    };
    let summary = record(SimulatedPort::new(opts), rec, &mut Quiet).unwrap();
    assert!(summary.end.is_complete(), "{:?}", summary.end);
    let run = dir.path().join("run");
    let samples = std::fs::read_to_string(run.join("samples.csv")).unwrap();
    let t: Vec<f64> = samples
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap().parse().unwrap())
        .collect();
    let mut steps: Vec<f64> = t.windows(2).map(|w| w[1] - w[0]).collect();
    steps.sort_by(f64::total_cmp);
    let median = steps[steps.len() / 2];
    assert!((median - 0.05).abs() < 0.005, "median step {median} s");
    let events = std::fs::read_to_string(run.join("events.csv")).unwrap();
    assert!(!events.contains(",resampled,"), "{events}");
}
