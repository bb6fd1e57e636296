//! A certificate one can audit: its number, its issuer and the SHA-256 of the record and of the
//! analysis it states; `verify` finds a changed byte in either.

use remanent::jobs::{report, Judging};
use remanent::report::{seal, Look};

fn certified(dir: &std::path::Path) -> std::path::PathBuf {
    let run = dir.join("run");
    crate::util::rapid_run(&run, 8);
    let look = Look {
        issuer: Some("Incoming inspection, Hallam Motors (invented), 12 Quay Road".into()),
        ..Default::default()
    };
    let r = report::run(&run, &Judging::default(), false, &look).unwrap();
    assert!(r.written.iter().any(|p| p.ends_with(seal::SEAL_FILE)));
    run
}

/// Flip one byte of `file` in the middle.
fn flip(file: &std::path::Path) {
    let mut b = std::fs::read(file).unwrap();
    let k = b.len() / 2;
    b[k] ^= 0x01;
    std::fs::write(file, b).unwrap();
}

#[test]
fn verify_finds_one_changed_byte_of_the_record_or_of_the_analysis() {
    let dir = tempfile::tempdir().unwrap();
    let run = certified(dir.path());
    let v = seal::verify(&run).unwrap();
    assert!(v.changed.is_empty(), "{:?}", v.changed);
    assert!(v.seal.number.starts_with("RM-"), "{}", v.seal.number);
    // the number is the analysis's own fingerprint
    assert!(v
        .seal
        .analysis_sha256
        .to_uppercase()
        .starts_with(&v.seal.number[12..]));
    for f in ["raw.bin", "analysis.json"] {
        let copy = dir.path().join(format!("copy-{f}"));
        std::fs::create_dir_all(&copy).unwrap();
        let _ = std::process::Command::new("cp")
            .args(["-r", run.to_str().unwrap(), copy.to_str().unwrap()])
            .status();
        let moved = copy.join("run");
        flip(&moved.join(f));
        let v = seal::verify(&moved).unwrap();
        assert_eq!(v.changed.len(), 1, "{f}: {:?}", v.changed);
        assert_eq!(v.changed[0].0, std::path::PathBuf::from(f));
    }
}

#[test]
#[ignore = "needs poppler-utils (pdftotext): .ci/run installs it"]
fn certificate_pages_carry_the_number_the_issuer_and_the_fingerprint() {
    let dir = tempfile::tempdir().unwrap();
    let run = certified(dir.path());
    let v = seal::verify(&run).unwrap();
    let out = std::process::Command::new("pdftotext")
        .args([run.join("certificate.pdf").to_str().unwrap(), "-"])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    for want in [
        format!("Certificate {}", v.seal.number),
        "Issued by Incoming inspection, Hallam Motors (invented)".to_string(),
        v.seal.raw_sha256.clone(),
        v.seal.analysis_sha256.clone(),
    ] {
        assert!(
            text.contains(&want),
            "{want} not on the certificate:\n{text}"
        );
    }
}

#[test]
fn a_filed_certificate_is_verified_by_its_number_against_what_the_store_filed() {
    use remanent::history::{Location, Store};
    use remanent::jobs::verify::verify;
    let dir = tempfile::tempdir().unwrap();
    let run = certified(dir.path());
    let at = Location::Sqlite(dir.path().join("h.sqlite"));
    let r = report::run(&run, &Judging::default(), true, &Look::default()).unwrap();
    let a = r.analysis.unwrap();
    remanent::jobs::history::store_reported(&at, &run, &a, &r.written).unwrap();
    let number = seal::verify(&run).unwrap().seal.number;
    let by_number = verify(&number, &at).unwrap();
    assert!(by_number.matches(), "{by_number:?}");
    assert_eq!(by_number.filed, Some(true));
    // one number per store: the same number for another analysis is refused
    let mut store = Store::open(&at).unwrap();
    let mut other = store.certificate(&number).unwrap().unwrap();
    other.analysis_sha256 = "0".repeat(64);
    let e = store.put_certificate(&other).unwrap_err().to_string();
    assert!(e.contains(&number) && e.contains("already filed"), "{e}");
    drop(store);
    // the analysis changed and its certificate.toml edited to match: the folder alone agrees
    // with itself, the store does not
    let json = run.join("analysis.json");
    let edited = std::fs::read_to_string(&json)
        .unwrap()
        .replacen("\"verdict\": \"fail\"", "\"verdict\": \"pass\"", 1)
        .replacen("\"verdict\": \"indeterminate\"", "\"verdict\": \"pass\"", 1)
        .replacen("\"schema_version\": 1", "\"schema_version\": 1 ", 1);
    std::fs::write(&json, &edited).unwrap();
    let toml_file = run.join(seal::SEAL_FILE);
    let mut s: seal::Seal = toml::from_str(&std::fs::read_to_string(&toml_file).unwrap()).unwrap();
    s.analysis_sha256 = seal::sha256_hex(edited.as_bytes());
    std::fs::write(&toml_file, toml::to_string(&s).unwrap()).unwrap();
    assert!(
        seal::verify(&run).unwrap().changed.is_empty(),
        "self-consistent"
    );
    for target in [number.clone(), run.display().to_string()] {
        let audit = verify(&target, &at).unwrap();
        assert!(!audit.matches(), "{target}: {audit:?}");
        assert!(audit.seal_differs, "{target}");
        assert_eq!(audit.verified.changed.len(), 1, "{target}: {audit:?}");
        assert_eq!(
            audit.verified.changed[0].0,
            std::path::PathBuf::from("analysis.json")
        );
    }
    // a number no store filed
    let e = verify("RM-20260101-DEADBEEF", &at).unwrap_err().to_string();
    assert!(e.contains("no certificate filed under that number"), "{e}");
}
