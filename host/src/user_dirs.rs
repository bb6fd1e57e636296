//! The user's folders, from the environment alone: where the history store lives by default
//! and where the config file is read from (the XDG base-directory convention on Linux,
//! `%APPDATA%` on Windows, `~/Library/Application Support` on macOS).

use std::path::PathBuf;

fn env(k: &str) -> Option<PathBuf> {
    std::env::var_os(k)
        .filter(|v| !v.is_empty())
        .map(PathBuf::from)
}

/// The platform's folder where it has one of its own (Windows, macOS).
fn platform_dir() -> Option<PathBuf> {
    if cfg!(windows) {
        return Some(env("APPDATA").unwrap_or_else(|| PathBuf::from(".")));
    }
    if cfg!(target_os = "macos") {
        return env("HOME").map(|h| h.join("Library").join("Application Support"));
    }
    None
}

/// `$<var>` when absolute, else `~/<under_home>`; the working folder when neither is set.
fn xdg(var: &str, under_home: &[&str]) -> PathBuf {
    platform_dir()
        .or_else(|| env(var).filter(|p| p.is_absolute()))
        .or_else(|| env("HOME").map(|h| under_home.iter().fold(h, |p, s| p.join(s))))
        .unwrap_or_else(|| PathBuf::from("."))
}

/// The user's data folder: `$XDG_DATA_HOME` or `~/.local/share`.
pub fn data_dir() -> PathBuf {
    xdg("XDG_DATA_HOME", &[".local", "share"])
}

/// The user's config folder: `$XDG_CONFIG_HOME` or `~/.config`.
pub fn config_dir() -> PathBuf {
    xdg("XDG_CONFIG_HOME", &[".config"])
}
