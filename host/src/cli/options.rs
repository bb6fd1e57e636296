//! Option groups shared by several subcommands, flattened into each.

use std::path::PathBuf;

/// Where the spec table comes from.
#[derive(clap::Args, Clone, Debug)]
pub struct SpecOpts {
    /// Grade spec table (TOML); default: the built-in table of typical values.
    #[arg(long)]
    pub specs: Option<PathBuf>,
}

/// Replacing files that are already there.
#[derive(clap::Args, Clone, Debug)]
pub struct ForceOpts {
    /// Replace output files that are already there.
    #[arg(long)]
    pub force: bool,
}

/// Which calibration converts the raw codes.
#[derive(clap::Args, Clone, Debug)]
pub struct CalibrationOpts {
    /// Rig calibration TOML (default: the virtual rig's constants, with a note).
    #[arg(long)]
    pub calibration: Option<PathBuf>,
}
