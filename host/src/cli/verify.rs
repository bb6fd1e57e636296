//! `remanent verify`: recompute a certificate's fingerprint and say whether the record still
//! matches what was certified.

use std::path::PathBuf;
use std::process::ExitCode;

use remanent::report::seal;

#[derive(clap::Args)]
pub struct Args {
    /// The folder the certificate was written to (a run, or a report's `--out`), or its
    /// certificate.toml.
    certificate: PathBuf,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let v = seal::verify(&a.certificate)?;
    let s = &v.seal;
    let by = s
        .issuer
        .as_deref()
        .map(|i| format!(", issued by {i}"))
        .unwrap_or_default();
    println!("certificate {} ({}{by})", s.number, s.issued_utc);
    if v.changed.is_empty() {
        println!(
            "matches: {} and {} are as certified",
            s.raw_file.display(),
            s.analysis_file.display()
        );
        return Ok(ExitCode::SUCCESS);
    }
    for (file, want, now) in &v.changed {
        match now {
            Some(now) => println!(
                "CHANGED since certification: {} (certified SHA-256 {want}, now {now})",
                file.display()
            ),
            None => println!("MISSING since certification: {}", file.display()),
        }
    }
    println!(
        "the record no longer matches what certificate {} states",
        s.number
    );
    Ok(ExitCode::from(1))
}
