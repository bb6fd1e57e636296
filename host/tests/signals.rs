//! A record stopped by a termination signal (a service manager, a closed terminal) still turns
//! the heater off through the device and says so in the run — the real binary, a virtual rig
//! on a pseudo-terminal, and `kill -TERM`.

use std::io::{BufRead, BufReader};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_remanent");

struct Reap(Child);
impl Drop for Reap {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

fn wait_until(limit: Duration, mut cond: impl FnMut() -> bool) -> bool {
    let start = Instant::now();
    while start.elapsed() < limit {
        if cond() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    false
}

fn signal_during_a_record(signal: &str) {
    let mut rig = Reap(
        Command::new(BIN)
            .args(["virtual-rig", "--speed", "20"])
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap(),
    );
    let mut port = String::new();
    BufReader::new(rig.0.stdout.take().unwrap())
        .read_line(&mut port)
        .unwrap();
    let port = port.trim().to_string();
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    let mut rec = Reap(
        Command::new(BIN)
            .args(["record", "--port", &port, "--magnet", "RM-N42SH-D10x5"])
            .args([
                "--profile",
                "quick-alpha",
                "--allow-over-rating",
                "--lot",
                "L-SIG",
            ])
            .env("REMANENT_HISTORY", dir.path().join("history.sqlite"))
            .arg("--out")
            .arg(&out)
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap(),
    );
    let rows = || {
        std::fs::read_to_string(out.join("samples.csv"))
            .map(|t| t.lines().count())
            .unwrap_or(0)
    };
    assert!(
        wait_until(Duration::from_secs(60), || rows() > 200),
        "no samples"
    );
    let pid = rec.0.id().to_string();
    assert!(Command::new("kill")
        .args([signal, &pid])
        .status()
        .unwrap()
        .success());
    let mut status = None;
    assert!(
        wait_until(Duration::from_secs(20), || {
            status = rec.0.try_wait().unwrap();
            status.is_some()
        }),
        "the recorder did not end after {signal}"
    );
    assert_eq!(status.unwrap().code(), Some(3), "ended early");
    let meta = std::fs::read_to_string(out.join("run.toml")).unwrap();
    assert!(meta.contains("stopped"), "{meta}");
    let events = std::fs::read_to_string(out.join("events.csv")).unwrap();
    assert!(events.contains("stop acknowledged; heater off"), "{events}");
    // the record, stopped as it is, went into the history as it ended (read back with the
    // SQLite library itself, not through the program)
    let db = rusqlite::Connection::open(dir.path().join("history.sqlite")).unwrap();
    let (lot, end): (String, String) = db
        .query_row("SELECT lot, end_reason FROM runs", [], |r| {
            Ok((r.get(0)?, r.get(1)?))
        })
        .unwrap();
    assert_eq!(lot, "L-SIG");
    assert!(end.contains("stopped"), "{end}");
    drop(rig);
}

#[test]
fn a_termination_signal_stops_the_heater_and_the_record_says_so() {
    signal_during_a_record("-TERM");
}

#[test]
fn a_hang_up_stops_the_heater_and_the_record_says_so() {
    signal_during_a_record("-HUP");
}
