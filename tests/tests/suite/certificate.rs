//! The printable certificate: made by the tool itself (pure Rust), A4 or Letter, and read back
//! with poppler's tools (`pdfinfo`, `pdftotext`, `pdftoppm`, from Debian's poppler-utils, which
//! `.ci/run` installs; those checks are `--ignored` elsewhere): its pages, its key text, the
//! verdict block whole on one page, and every page rendering to an image.

use std::path::Path;
use std::process::Command;

use remanent::inspection::Inspection;
use remanent::report::pdf_flow::Paper;
use remanent::run_dir::read_meta;

/// A short run of the demo part with a shipment's details, reported on `paper`.
fn certified(dir: &Path, paper: Paper) -> std::path::PathBuf {
    let out = dir.join("run");
    crate::util::rapid_run(&out, 3);
    // the shipment's details, as `record --lot … --order … --supplier … --operator …` keeps them
    let mut text = std::fs::read_to_string(out.join("run.toml")).unwrap();
    let mut meta = read_meta(&out).unwrap();
    meta.inspection = Inspection {
        lot: Some("L-2611-A".into()),
        purchase_order: Some("PO-7781".into()),
        supplier: Some("Ferrum Works".into()),
        operator: Some("R. Okafor".into()),
    };
    text = toml::to_string(&meta).unwrap_or(text);
    std::fs::write(out.join("run.toml"), text).unwrap();
    let r = remanent::jobs::report::run(
        &out,
        &Default::default(),
        false,
        &remanent::report::Look {
            paper,
            ..Default::default()
        },
    )
    .unwrap();
    assert!(r.written.iter().any(|p| p.ends_with("certificate.pdf")));
    out.join("certificate.pdf")
}

/// Pages of a PDF, counted from its page objects.
fn pages_in(pdf: &[u8]) -> usize {
    let text = String::from_utf8_lossy(pdf);
    text.matches("/Type/Page").count() - text.matches("/Type/Pages").count()
}

#[test]
fn the_certificate_is_a_pdf_of_a_page_or_two() {
    let dir = tempfile::tempdir().unwrap();
    let pdf = std::fs::read(certified(dir.path(), Paper::A4)).unwrap();
    assert!(pdf.starts_with(b"%PDF-"));
    let n = pages_in(&pdf);
    assert!((1..=3).contains(&n), "{n} pages");
    // dated when its record ended (PDF date form D:YYYYMMDDHHmmSS), not 1970
    let meta = read_meta(&dir.path().join("run")).unwrap();
    let ended = meta.finished_utc.expect("the record ended");
    let stamp = format!("D:{}", &ended[..19].replace(['-', 'T', ':'], ""));
    let text = String::from_utf8_lossy(&pdf);
    assert!(text.contains(&stamp), "no {stamp} in the PDF's info");
    assert!(!text.contains("D:1970"), "dated 1970");
}

fn tool(cmd: &str, args: &[&str]) -> String {
    let out = Command::new(cmd)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("{cmd}: {e} (Debian's poppler-utils; .ci/run installs it)"));
    assert!(
        out.status.success(),
        "{cmd} {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
#[ignore = "needs poppler-utils (pdfinfo, pdftotext, pdftoppm): .ci/run installs it"]
fn certificate_pages_render_and_carry_the_inspection_read_back_by_poppler() {
    for (paper, size) in [(Paper::A4, "595 x 842"), (Paper::Letter, "612 x 792")] {
        let dir = tempfile::tempdir().unwrap();
        let pdf = certified(dir.path(), paper);
        let p = pdf.to_str().unwrap();
        let info = tool("pdfinfo", &[p]);
        assert!(info.contains(size), "{info}");
        let pages: usize = info
            .lines()
            .find_map(|l| l.strip_prefix("Pages:"))
            .and_then(|v| v.trim().parse().ok())
            .unwrap();
        assert!((1..=3).contains(&pages), "{pages} pages");
        // every page renders to an image
        let stem = dir.path().join("page");
        tool("pdftoppm", &["-r", "50", "-png", p, stem.to_str().unwrap()]);
        let images = std::fs::read_dir(dir.path())
            .unwrap()
            .filter(|e| {
                e.as_ref()
                    .unwrap()
                    .file_name()
                    .to_string_lossy()
                    .starts_with("page")
            })
            .count();
        assert_eq!(images, pages);
        // the key text, and the verdict block whole on one page
        let all = tool("pdftotext", &["-layout", p, "-"]);
        // the scenario's truth: a conforming N42SH measured with no reference magnet, so Br
        // comes from geometry with the gap's ±3 % or so — wider than half the grade's Br
        // window (1.27 … 1.33 T, ±2.3 %), so no Br can be proven inside it: by the decision
        // rule the verdict cannot be PASS, and nothing about the part is wrong: INDETERMINATE
        let verdict = "Verdict: INDETERMINATE against grade N42SH".to_string();
        assert!(all.contains(&verdict), "{verdict} missing:\n{all}");
        for want in [
            "Inspection certificate",
            "RM-N42SH-D10x5",
            "L-2611-A",
            "PO-7781",
            "Ferrum Works",
            "R. Okafor",
            "Uncertainty budget of α",
            "Signatures",
            "Tested by",
            "Decision rule: guarded acceptance",
        ] {
            assert!(all.contains(want), "{want} missing:\n{all}");
        }
        let verdict_page = (1..=pages)
            .find(|k| {
                let t = tool(
                    "pdftotext",
                    &["-f", &k.to_string(), "-l", &k.to_string(), p, "-"],
                );
                t.contains("Verdict:")
            })
            .unwrap();
        let t = tool(
            "pdftotext",
            &[
                "-f",
                &verdict_page.to_string(),
                "-l",
                &verdict_page.to_string(),
                p,
                "-",
            ],
        );
        for check in ["α(Br)", "Br", "material family"] {
            assert!(
                t.contains(check),
                "the verdict block is split: {check} not on its page"
            );
        }
    }
}

/// A short run of the demo part in `dir`, written again as another logger would write it (time,
/// temperature, flux) into `dir/name`.
fn logged_run(dir: &Path, name: &str) -> std::path::PathBuf {
    let run = dir.join("run");
    crate::util::rapid_run(&run, 8);
    let (s, _) = remanent::input::dataset::load_run(&run, None).unwrap();
    let mut text = String::from("time_s,temp_C,flux_mT\n");
    for i in 0..s.time_s.len() {
        text.push_str(&format!(
            "{},{},{}\n",
            s.time_s[i], s.temp_c[i], s.flux_mt[i]
        ));
    }
    let log = dir.join(name);
    std::fs::write(&log, text).unwrap();
    log
}

#[test]
fn a_loggers_csv_file_gets_the_whole_report_beside_it() {
    let dir = tempfile::tempdir().unwrap();
    let log = logged_run(dir.path(), "bench-log.csv");
    let req = remanent::jobs::InputRequest {
        input: log.clone(),
        magnet: Some("RM-N42SH-D10x5".into()),
        inspection: Inspection {
            lot: Some("L-LOG".into()),
            ..Default::default()
        },
        ..Default::default()
    };
    let out = remanent::jobs::report::default_out(&log);
    assert_eq!(out, dir.path().join("bench-log-report"));
    let r = remanent::jobs::report::run_input(&req, &out, false, &Default::default()).unwrap();
    assert!(r.not_analysed.is_none());
    for f in [
        "report.html",
        "report.md",
        "analysis.json",
        "certificate.pdf",
        "flux_vs_temp.png",
    ] {
        assert!(out.join(f).is_file(), "{f}");
    }
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(
        html.contains("plain CSV log") && html.contains("L-LOG"),
        "the page says what it came from"
    );
    // a second report into the same folder is refused without --force
    assert!(remanent::jobs::report::run_input(&req, &out, false, &Default::default()).is_err());
}

#[test]
#[ignore = "needs poppler-utils (pdftotext): .ci/run installs it"]
fn certificate_pages_in_gauss_and_fahrenheit_say_so_and_convert_alpha() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    crate::util::rapid_run(&out, 5);
    let look = remanent::report::Look {
        units: remanent::units::DisplayUnits {
            flux: remanent::units::FluxUnit::Gauss,
            temp: remanent::units::TempUnit::Fahrenheit,
        },
        ..Default::default()
    };
    remanent::jobs::report::run(&out, &Default::default(), false, &look).unwrap();
    let pdf = out.join("certificate.pdf");
    let text = tool("pdftotext", &["-layout", pdf.to_str().unwrap(), "-"]);
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("analysis.json")).unwrap()).unwrap();
    // α in %/°F is α in %/°C divided by 1.8 (a kelvin is 1.8 °F: NIST SP 811 §B.9)
    let alpha_f = json["alpha_pct_per_C"].as_f64().unwrap() / 1.8;
    let shown = format!("{alpha_f:+.4} ±");
    assert!(text.contains(&shown), "{shown} missing:\n{text}");
    assert!(text.contains("Shown in °F and G"), "{text}");
    assert!(text.contains("%/°F (95 %) over"), "{text}");
    assert!(!text.contains("%/°C (95 %)"), "{text}");
}

/// Words of a PDF's first page with their boxes, as poppler's `pdftotext -bbox` finds them:
/// (xMin, yMin, xMax, word).
fn word_boxes(pdf: &Path) -> Vec<(f64, f64, f64, String)> {
    word_boxes_of(pdf, 1)
}

/// The same for page `page`.
fn word_boxes_of(pdf: &Path, page: usize) -> Vec<(f64, f64, f64, String)> {
    let page = page.to_string();
    let html = tool(
        "pdftotext",
        &[
            "-bbox",
            "-f",
            &page,
            "-l",
            &page,
            pdf.to_str().unwrap(),
            "-",
        ],
    );
    let attr = |line: &str, name: &str| -> f64 {
        let at = line.find(&format!("{name}=\"")).expect(name) + name.len() + 2;
        line[at..].split('"').next().unwrap().parse().unwrap()
    };
    html.lines()
        .filter(|l| l.trim_start().starts_with("<word "))
        .map(|l| {
            let word = l.split('>').nth(1).unwrap().split('<').next().unwrap();
            (
                attr(l, "xMin"),
                attr(l, "yMin"),
                attr(l, "xMax"),
                word.to_string(),
            )
        })
        .collect()
}

#[test]
#[ignore = "needs poppler-utils (pdftotext): .ci/run installs it"]
fn certificate_pages_never_print_a_checks_outcome_over_its_reason() {
    // a logger's file with no geometry: Br is INDETERMINATE, the longest outcome word
    let dir = tempfile::tempdir().unwrap();
    let log = logged_run(dir.path(), "log.csv");
    let req = remanent::jobs::InputRequest {
        input: log.clone(),
        magnet: Some("RM-N42SH-D10x5".into()),
        ..Default::default()
    };
    let out = dir.path().join("report");
    remanent::jobs::report::run_input(&req, &out, false, &Default::default()).unwrap();
    let words = word_boxes(&out.join("certificate.pdf"));
    let outcomes: Vec<_> = words
        .iter()
        .filter(|w| w.3 == "INDETERMINATE" || w.3 == "PASS" || w.3 == "FAIL")
        .collect();
    assert!(
        outcomes.iter().any(|w| w.3 == "INDETERMINATE"),
        "an indeterminate check: {:?}",
        words.iter().map(|w| &w.3).collect::<Vec<_>>()
    );
    for o in outcomes {
        // any word on the same line that starts inside the outcome word overprints it
        for w in words
            .iter()
            .filter(|w| (w.1 - o.1).abs() < 1.0 && w.0 > o.0)
        {
            assert!(w.0 >= o.2, "`{}` printed over `{}`", w.3, o.3);
        }
    }
}

#[test]
#[ignore = "needs poppler-utils (pdftotext): .ci/run installs it"]
fn certificate_pages_print_a_400_character_reason_whole_and_clear_of_every_other_word() {
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run");
    crate::util::rapid_run(&run, 4);
    let r = remanent::jobs::report::run(&run, &Default::default(), false, &Default::default());
    let mut a = r.unwrap().analysis.unwrap();
    // 80 numbered words of five characters with their spaces: 400 characters
    let reason: Vec<String> = (0..80).map(|i| format!("q{i:03}")).collect();
    let reason = reason.join(" ");
    assert_eq!(reason.len() + 1, 400);
    a.judgement.checks[0].reason = remanent::phrase!(reason.as_str());
    let png = std::fs::read(run.join("flux_vs_temp.png")).unwrap();
    let meta = read_meta(&run).unwrap();
    let look = remanent::report::Look::default();
    let pdf = remanent::report::certificate::certificate(&a, Some(&meta), None, &png, &look);
    let file = dir.path().join("long.pdf");
    std::fs::write(&file, pdf.unwrap()).unwrap();
    let pages = pages_in(&std::fs::read(&file).unwrap());
    let mut seen = 0;
    for page in 1..=pages {
        let words = word_boxes_of(&file, page);
        seen += words.iter().filter(|w| w.3.starts_with('q')).count();
        for w in &words {
            assert!(
                w.2 <= 595.3,
                "page {page}: `{}` runs off the paper at {}",
                w.3,
                w.2
            );
            // no word on the same line starts inside another
            for o in words
                .iter()
                .filter(|o| (o.1 - w.1).abs() < 1.0 && o.0 > w.0)
            {
                assert!(
                    o.0 >= w.2 - 0.5,
                    "page {page}: `{}` printed over `{}`",
                    o.3,
                    w.3
                );
            }
        }
    }
    assert_eq!(seen, 80, "every word of the reason is on the certificate");
}
