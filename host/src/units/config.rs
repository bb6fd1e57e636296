//! The user's config file: the display units every command uses unless told otherwise.
//! `$REMANENT_CONFIG`, else `config.toml` in the user's config folder
//! (`~/.config/remanent/config.toml` on Linux):
//!
//! ```toml
//! [display]
//! flux = "G"          # mT, G or T
//! temperature = "F"   # C or F
//!
//! [lab]               # the issuing lab a certificate names
//! name = "Incoming inspection, Hallam Motors (invented)"
//! address = "12 Quay Road, Dunmore"
//! ```

use std::path::{Path, PathBuf};

use serde::Deserialize;

use super::display::{DisplayUnits, FluxUnit, TempUnit, UnknownUnit};

/// The environment variable naming the config file.
pub const CONFIG_ENV: &str = "REMANENT_CONFIG";

/// A config file that cannot be used.
#[derive(Debug, thiserror::Error)]
pub enum ConfigError {
    /// Named by `$REMANENT_CONFIG` but not there, or not readable.
    #[error("config file {path}: {reason}")]
    Read {
        /// The file.
        path: String,
        /// Why.
        reason: String,
    },
    /// Not TOML, or a key that is not known.
    #[error("config file {path}: {reason}")]
    Syntax {
        /// The file.
        path: String,
        /// The parser's words, with the line.
        reason: String,
    },
    /// A unit that is not one of the choices.
    #[error("config file {path}: [display] {key}: {source}")]
    Unit {
        /// The file.
        path: String,
        /// The key.
        key: &'static str,
        /// What was wrong.
        source: UnknownUnit,
    },
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct File {
    #[serde(default)]
    display: Display,
    #[serde(default)]
    lab: Option<Lab>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Lab {
    name: String,
    #[serde(default)]
    address: Option<String>,
}

/// The issuing lab the config file names, as a certificate prints it ("name, address").
pub fn issuer() -> Result<Option<String>, ConfigError> {
    let (path, named) = config_path();
    if !(named || path.is_file()) {
        return Ok(None);
    }
    let at = path.display().to_string();
    let text = std::fs::read_to_string(&path).map_err(|e| ConfigError::Read {
        path: at.clone(),
        reason: e.to_string(),
    })?;
    let file: File = toml::from_str(&text).map_err(|e| ConfigError::Syntax {
        path: at,
        reason: e.to_string().trim().to_string(),
    })?;
    Ok(file
        .lab
        .map(|l| match l.address.filter(|a| !a.trim().is_empty()) {
            Some(a) => format!("{}, {}", l.name.trim(), a.trim()),
            None => l.name.trim().to_string(),
        }))
}

#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct Display {
    flux: Option<String>,
    temperature: Option<String>,
}

/// The config file to read, and whether it must be there (named by the environment).
pub fn config_path() -> (PathBuf, bool) {
    match std::env::var_os(CONFIG_ENV).filter(|v| !v.is_empty()) {
        Some(p) => (PathBuf::from(p), true),
        None => (
            crate::user_dirs::config_dir()
                .join("remanent")
                .join("config.toml"),
            false,
        ),
    }
}

/// The display units a file states (SI-based for what it leaves out).
pub fn load(path: &Path) -> Result<DisplayUnits, ConfigError> {
    let at = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| ConfigError::Read {
        path: at.clone(),
        reason: e.to_string(),
    })?;
    let file: File = toml::from_str(&text).map_err(|e| ConfigError::Syntax {
        path: at.clone(),
        reason: e.to_string().trim().to_string(),
    })?;
    let unit = |key, source| ConfigError::Unit {
        path: at.clone(),
        key,
        source,
    };
    let mut u = DisplayUnits::SI;
    if let Some(f) = &file.display.flux {
        u.flux = f.parse::<FluxUnit>().map_err(|e| unit("flux", e))?;
    }
    if let Some(t) = &file.display.temperature {
        u.temp = t.parse::<TempUnit>().map_err(|e| unit("temperature", e))?;
    }
    Ok(u)
}

/// The units for one command: those given on its command line, else the config file's, else
/// SI-based. A missing default file is no error; a named one that is missing is.
pub fn choose(flux: Option<FluxUnit>, temp: Option<TempUnit>) -> Result<DisplayUnits, ConfigError> {
    let (path, named) = config_path();
    let mut u = if named || path.is_file() {
        load(&path)?
    } else {
        DisplayUnits::SI
    };
    if let Some(f) = flux {
        u.flux = f;
    }
    if let Some(t) = temp {
        u.temp = t;
    }
    Ok(u)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_config_file_sets_units_and_a_wrong_one_is_named_with_its_line() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("config.toml");
        std::fs::write(&p, "[display]\nflux = \"G\"\ntemperature = \"F\"\n").unwrap();
        let u = load(&p).unwrap();
        assert_eq!((u.flux, u.temp), (FluxUnit::Gauss, TempUnit::Fahrenheit));
        std::fs::write(&p, "[display]\nflux = \"kG\"\n").unwrap();
        let e = load(&p).unwrap_err().to_string();
        assert!(
            e.contains("config.toml") && e.contains("flux") && e.contains("kG"),
            "{e}"
        );
        std::fs::write(&p, "[display]\nflux = \"G\"\ncolour = 1\n").unwrap();
        let e = load(&p).unwrap_err().to_string();
        assert!(e.contains("colour") && e.contains("line 3"), "{e}");
        let e = load(&dir.path().join("none.toml")).unwrap_err().to_string();
        assert!(e.contains("none.toml"), "{e}");
    }
}
