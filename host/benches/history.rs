//! History store benchmark: importing 100 k analyses, a supplier's trend over 100 k runs, a
//! lot's runs, on SQLite and (when `REMANENT_BENCH_PG_URL` names a server, as `.ci/postgres.sh`
//! prints) on PostgreSQL beside it. Prints a table.
//!
//! Run: `cargo bench -p remanent --bench history`

use std::time::Instant;

use remanent::analysis::{analyze, Analysis, Context};
use remanent::history::{Filter, Location, RunEntry, Store};
use remanent::input::dataset::Series;
use remanent::specs::SpecTable;

const RUNS: usize = 100_000;
const BATCH: usize = 1_000;
const SUPPLIER: &str = "Bench Supplier";

/// One real analysis of a synthetic cycle (traces dropped: the store keeps none).
fn template() -> Analysis {
    let mut s = Series::default();
    for i in 0..20_000 {
        let t = i as f64 * 0.5;
        let x = t / 10_000.0;
        let tc = 25.0 + 100.0 * (std::f64::consts::PI * x).sin();
        s.time_s.push(t);
        s.temp_c.push(tc);
        s.flux_mt.push(220.0 * (1.0 - 0.0011 * (tc - 20.0)));
    }
    let ctx = Context {
        calibration: None,
        magnet: None,
        specs: SpecTable::builtin(),
        default_tc_gain_pct: 0.75,
        reference: None,
    };
    // the result alone: its traces are never kept
    analyze(&s, &ctx).unwrap()
}

/// Run `k`: one supplier, lots of 100, a day apart every 50 runs, α wandering a little.
fn item(k: usize, a: &Analysis) -> (RunEntry, Analysis) {
    let mut a = a.clone();
    a.alpha.pct_per_c += 1e-4 * ((k as f64) * 0.37).sin();
    a.provenance.analysed_utc = remanent::timestamps::format_utc(1_767_225_600 + k as u64 * 1728);
    let e = RunEntry {
        run_uid: format!("bench-{k:06}"),
        run_name: format!("run-{k:06}"),
        source: "run_dir".into(),
        location: format!("/bench/run-{k:06}"),
        host: "bench".into(),
        magnet_id: Some(format!("M-{k:06}")),
        grade: Some("N42SH".into()),
        started_utc: Some(a.provenance.analysed_utc.clone()),
        inspection: remanent::inspection::Inspection {
            lot: Some(format!("LOT-{:04}", k / 100)),
            supplier: Some(SUPPLIER.into()),
            ..Default::default()
        },
        ..Default::default()
    };
    (e, a)
}

fn best_of(n: usize, mut f: impl FnMut()) -> f64 {
    (0..n)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

fn measure(name: &str, at: &Location, a: &Analysis) {
    let mut store = Store::open(at).unwrap();
    let t0 = Instant::now();
    let mut k = 0;
    while k < RUNS {
        let items: Vec<_> = (k..(k + BATCH).min(RUNS)).map(|i| item(i, a)).collect();
        let refs: Vec<(RunEntry, &Analysis)> = items.iter().map(|(e, a)| (e.clone(), a)).collect();
        store.put_many(&refs).unwrap();
        k += BATCH;
    }
    let import = t0.elapsed().as_secs_f64();
    let t1 = Instant::now();
    for i in RUNS..RUNS + 200 {
        let (e, a) = item(i, a);
        store.put_analysis(&e, &a).unwrap();
    }
    let single_ms = t1.elapsed().as_secs_f64() / 200.0 * 1e3;
    let mut n = 0;
    let trend = best_of(5, || n = store.trend(SUPPLIER, None).unwrap().len());
    assert_eq!(n, RUNS + 200);
    let lot = best_of(5, || {
        let f = Filter {
            lot: Some("LOT-0420".into()),
            ..Default::default()
        };
        assert_eq!(store.find(&f).unwrap().len(), 100);
    });
    println!(
        "| {name}: import {RUNS} analyses with their runs ({BATCH} per transaction) | {import:.1} s ({:.0}/s) | — |",
        RUNS as f64 / import
    );
    println!(
        "| {name}: one analysis stored as it happens (own transaction) | {single_ms:.2} ms | — |"
    );
    let goal = if name == "SQLite" { "< 100 ms" } else { "—" };
    println!(
        "| {name}: a supplier's trend over {} runs (best of 5) | {:.0} ms | {goal} |",
        RUNS + 200,
        trend * 1e3
    );
    println!(
        "| {name}: one lot's runs (best of 5) | {:.2} ms | — |",
        lot * 1e3
    );
}

fn main() {
    let a = template();
    println!("| measure | value | goal |");
    println!("|---|---|---|");
    let dir = tempfile::tempdir().unwrap();
    measure(
        "SQLite",
        &Location::Sqlite(dir.path().join("bench.sqlite")),
        &a,
    );
    match std::env::var("REMANENT_BENCH_PG_URL") {
        Ok(url) => {
            let mut admin = postgres::Client::connect(&url, postgres::NoTls).unwrap();
            let db = format!("remanent_bench_{}", std::process::id());
            admin.batch_execute(&format!("CREATE DATABASE {db}")).unwrap();
            let base = url.rsplit_once('/').unwrap().0;
            measure("PostgreSQL", &Location::Postgres(format!("{base}/{db}")), &a);
            admin.batch_execute(&format!("DROP DATABASE {db} WITH (FORCE)")).unwrap();
        }
        Err(_) => println!("| PostgreSQL | not measured: set REMANENT_BENCH_PG_URL (`.ci/postgres.sh` prints one) | — |"),
    }
}
