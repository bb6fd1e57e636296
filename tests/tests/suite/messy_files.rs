//! Loggers' files as they come: one record from the independent bench model written the ways
//! other loggers write it, each read back to the same α as the clean file. Unit conversions
//! are the SI definitions (1 G = 0.1 mT, 1 kG = 100 mT; °F = °C·9/5 + 32; K = °C + 273.15).

use crate::util::ctx;
use remanent::analysis::analyze;
use remanent::input::dataset::{self, CsvOptions, InputError};

use crate::bench_model::{self as bm, Bench, Row, NDFEB};

fn rows() -> Vec<Row> {
    let b = Bench::default();
    bm::run(&b, &NDFEB, &bm::cycle(b.ambient_c, 110.0, b.ambient_c, 5.0)).0
}

fn write(text: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("log.csv");
    std::fs::write(&p, text).unwrap();
    (dir, p)
}

/// A log's text written to a file, read with `opts` and analysed.
pub fn analyse_text(text: &str, opts: &CsvOptions) -> remanent::analysis::Analysis {
    let (_d, p) = write(text);
    let s = dataset::load_csv(&p, opts).unwrap();
    analyze(&s, &ctx()).unwrap()
}

fn alpha_of(text: &str, opts: &CsvOptions) -> (f64, remanent::analysis::Analysis) {
    let a = analyse_text(text, opts);
    (a.alpha.pct_per_c, a)
}

fn clean_alpha() -> f64 {
    alpha_of(&bm::csv(&rows()), &CsvOptions::default()).0
}

/// Render the rows with a header and a row formatter.
fn render(header: &str, f: impl Fn(usize, &Row) -> String) -> String {
    let mut out = format!("{header}\n");
    for (i, r) in rows().iter().enumerate() {
        out.push_str(&f(i, r));
        out.push('\n');
    }
    out
}

#[test]
fn semicolons_and_decimal_commas_read_the_same() {
    let text = render("time_s;temp_C;flux_mT", |_, r| {
        format!("{:.2};{:.2};{:.3}", r.time_s, r.temp_c, r.flux_mt).replace('.', ",")
    });
    let (a, _) = alpha_of(&text, &CsvOptions::default());
    assert!((a - clean_alpha()).abs() < 1e-9, "{a}");
}

#[test]
fn fahrenheit_kelvin_gauss_kilogauss_and_tesla_are_converted() {
    let clean = clean_alpha();
    type Format = fn(&Row) -> String;
    let cases: [(&str, Format); 3] = [
        ("time_s,temp_F,flux_G", |r| {
            format!(
                "{:.2},{:.4},{:.3}",
                r.time_s,
                r.temp_c * 1.8 + 32.0,
                r.flux_mt * 10.0
            )
        }),
        ("time_s,temp_K,flux_kG", |r| {
            format!(
                "{:.2},{:.4},{:.6}",
                r.time_s,
                r.temp_c + 273.15,
                r.flux_mt / 100.0
            )
        }),
        ("time_s,temp_C,flux_T", |r| {
            format!("{:.2},{:.2},{:.7}", r.time_s, r.temp_c, r.flux_mt / 1000.0)
        }),
    ];
    for (header, f) in cases {
        let (a, _) = alpha_of(&render(header, |_, r| f(r)), &CsvOptions::default());
        assert!((a - clean).abs() < 1e-6, "{header}: {a} against {clean}");
    }
}

#[test]
fn clock_timestamps_become_seconds() {
    // the bench started at 23:40:00 and ran past midnight
    let text = render("clock,temp_C,flux_mT", |_, r| {
        let t = 23.0 * 3600.0 + 40.0 * 60.0 + r.time_s;
        let t = t % 86_400.0;
        let (h, m, s) = ((t / 3600.0) as u32, ((t % 3600.0) / 60.0) as u32, t % 60.0);
        format!("{h:02}:{m:02}:{s:05.2},{:.2},{:.3}", r.temp_c, r.flux_mt)
    });
    let (a, _) = alpha_of(&text, &CsvOptions::default());
    assert!((a - clean_alpha()).abs() < 1e-6, "{a}");
}

#[test]
fn blank_cells_are_skipped_and_counted() {
    let text = render("time_s,temp_C,flux_mT", |i, r| match i % 97 {
        13 => format!("{:.2},,{:.3}", r.time_s, r.flux_mt),
        40 => format!("{:.2},{:.2},NA", r.time_s, r.temp_c),
        _ => format!("{:.2},{:.2},{:.3}", r.time_s, r.temp_c, r.flux_mt),
    });
    let expected = (0..rows().len())
        .filter(|i| i % 97 == 13 || i % 97 == 40)
        .count();
    let (a, an) = alpha_of(&text, &CsvOptions::default());
    assert!((a - clean_alpha()).abs() < 2e-4, "{a}");
    assert_eq!(an.input.rows_left_out, expected);
    assert!(
        an.notes
            .iter()
            .any(|n| n.to_string().contains("rows left out: blank `temp_C`")),
        "{:#?}",
        an.notes
    );
}

#[test]
fn a_torn_last_line_is_left_out_and_said() {
    let mut text = bm::csv(&rows());
    text.truncate(text.len() - 5); // power lost while the last line was written
    let (_d, p) = write(&text);
    let s = dataset::load_csv(&p, &CsvOptions::default()).unwrap();
    assert_eq!(s.time_s.len(), rows().len() - 1);
    let a = analyze(&s, &ctx()).unwrap();
    crate::util::assert_noted(&a, "last line incomplete");
}

#[test]
fn thermocouple_spikes_are_rejected_and_counted() {
    let text = render("time_s,temp_C,flux_mT", |i, r| {
        let temp = match i % 500 {
            77 => 1372.0,           // the converter's open-circuit full scale
            301 => r.temp_c - 60.0, // a pickup dip
            _ => r.temp_c,
        };
        format!("{:.2},{:.2},{:.3}", r.time_s, temp, r.flux_mt)
    });
    let spikes = (0..rows().len())
        .filter(|i| i % 500 == 77 || i % 500 == 301)
        .count();
    let (a, an) = alpha_of(&text, &CsvOptions::default());
    assert_eq!(an.input.spikes_rejected, spikes);
    assert!((a - clean_alpha()).abs() < 1e-4, "{a}");
}

#[test]
fn column_names_as_people_write_them_are_understood_in_any_case() {
    // the same bench-model record under headers other loggers and spreadsheets write
    let clean = clean_alpha();
    let text = bm::csv(&rows());
    for header in [
        "Temp_c",
        "TIME_S,TEMP_C,FLUX_MT",
        "Time,Temperature (°C),B (mT)",
        "elapsed [s],temperature_C,Field_mT",
        "t_s,T [°C],flux density (mT)",
    ] {
        let t = if header.contains(',') {
            text.replacen("time_s,temp_C,flux_mT", header, 1)
        } else {
            text.replacen("temp_C", header, 1)
        };
        let (a, an) = alpha_of(&t, &CsvOptions::default());
        assert!((a - clean).abs() < 1e-12, "{header}: α {a} against {clean}");
        if header.starts_with("Time,") {
            crate::util::assert_noted(&an, "`Time` names no unit: taken as s");
        }
    }
    // two candidates: the first is used, and the note says which and how to choose
    let t = text.replacen(
        "time_s,temp_C,flux_mT",
        "time_s,Temperature (C),flux_mT,Sample temp (C)",
        1,
    );
    let t: String = t
        .lines()
        .enumerate()
        .map(|(i, l)| {
            if i == 0 {
                format!("{l}\n")
            } else {
                format!("{l},99\n")
            }
        })
        .collect();
    let (_, an) = alpha_of(&t, &CsvOptions::default());
    assert!((an.alpha.pct_per_c - clean).abs() < 1e-12);
    crate::util::assert_noted(
        &an,
        "`Temperature (C)` is used rather than `Sample temp (C)` (choose with `--column`)",
    );
}

#[test]
fn every_missing_column_is_reported_at_once() {
    let (_d, p) = write(&bm::csv(&rows()).replacen("time_s,temp_C,flux_mT", "when,heat,pull", 1));
    let e = dataset::load_csv(&p, &CsvOptions::default()).unwrap_err();
    assert!(matches!(e, InputError::MissingColumn { .. }));
    let e = e.to_string();
    for what in [
        "no time column",
        "no temperature column",
        "no flux column",
        "when, heat, pull",
    ] {
        assert!(e.contains(what), "{what}: {e}");
    }
}

#[test]
fn an_option_that_needs_a_missing_column_is_an_error() {
    let (_d, p) = write(&bm::csv(&rows()));
    let opts = CsvOptions {
        probe_tc_pct_per_c: Some(-0.06),
        ..CsvOptions::default()
    };
    let e = dataset::load_csv(&p, &opts).unwrap_err().to_string();
    assert!(
        e.contains("probe_temp_C") && e.contains("--probe-tc-pct-per-c"),
        "{e}"
    );
    let opts = CsvOptions {
        rename: [("temp_C".to_string(), "Temperatur".to_string())].into(),
        ..CsvOptions::default()
    };
    let e = dataset::load_csv(&p, &opts).unwrap_err().to_string();
    assert!(e.contains("--column temp_C=Temperatur"), "{e}");
}

#[test]
fn nan_and_infinity_in_a_file_are_refused_with_line_and_column() {
    let mut text = bm::csv(&rows());
    let line = 101;
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    lines[line - 1] = "50.00,nan,200.0".into();
    text = lines.join("\n");
    let (_d, p) = write(&text);
    let e = dataset::load_csv(&p, &CsvOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("line 101, column `temp_C`") && e.contains("not a finite number"),
        "{e}"
    );
}

/// The bench model's CSV as lines (the header is line 1 of the file, data row i is line i + 2).
fn csv_lines() -> Vec<String> {
    bm::csv(&rows()).lines().map(str::to_string).collect()
}

#[test]
fn a_block_pasted_twice_is_dropped_and_named_by_its_lines() {
    let lines = csv_lines();
    // data rows 1000–1049 (file lines 1002–1051) pasted again right after themselves
    let mut out = lines[..1052].to_vec();
    out.extend_from_slice(&lines[1002..1052]);
    out.extend_from_slice(&lines[1052..]);
    let text = out.join("\n") + "\n";
    let (a, an) = alpha_of(&text, &CsvOptions::default());
    assert!((a - clean_alpha()).abs() < 1e-12, "α {a}");
    assert_eq!(an.input.repairs.duplicate_rows, 50);
    assert_eq!(an.input.repairs.duplicate_lines, vec![[1053, 1102]]);
    crate::util::assert_noted(
        &an,
        "50 exact copies of rows already read dropped (lines 1053–1102",
    );
    // --strict refuses instead, at the first copied line
    let (_d, p) = write(&text);
    let strict = CsvOptions {
        strict: true,
        ..Default::default()
    };
    let e = dataset::load_csv(&p, &strict).unwrap_err().to_string();
    assert!(e.contains("line 1053") && e.contains("--strict"), "{e}");
}

/// The lines with the time column restarting at 0 from data row `k` on.
fn restarted_at(k: usize, temp_jump_k: f64) -> String {
    let lines = csv_lines();
    let t_k: f64 = lines[k + 1].split(',').next().unwrap().parse().unwrap();
    let mut out = vec![lines[0].clone()];
    for (i, l) in lines[1..].iter().enumerate() {
        if i < k {
            out.push(l.clone());
            continue;
        }
        let f: Vec<&str> = l.split(',').collect();
        let t: f64 = f[0].parse().unwrap();
        let temp: f64 = f[1].parse().unwrap();
        out.push(format!("{:.2},{:.2},{}", t - t_k, temp + temp_jump_k, f[2]));
    }
    out.join("\n") + "\n"
}

#[test]
fn a_time_column_that_restarts_continues_where_it_stopped_when_the_rows_join_up() {
    let (a, an) = alpha_of(&restarted_at(2000, 0.0), &CsvOptions::default());
    assert!(
        (a - clean_alpha()).abs() < 1e-9,
        "α {a} against {}",
        clean_alpha()
    );
    assert_eq!(an.input.repairs.restart_lines, vec![2002]);
    crate::util::assert_noted(&an, "the time column restarts at line 2002");
    // --strict refuses it at its line
    let (_d, p) = write(&restarted_at(2000, 0.0));
    let strict = CsvOptions {
        strict: true,
        ..Default::default()
    };
    let e = dataset::load_csv(&p, &strict).unwrap_err().to_string();
    assert!(e.contains("line 2002") && e.contains("--strict"), "{e}");
}

#[test]
fn two_records_joined_in_one_file_are_split_where_they_meet_and_analysed_apart() {
    // a second magnet's record appended to the first's, its time starting again at 0: the
    // rows on either side do not join up (another magnet's flux)
    let other = bm::TrueMagnet {
        b20_mt: 180.0,
        a1_pct: -0.19,
        a2_pct: 0.0,
        ..bm::NDFEB
    };
    let b = bm::Bench::default();
    let (second, _) = bm::run(&b, &other, &bm::cycle(b.ambient_c, 110.0, b.ambient_c, 5.0));
    let first = bm::csv(&rows());
    let joined = first.clone() + bm::csv(&second).split_once('\n').unwrap().1;
    let (_, a) = alpha_of(&joined, &CsvOptions::default());
    let line = first.lines().count() + 1;
    assert_eq!(a.input.repairs.split_lines, vec![line]);
    assert_eq!(a.cycles.len(), 2, "{:#?}", a.cycles);
    crate::util::assert_noted(&a, "analysed apart");
    // the results are the last part's: the ferrite-like second magnet
    let want = other.alpha_pct(a.alpha.range_c[1]);
    assert!(
        (a.alpha.pct_per_c - want).abs() < 0.003,
        "α {} against {want}",
        a.alpha.pct_per_c
    );
}
