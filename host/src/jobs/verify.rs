//! Verify a certificate: recompute the fingerprints of the record and the analysis it states,
//! found by its folder (its `certificate.toml`) or by its number in the history store, and say
//! whether they still match what was certified. When the store has filed the certificate, the
//! filed fingerprints are the ones that count: a `certificate.toml` edited together with the
//! files it names is caught.

use std::path::{Path, PathBuf};

use crate::history::{CertificateEntry, Location, Store, StoreError};
use crate::report::seal::{self, Seal, SealError, Verified};

/// A verification that cannot be made.
#[derive(Debug, thiserror::Error)]
pub enum VerifyError {
    /// The folder's seal.
    #[error(transparent)]
    Seal(#[from] SealError),
    /// The store.
    #[error(transparent)]
    Store(#[from] StoreError),
    /// Neither a folder nor a filed number.
    #[error("{0}: no such folder or file, and no certificate filed under that number in {1}")]
    NotFound(String, String),
}

/// What a verification found.
#[derive(Debug, Clone, PartialEq)]
pub struct Audit {
    /// The files against the certified digests (the store's when it filed the certificate).
    pub verified: Verified,
    /// The folder the files were looked for in.
    pub folder: PathBuf,
    /// Whether the store has the certificate filed (`None`: no store to ask).
    pub filed: Option<bool>,
    /// The folder's `certificate.toml` states other digests than the store filed.
    pub seal_differs: bool,
}

impl Audit {
    /// Everything as certified.
    pub fn matches(&self) -> bool {
        self.verified.changed.is_empty() && !self.seal_differs
    }
}

fn seal_of(c: &CertificateEntry) -> Seal {
    Seal {
        number: c.number.clone(),
        issued_utc: c.issued_utc.clone(),
        issuer: c.issuer.clone(),
        raw_file: c.raw_file.clone().into(),
        raw_sha256: c.raw_sha256.clone(),
        analysis_file: c.analysis_file.clone().into(),
        analysis_sha256: c.analysis_sha256.clone(),
    }
}

/// Verify `target` (a certificate's folder, its `certificate.toml`, or its number), asking the
/// store at `at` (when not off) for what it filed.
pub fn verify(target: &str, at: &Location) -> Result<Audit, VerifyError> {
    let path = Path::new(target);
    // a store that is not there is not made by looking; one that cannot be opened does not stop
    // a folder's own check
    let mut store = match at {
        Location::Off => None,
        Location::Sqlite(p) if !p.exists() => None,
        at if path.exists() => Store::open(at).ok(),
        at => Some(Store::open(at)?),
    };
    if path.exists() {
        let (local, folder) = seal::read_seal(path)?;
        let filed = match store.as_mut() {
            Some(s) => Some(s.certificate(&local.number)?),
            None => None,
        };
        let seal_differs = matches!(&filed, Some(Some(f)) if seal_of(f) != local);
        let certified = match &filed {
            Some(Some(f)) => seal_of(f),
            _ => local,
        };
        return Ok(Audit {
            verified: seal::check(certified, &folder),
            folder,
            filed: filed.map(|f| f.is_some()),
            seal_differs,
        });
    }
    let not_found = || VerifyError::NotFound(target.into(), at.describe());
    let filed = store
        .as_mut()
        .ok_or_else(not_found)?
        .certificate(target)?
        .ok_or_else(not_found)?;
    let folder = PathBuf::from(&filed.folder);
    // the folder's own seal, when it is still there, must state what was filed
    let seal_differs = seal::read_seal(&folder).is_ok_and(|(local, _)| local != seal_of(&filed));
    Ok(Audit {
        verified: seal::check(seal_of(&filed), &folder),
        folder,
        filed: Some(true),
        seal_differs,
    })
}
