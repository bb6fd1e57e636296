//! `remanent verify`: recompute a certificate's fingerprint and say whether the record still
//! matches what was certified.

use std::process::ExitCode;

use crate::cli::options::StoreOpts;

#[derive(clap::Args)]
pub struct Args {
    /// The certificate: its number (as filed in the history store), the folder it was written
    /// to (a run, or a report's `--out`), or its certificate.toml.
    certificate: String,
    #[command(flatten)]
    store: StoreOpts,
}

pub fn run(a: Args) -> anyhow::Result<ExitCode> {
    let audit = remanent::jobs::verify::verify(&a.certificate, &a.store.location())?;
    let s = &audit.verified.seal;
    let by = s
        .issuer
        .as_deref()
        .map(|i| format!(", issued by {i}"))
        .unwrap_or_default();
    println!("certificate {} ({}{by})", s.number, s.issued_utc);
    match audit.filed {
        Some(true) => println!("filed in the history store: checked against what was filed"),
        Some(false) => {
            println!("not filed in the history store: checked against its certificate.toml")
        }
        None => {}
    }
    if audit.seal_differs {
        println!(
            "CHANGED since certification: {} states other fingerprints than the store filed",
            audit
                .folder
                .join(remanent::report::seal::SEAL_FILE)
                .display()
        );
    }
    for (file, want, now) in &audit.verified.changed {
        match now {
            Some(now) => println!(
                "CHANGED since certification: {} (certified SHA-256 {want}, now {now})",
                file.display()
            ),
            None => println!("MISSING since certification: {}", file.display()),
        }
    }
    if audit.matches() {
        println!(
            "matches: {} and {} in {} are as certified",
            s.raw_file.display(),
            s.analysis_file.display(),
            audit.folder.display()
        );
        return Ok(ExitCode::SUCCESS);
    }
    println!(
        "the record no longer matches what certificate {} states",
        s.number
    );
    Ok(ExitCode::from(1))
}
