//! What makes a certificate auditable: its number, and the SHA-256 of the record's raw bytes
//! and of the `analysis.json` it states, printed on it and kept in `certificate.toml` beside
//! it. `remanent verify` recomputes both and says whether the record still matches what was
//! certified.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

/// The seal's file, beside the certificate.
pub const SEAL_FILE: &str = "certificate.toml";

/// A certificate's number and fingerprint.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Seal {
    /// The certificate number: the issue date and the first 8 hex digits of the analysis's
    /// fingerprint (the same record and analysis always get the same number).
    pub number: String,
    /// When it was issued, UTC.
    pub issued_utc: String,
    /// Who issued it (the config file's `[lab]`), when stated.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub issuer: Option<String>,
    /// The record's raw bytes (a run's raw.bin, or the logger's file): where, and their SHA-256.
    pub raw_file: PathBuf,
    /// Its SHA-256, hex.
    pub raw_sha256: String,
    /// The analysis the certificate states.
    pub analysis_file: PathBuf,
    /// Its SHA-256, hex.
    pub analysis_sha256: String,
}

/// SHA-256 of `bytes`, lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// A verification that cannot be made.
#[derive(Debug, thiserror::Error)]
pub enum SealError {
    /// A file cannot be read.
    #[error("cannot read {path}: {source}")]
    Read {
        /// The file.
        path: String,
        /// Why.
        source: std::io::Error,
    },
    /// The seal file is not one.
    #[error("{path} is not a certificate's seal: {reason}")]
    Parse {
        /// The file.
        path: String,
        /// Why.
        reason: String,
    },
}

fn read(p: &Path) -> Result<Vec<u8>, SealError> {
    std::fs::read(p).map_err(|source| SealError::Read {
        path: p.display().to_string(),
        source,
    })
}

/// The seal of a certificate issued at `issued_utc` for the record `raw` (relative to `dir`
/// unless absolute) and the analysis `analysis` as it is filed under `analysis_file`.
pub fn seal(
    raw: &Path,
    analysis_file: &Path,
    analysis: &[u8],
    issued_utc: &str,
    issuer: Option<String>,
    dir: &Path,
) -> Result<Seal, SealError> {
    let raw_at = if raw.is_absolute() {
        raw.to_path_buf()
    } else {
        dir.join(raw)
    };
    let analysis_sha256 = sha256_hex(analysis);
    let day: String = issued_utc
        .chars()
        .filter(char::is_ascii_digit)
        .take(8)
        .collect();
    Ok(Seal {
        number: format!("RM-{day}-{}", analysis_sha256[..8].to_uppercase()),
        issued_utc: issued_utc.into(),
        issuer,
        raw_file: raw.to_path_buf(),
        raw_sha256: sha256_hex(&read(&raw_at)?),
        analysis_file: analysis_file.to_path_buf(),
        analysis_sha256,
    })
}

/// What a verification found: per file, the certified digest and the one found now (`None`:
/// the file is gone).
#[derive(Debug, Clone, PartialEq)]
pub struct Verified {
    /// The seal checked.
    pub seal: Seal,
    /// (file, certified, now) for each file that no longer matches.
    pub changed: Vec<(PathBuf, String, Option<String>)>,
}

/// The seal in `dir` (or the seal file `dir`), and the folder its paths are relative to.
pub fn read_seal(dir: &Path) -> Result<(Seal, PathBuf), SealError> {
    let file = if dir.is_dir() {
        dir.join(SEAL_FILE)
    } else {
        dir.to_path_buf()
    };
    let text = String::from_utf8_lossy(&read(&file)?).into_owned();
    let seal: Seal = toml::from_str(&text).map_err(|e| SealError::Parse {
        path: file.display().to_string(),
        reason: crate::formats::bounded(&e.to_string()),
    })?;
    let base = file.parent().unwrap_or(Path::new(".")).to_path_buf();
    Ok((seal, base))
}

/// Recompute the fingerprint of the certificate whose seal is in `dir` (or is the file `dir`).
pub fn verify(dir: &Path) -> Result<Verified, SealError> {
    let (seal, base) = read_seal(dir)?;
    Ok(check(seal, &base))
}

/// Check the files `seal` names (relative to `base` unless absolute) against its digests.
pub fn check(seal: Seal, base: &Path) -> Verified {
    let mut changed = Vec::new();
    for (f, want) in [
        (&seal.raw_file, &seal.raw_sha256),
        (&seal.analysis_file, &seal.analysis_sha256),
    ] {
        let at = if f.is_absolute() {
            f.clone()
        } else {
            base.join(f)
        };
        let now = std::fs::read(&at).ok().map(|b| sha256_hex(&b));
        if now.as_ref() != Some(want) {
            changed.push((f.clone(), want.clone(), now));
        }
    }
    Verified { seal, changed }
}

/// `path` relative to `dir` when it lies inside it (a run's raw.bin), else as it is.
pub fn relative_to(path: &Path, dir: &Path) -> PathBuf {
    let (p, d) = (
        std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf()),
        std::fs::canonicalize(dir).unwrap_or_else(|_| dir.to_path_buf()),
    );
    p.strip_prefix(&d).map(Path::to_path_buf).unwrap_or(p)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_of_abc_is_the_published_test_vector() {
        // FIPS 180-2, appendix B.1: SHA-256("abc")
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
