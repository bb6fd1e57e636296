//! Analysis-input benchmark: reading a 1 M-row logger CSV, `analyze` on a 1 M-row run
//! directory (read, re-convert, analyse), and the peak memory of `analyze` on a 5 M-row run
//! directory (in a child process, so its peak is its own). Prints a table.
//!
//! Run: `cargo bench -p remanent --bench analysis_input`

use std::io::Write;
use std::path::Path;
use std::process::Command;
use std::time::Instant;

use remanent::input::dataset::{self, CsvOptions};
use remanent::jobs::{load_and_analyze, InputRequest};
use remanent::magnets;
use remanent::profiles::ProfileSpec;
use remanent::run_dir::{Counts, RunMeta, SampleRow, META_FILE, SAMPLES_FILE};
use remanent_physics::{adc, type_k};
use remanent_protocol::ThermoWord;
use remanent_rig_model::RigParams;

/// Sample interval of the synthetic records, s.
const DT_S: f64 = 0.1;

/// A heat cycle of `n` samples: rest, ramp to 150 °C, hold, ramp back, rest; the magnet 40 s
/// behind the thermocouple, α = −0.11 %/°C; as (time, thermocouple °C, flux mT).
fn cycle(n: usize) -> impl Iterator<Item = (f64, f64, f64)> {
    let top = n as f64 * DT_S;
    let mut tm = 25.0;
    let mut state = 12345u64;
    (0..n).map(move |i| {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        let noise = ((state >> 33) as f64 / (1u64 << 31) as f64 - 0.5) * 0.05;
        let t = i as f64 * DT_S;
        let x = t / top;
        let tc = match x {
            x if x < 0.05 => 25.0,
            x if x < 0.45 => 25.0 + (x - 0.05) / 0.4 * 125.0,
            x if x < 0.55 => 150.0,
            x if x < 0.95 => 150.0 - (x - 0.55) / 0.4 * 125.0,
            _ => 25.0,
        };
        tm += (tc - tm) * (1.0 - (-DT_S / 40.0f64).exp());
        (t, tc + noise, 220.0 * (1.0 - 0.0011 * (tm - 20.0)) + noise)
    })
}

/// A run directory of `n` samples, written as the recorder writes one.
fn write_run(dir: &Path, n: usize) {
    std::fs::create_dir_all(dir).unwrap();
    let cal = remanent::calibration::Calibration::virtual_rig(&RigParams::REFERENCE);
    let meta = RunMeta {
        software: "bench".into(),
        started_utc: "2026-12-02T00:00:00Z".into(),
        finished_utc: None,
        end_reason: None,
        port: "bench".into(),
        magnet: magnets::resolve("RM-N42SH-D10x5").unwrap().info,
        device: None,
        profile: ProfileSpec::resolve("quick-alpha").unwrap(),
        calibration: cal,
        calibration_basis: None,
        counts: Counts::default(),
        inspection: Default::default(),
    };
    std::fs::write(dir.join(META_FILE), toml::to_string(&meta).unwrap()).unwrap();
    let file = std::fs::File::create(dir.join(SAMPLES_FILE)).unwrap();
    let mut w = csv::Writer::from_writer(std::io::BufWriter::new(file));
    let probe_c = 25.0;
    let probe_code = adc::code(
        cal.ntc.thermistor.divider_mv(probe_c),
        cal.ntc.full_scale_mv,
    );
    for (i, (t, tc, b)) in cycle(n).enumerate() {
        let reported = type_k::chip_reading_c(tc, 25.0);
        let word = ThermoWord::from_parts((reported * 4.0).round() as i16, 25 * 16, None);
        let hall_mv = cal.hall.sensor.output_mv(b, probe_c);
        w.serialize(SampleRow {
            seq: i as u32,
            device_time_s: t,
            hall_code: adc::code(hall_mv, cal.hall.full_scale_mv),
            probe_code,
            thermo_word: word,
            heater_duty_pct: 0.0,
            heater_on: 0,
            fault_latched: 0,
            tc_fault: String::new(),
            temp_c: Some(tc),
            cold_junction_c: 25.0,
            probe_temp_c: Some(probe_c),
            flux_mt: Some(b),
            setpoint_c: None,
        })
        .unwrap();
    }
    w.flush().unwrap();
}

fn peak_rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok())
        })
        .unwrap_or(0.0)
        / 1024.0
}

fn analyse_dir(dir: &Path) -> f64 {
    let req = InputRequest {
        input: dir.to_path_buf(),
        ..InputRequest::default()
    };
    let t0 = Instant::now();
    let (_, a) = load_and_analyze(&req).unwrap();
    let wall = t0.elapsed().as_secs_f64();
    assert!(
        (a.alpha.pct_per_c + 0.11).abs() < 0.005,
        "α {}",
        a.alpha.pct_per_c
    );
    wall
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if let Some(i) = args.iter().position(|a| a == "--write-run") {
        write_run(Path::new(&args[i + 1]), args[i + 2].parse().unwrap());
        return;
    }
    if let Some(i) = args.iter().position(|a| a == "--child-analyze") {
        analyse_dir(Path::new(&args[i + 1]));
        println!("{:.1}", peak_rss_mb());
        return;
    }
    let root = std::env::temp_dir().join(format!("remanent-bench-input-{}", std::process::id()));
    std::fs::create_dir_all(&root).unwrap();
    println!("| measure | value | target |");
    println!("|---|---|---|");

    let log = root.join("log.csv");
    let mut f = std::io::BufWriter::new(std::fs::File::create(&log).unwrap());
    writeln!(f, "time_s,temp_C,flux_mT").unwrap();
    for (t, tc, b) in cycle(1_000_000) {
        writeln!(f, "{t:.2},{tc:.3},{b:.4}").unwrap();
    }
    drop(f);
    let best = (0..3)
        .map(|_| {
            let t0 = Instant::now();
            let s = dataset::load_csv(&log, &CsvOptions::default()).unwrap();
            assert_eq!(s.time_s.len(), 1_000_000);
            t0.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min);
    println!("| reading a 1 M-row logger CSV (best of 3) | {best:.3} s | — |");

    let run1 = root.join("run-1m");
    write_run(&run1, 1_000_000);
    let best = (0..3)
        .map(|_| analyse_dir(&run1))
        .fold(f64::INFINITY, f64::min);
    println!("| `analyze` of a 1 M-row run directory (best of 3) | {best:.3} s | < 0.3 s |");
    let req = InputRequest {
        input: run1.clone(),
        ..InputRequest::default()
    };
    let t0 = Instant::now();
    let loaded = remanent::jobs::analyze_input::load(&req).unwrap();
    let t_load = t0.elapsed().as_secs_f64();
    let t0 = Instant::now();
    loaded.analyze(&run1).unwrap();
    println!(
        "| … of which reading and converting / analysing | {t_load:.3} s / {:.3} s | — |",
        t0.elapsed().as_secs_f64()
    );
    std::fs::remove_dir_all(&run1).unwrap();

    let run5 = root.join("run-5m");
    write_run(&run5, 5_000_000);
    let out = Command::new(std::env::current_exe().unwrap())
        .arg("--child-analyze")
        .arg(&run5)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let rss = String::from_utf8_lossy(&out.stdout).trim().to_string();
    println!("| peak memory of `analyze` on a 5 M-row run directory | {rss} MB | < 200 MB |");
    let _ = std::fs::remove_dir_all(&root);
}
