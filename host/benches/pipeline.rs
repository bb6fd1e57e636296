//! Host pipeline benchmark: recorder throughput against the serial link's rate, analysis of
//! large records (time, peak memory, scaling) and plot rendering. Prints a table.
//!
//! Run: `cargo bench -p remanent`

use std::io::{self, Read, Write};
use std::time::{Duration, Instant};

use remanent::analysis::{analyze, Context};
use remanent::calibration::Calibration;
use remanent::input::dataset::Series;
use remanent::jobs::record::{record, Quiet, RecordOptions};
use remanent::magnets;
use remanent::profiles::ProfileSpec;
use remanent::specs::SpecTable;
use remanent_protocol::decoder::HostDecoder;
use remanent_protocol::*;
use remanent_rig_model::RigParams;

/// A fake device that answers the handshake and the start, then streams `n` samples as fast
/// as they are read, then reports the end of the profile.
struct StreamingDevice {
    decoder: HostDecoder,
    out: Vec<u8>,
    pos: usize,
    n: u32,
    sent: u32,
    started: bool,
}

impl StreamingDevice {
    fn push(&mut self, msg: &DeviceMsg) {
        let mut buf = [0u8; MAX_FRAME];
        self.out.extend_from_slice(encode(msg, &mut buf).unwrap());
    }
}

impl Write for StreamingDevice {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        let mut cmds = Vec::new();
        self.decoder.feed(buf, |r| cmds.extend(r.ok()));
        for c in cmds {
            match c.command {
                Command::Hello(_) => {
                    let (_, hello) = examples::device()[0].clone();
                    self.push(&hello);
                    // like the firmware: the beacon names the newest sample taken (none yet)
                    self.push(&DeviceMsg::Beacon(Beacon {
                        seq: self.sent.wrapping_sub(1),
                        epoch_seq: 0,
                        epoch_ms: 0,
                        period_ms: 10,
                        dropped_total: 0,
                        state: RunState::Idle,
                        setpoint_tenth_c: 0,
                    }));
                }
                Command::Start(_) => {
                    self.push(&DeviceMsg::Ack(Ack { id: c.id }));
                    self.started = true;
                }
                _ => {}
            }
        }
        Ok(buf.len())
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

impl Read for StreamingDevice {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if self.pos >= self.out.len() {
            self.out.clear();
            self.pos = 0;
            let batch = if self.started { 256 } else { 1 };
            for _ in 0..batch {
                if self.sent >= self.n {
                    if self.started {
                        self.push(&DeviceMsg::State(StateReport {
                            time_ms: self.sent * 10,
                            state: RunState::Idle,
                            segment: 0,
                        }));
                    }
                    break;
                }
                let mut s = examples::sample();
                s.seq_lo = self.sent as u8;
                s.hall_code = 12_000 + (self.sent % 50) as i16;
                self.push(&DeviceMsg::Sample(s));
                self.sent += 1;
                if self.sent.is_multiple_of(100) {
                    self.push(&DeviceMsg::Beacon(Beacon {
                        seq: self.sent - 1,
                        epoch_seq: 0,
                        epoch_ms: 0,
                        period_ms: 10,
                        dropped_total: 0,
                        state: RunState::Profile,
                        setpoint_tenth_c: 500,
                    }));
                }
            }
        }
        let n = (self.out.len() - self.pos).min(buf.len());
        buf[..n].copy_from_slice(&self.out[self.pos..self.pos + n]);
        self.pos += n;
        Ok(n)
    }
}

fn cpu_seconds() -> f64 {
    // utime + stime from /proc/self/stat, in clock ticks of 1/100 s (Linux)
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    let after = stat.rsplit_once(')').map(|x| x.1).unwrap_or("");
    let f: Vec<&str> = after.split_whitespace().collect();
    let t = |i: usize| f.get(i).and_then(|v| v.parse::<f64>().ok()).unwrap_or(0.0);
    (t(11) + t(12)) / 100.0
}

fn peak_rss_mb() -> f64 {
    let s = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    s.lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse::<f64>().ok())
        .unwrap_or(0.0)
        / 1024.0
}

/// A synthetic heat cycle of `n` samples at 10 Hz: ramp up, hold, ramp down, with a lagged
/// magnet, α = −0.11 %/°C and noise.
fn synthetic(n: usize) -> Series {
    let mut s = Series::default();
    let dt = 0.1;
    let top = n as f64 * dt;
    let mut tm = 25.0;
    let mut state = 12345u64;
    let mut noise = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 33) as f64 / (1u64 << 31) as f64 - 0.5) * 0.05
    };
    for i in 0..n {
        let t = i as f64 * dt;
        let x = t / top;
        let tc = if x < 0.05 {
            25.0
        } else if x < 0.45 {
            25.0 + (x - 0.05) / 0.4 * 125.0
        } else if x < 0.55 {
            150.0
        } else if x < 0.95 {
            150.0 - (x - 0.55) / 0.4 * 125.0
        } else {
            25.0
        };
        tm += (tc - tm) * (1.0 - (-dt / 40.0f64).exp());
        s.time_s.push(t);
        s.temp_c.push(tc + noise());
        s.flux_mt
            .push(220.0 * (1.0 - 0.0011 * (tm - 20.0)) + noise());
    }
    s
}

fn main() {
    let ctx = Context {
        calibration: None,
        magnet: None,
        specs: SpecTable::builtin(),
        default_tc_gain_pct: 0.75,
        reference: None,
    };
    println!("| measure | value | target |");
    println!("|---|---|---|");

    // recorder
    let m = magnets::resolve("RM-N42SH-D10x5").unwrap();
    let dir = std::env::temp_dir().join(format!("remanent-bench-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let n = 400_000u32;
    let dev = StreamingDevice {
        decoder: HostDecoder::for_host_msgs(),
        out: Vec::new(),
        pos: 0,
        n,
        sent: 0,
        started: false,
    };
    let opts = RecordOptions {
        port_label: "bench".into(),
        // the fake device is no virtual rig: measure without a calibration, as a test bench
        policy: remanent::calibration::policy::Policy {
            uncalibrated: true,
            ..Default::default()
        },
        silence_timeout: Duration::from_secs(5),
        preroll_s: 0.0,
        ..RecordOptions::new(
            m.info,
            ProfileSpec::resolve("quick-alpha").unwrap(),
            Calibration::virtual_rig(&RigParams::REFERENCE),
            dir.join("run"),
        )
    };
    let (c0, w0) = (cpu_seconds(), Instant::now());
    let summary = record(dev, opts, &mut Quiet).unwrap();
    let (cpu, wall) = (cpu_seconds() - c0, w0.elapsed().as_secs_f64());
    assert_eq!(summary.counts.samples, u64::from(n));
    let rate = f64::from(n) / wall;
    let link = 115_200.0 / 10.0 / 16.0;
    println!("| recorder: samples/s sustained (decode, place, convert, write CSV and raw) | {rate:.0} | ≥ {link:.0} (115200 baud) |");
    println!(
        "| recorder: host CPU at the link's full rate | {:.2} % of one core | — |",
        cpu / f64::from(n) * link * 100.0
    );
    let _ = std::fs::remove_dir_all(&dir);

    // analysis scaling
    let mut per_sample = Vec::new();
    for n in [250_000usize, 500_000, 1_000_000] {
        let s = synthetic(n);
        let t0 = Instant::now();
        let a = analyze(&s, &ctx).unwrap();
        let dt = t0.elapsed().as_secs_f64();
        per_sample.push(dt / n as f64);
        assert!(
            (a.alpha.pct_per_c + 0.11).abs() < 0.005,
            "α {}",
            a.alpha.pct_per_c
        );
        println!(
            "| analysis of {n} samples | {:.3} s | {} |",
            dt,
            if n == 1_000_000 { "< 1 s" } else { "linear" }
        );
    }
    println!(
        "| analysis: time per sample, 250 k → 1 M | {:.2} µs → {:.2} µs | no worse than linear |",
        per_sample[0] * 1e6,
        per_sample[2] * 1e6
    );
    println!(
        "| peak memory of the process so far | {:.0} MB | < 300 MB |",
        peak_rss_mb()
    );

    // plots of a 1 M-sample record
    let s = synthetic(1_000_000);
    let (a, traces) = remanent::analysis::analyze_traced(&s, &ctx).unwrap();
    let pdir = std::env::temp_dir().join(format!("remanent-bench-plots-{}", std::process::id()));
    std::fs::create_dir_all(&pdir).unwrap();
    let t0 = Instant::now();
    let figures = remanent::plots::run_figures(
        &s,
        &a,
        &traces,
        "benchmark",
        &remanent::units::DisplayUnits::SI,
    )
    .unwrap();
    for f in &figures {
        remanent::output::write_set(&pdir, &f.files(), true).unwrap();
    }
    println!(
        "| plots of a 1 M-sample record (3 plots, PNG and SVG) | {:.3} s | < 2 s |",
        t0.elapsed().as_secs_f64()
    );
    let _ = std::fs::remove_dir_all(&pdir);
    println!(
        "| peak memory of the process | {:.0} MB | < 300 MB |",
        peak_rss_mb()
    );
}
