//! Certificates in the store: each number filed once, with the fingerprints (SHA-256) of the
//! record and of the analysis it states and where it was written, so an auditor can look a
//! certificate up by its number and check the files against what was filed, not against a
//! `certificate.toml` that could have been edited with them.

use super::error::StoreError;
use super::store::Store;

/// A certificate as the store files it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct CertificateEntry {
    /// Its number (unique in the store).
    pub number: String,
    /// The run it certifies.
    pub run_uid: String,
    /// The analysis it states.
    pub analysis_uid: String,
    /// When it was issued, UTC.
    pub issued_utc: String,
    /// Who issued it.
    pub issuer: Option<String>,
    /// The folder it was written to (absolute, on the host that filed it).
    pub folder: String,
    /// The record's raw bytes, relative to `folder` unless absolute, and their SHA-256.
    pub raw_file: String,
    /// Hex.
    pub raw_sha256: String,
    /// The analysis file, relative to `folder` unless absolute, and its SHA-256.
    pub analysis_file: String,
    /// Hex.
    pub analysis_sha256: String,
}

const COLUMNS: &str = "number, run_uid, analysis_uid, issued_utc, issuer, folder, raw_file, \
    raw_sha256, analysis_file, analysis_sha256";

impl Store {
    /// File a certificate (its run and analysis already stored); true if it was new. The same
    /// certificate filed again changes nothing; its number standing for another analysis is
    /// refused.
    pub fn put_certificate(&mut self, c: &CertificateEntry) -> Result<bool, StoreError> {
        let store = self.describe();
        self.write(|db| {
            let there = db.query(
                "SELECT analysis_sha256 FROM certificates WHERE number = $1",
                &[c.number.as_str().into()],
            )?;
            if let Some(row) = there.first() {
                return match row[0].text() == Some(c.analysis_sha256.clone()) {
                    true => Ok(false),
                    false => Err(StoreError::NumberTaken {
                        store,
                        number: c.number.clone(),
                    }),
                };
            }
            db.execute(
                &format!(
                    "INSERT INTO certificates ({COLUMNS}, stored_utc) \
                     VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)"
                ),
                &[
                    c.number.as_str().into(),
                    c.run_uid.as_str().into(),
                    c.analysis_uid.as_str().into(),
                    c.issued_utc.as_str().into(),
                    c.issuer.clone().into(),
                    c.folder.as_str().into(),
                    c.raw_file.as_str().into(),
                    c.raw_sha256.as_str().into(),
                    c.analysis_file.as_str().into(),
                    c.analysis_sha256.as_str().into(),
                    crate::run_dir::utc_now().into(),
                ],
            )?;
            Ok(true)
        })
    }

    /// The certificate filed under `number`, if any.
    pub fn certificate(&mut self, number: &str) -> Result<Option<CertificateEntry>, StoreError> {
        let rows = self.db().query(
            &format!("SELECT {COLUMNS} FROM certificates WHERE number = $1"),
            &[number.into()],
        )?;
        Ok(rows.first().map(|r| {
            let columns = super::backend::Columns::new(COLUMNS);
            let cell = |name: &str| columns.cell(r, name).text();
            let t = |name: &str| cell(name).unwrap_or_default();
            CertificateEntry {
                number: t("number"),
                run_uid: t("run_uid"),
                analysis_uid: t("analysis_uid"),
                issued_utc: t("issued_utc"),
                issuer: cell("issuer"),
                folder: t("folder"),
                raw_file: t("raw_file"),
                raw_sha256: t("raw_sha256"),
                analysis_file: t("analysis_file"),
                analysis_sha256: t("analysis_sha256"),
            }
        }))
    }
}
