//! The whole stack: `remanent record` (the user's host tool) on a pseudo-terminal, bridged to
//! the emulated Pico's USB serial link, recording a short heat cycle from the user's image.

use std::io::{Read, Write};
use std::path::PathBuf;
use std::process::Command as Process;

use serialport::{SerialPort, TTYPort};

use crate::emu::{image, Emu};

/// The host tool: `REMANENT_BIN`, else the workspace's release build.
fn remanent_bin() -> PathBuf {
    std::env::var_os("REMANENT_BIN")
        .map(PathBuf::from)
        .unwrap_or_else(|| {
            PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../target/release/remanent")
        })
}

/// Reference at 25 °C, a 30 °C/min ramp to 35 °C, a hold: about 45 s of fixture time.
const PROFILE: &str = r#"
name = "pico-short"
description = "emulated Pico: reference at 25 °C, to 35 °C at 30 °C/min, hold"
limit_C = 45.0

[[segment]]
target_C = 25.0
ramp_C_per_min = 0.0
hold_s = 10.0

[[segment]]
target_C = 35.0
ramp_C_per_min = 30.0
hold_s = 12.0
"#;

/// The host tool's process, ended with the test whatever happens.
struct Recorder(std::process::Child);

impl Drop for Recorder {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

#[test]
#[ignore = "needs Node, rp2040js, the Pico image and a release build of remanent: firmware/ci.sh runs it"]
fn remanent_record_on_the_pico_image_keeps_every_sample_and_follows_the_setpoint() {
    let dir = tempfile::tempdir().unwrap();
    let profile = dir.path().join("profile.toml");
    std::fs::write(&profile, PROFILE).unwrap();
    let out = dir.path().join("run");
    let (mut master, slave) = TTYPort::pair().expect("a pseudo-terminal");
    let path = slave.name().expect("its path");
    let mut e = Emu::start(&image("REMANENT_PICO_IMAGE"));
    let mut child = Recorder(
        Process::new(remanent_bin())
            .args([
                "record",
                "--port",
                &path,
                "--magnet",
                "RM-N42SH-D10x5",
                "--uncalibrated",
            ])
            .arg("--full-profile")
            .arg("--profile")
            .arg(&profile)
            .arg("--out")
            .arg(&out)
            .env("REMANENT_HISTORY", "off")
            .spawn()
            .expect("remanent"),
    );
    let mut buf = [0u8; 512];
    let status = loop {
        // bytes from the host tool go to the device; the device's go back, slice by slice
        if master.bytes_to_read().unwrap_or(0) > 0 {
            let n = master.read(&mut buf).unwrap_or(0);
            e.send_bytes(&buf[..n]);
        }
        for _ in 0..5 {
            e.step();
        }
        let raw = e.take_raw();
        if !raw.is_empty() {
            master.write_all(&raw).expect("to the host tool");
        }
        if let Some(s) = child.0.try_wait().expect("remanent") {
            break s;
        }
        assert!(
            e.t_us < 180_000_000,
            "the record ended within 3 emulated minutes"
        );
    };
    drop(slave);
    assert!(status.success(), "remanent record: {status}");
    let meta = remanent::run_dir::read_meta(&out).unwrap();
    assert_eq!(meta.end_reason.as_deref(), Some("profile finished"));
    assert_eq!(meta.device.as_ref().map(|d| d.board.as_str()), Some("pico"));
    assert_eq!(meta.counts.gaps, 0, "no gaps");
    assert_eq!(
        meta.counts.frames_bad_crc + meta.counts.frames_bad_cobs + meta.counts.frames_other,
        0,
        "no rejected frames"
    );
    // the last seconds of the hold: the thermocouple sits on the setpoint
    let mut rdr = csv::Reader::from_path(out.join("samples.csv")).unwrap();
    let head = rdr.headers().unwrap().clone();
    let col = |name: &str| head.iter().position(|h| h == name).expect(name);
    let (t_col, sp_col, seq_col) = (col("temp_C"), col("setpoint_C"), col("seq"));
    let rows: Vec<csv::StringRecord> = rdr.records().map(|r| r.unwrap()).collect();
    let seqs: Vec<u64> = rows.iter().map(|r| r[seq_col].parse().unwrap()).collect();
    assert!(
        seqs.windows(2).all(|w| w[1] == w[0] + 1),
        "every sample, in order"
    );
    let held: Vec<(f64, f64)> = rows
        .iter()
        .filter_map(|r| Some((r[t_col].parse().ok()?, r[sp_col].parse().ok()?)))
        .filter(|(_, sp): &(f64, f64)| (*sp - 35.0).abs() < 0.05)
        .collect();
    assert!(
        held.len() > 100,
        "{} samples at the 35 °C setpoint",
        held.len()
    );
    let tail = &held[held.len() - 30..];
    let worst = tail
        .iter()
        .map(|(t, sp)| (t - sp).abs())
        .fold(0.0, f64::max);
    println!(
        "recorded {} samples from the emulated Pico; last 3 s of the hold within {worst:.2} K of 35 °C",
        rows.len()
    );
    assert!(worst < 1.0, "the setpoint followed to {worst:.2} K");
    assert!(
        e.max_usb_service_us <= crate::USB_SERVICE_LIMIT_US,
        "{} µs",
        e.max_usb_service_us
    );
}
