//! One output policy for every file a command writes for the user: nothing already there is
//! replaced without `--force`, and each file is written under a temporary name in its own
//! folder and renamed into place, so a failure (a full disk, a plotting error) never leaves a
//! 0-byte or half-written file behind. Outputs are rendered in memory first, as named bytes
//! ([`Produced`]); [`write_set`] checks a whole set before it writes any of it.

use std::fs;
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// Writing an output failed.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    /// A file is already there.
    #[error("{0} already exists; pass --force to replace it")]
    Exists(String),
    /// File system.
    #[error("{path}: {source}")]
    Io {
        /// File.
        path: String,
        /// Why.
        source: std::io::Error,
    },
    /// Producing the content failed.
    #[error("{path}: {reason}")]
    Produce {
        /// File.
        path: String,
        /// Why.
        reason: String,
    },
}

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> OutputError + '_ {
    move |source| OutputError::Io {
        path: path.display().to_string(),
        source,
    }
}

/// Refuse if any of `paths` exists, unless `force` (check a whole set before writing any).
pub fn refuse_existing(
    paths: impl IntoIterator<Item = PathBuf>,
    force: bool,
) -> Result<(), OutputError> {
    if force {
        return Ok(());
    }
    match paths.into_iter().find(|p| p.exists()) {
        Some(p) => Err(OutputError::Exists(p.display().to_string())),
        None => Ok(()),
    }
}

/// The temporary name `path` is written under before the rename: hidden, in the same
/// folder (so the rename is atomic), keeping the extension (image encoders go by it).
pub fn temporary(path: &Path) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    match path.extension() {
        Some(ext) => path.with_file_name(format!(".{stem}.partial.{}", ext.to_string_lossy())),
        None => path.with_file_name(format!(".{stem}.partial")),
    }
}

/// Write `bytes` to `path` (refused if it exists, unless `force`).
pub fn write(path: &Path, bytes: &[u8], force: bool) -> Result<(), OutputError> {
    write_with(path, force, |tmp| {
        let mut f = fs::File::create(tmp).map_err(|e| e.to_string())?;
        f.write_all(bytes).map_err(|e| e.to_string())?;
        f.sync_all().map_err(|e| e.to_string())
    })
}

/// Let `produce` write the file at the temporary path it is given, then rename it to `path`;
/// on any failure the temporary file is removed and `path` is left as it was.
pub fn write_with(
    path: &Path,
    force: bool,
    produce: impl FnOnce(&Path) -> Result<(), String>,
) -> Result<(), OutputError> {
    refuse_existing([path.to_path_buf()], force)?;
    let tmp = temporary(path);
    if let Err(reason) = produce(&tmp) {
        let _ = fs::remove_file(&tmp);
        return Err(OutputError::Produce {
            path: path.display().to_string(),
            reason,
        });
    }
    fs::rename(&tmp, path).map_err(|e| {
        let _ = fs::remove_file(&tmp);
        io(path)(e)
    })
}

/// One output rendered in memory: its file name inside the output folder, and its bytes.
#[derive(Debug, Clone, PartialEq)]
pub struct Produced {
    /// The file's name (a plain name, no folder).
    pub name: String,
    /// Its content.
    pub bytes: Vec<u8>,
}

impl Produced {
    /// `bytes` as the file `name`.
    pub fn new(name: impl Into<String>, bytes: impl Into<Vec<u8>>) -> Produced {
        Produced {
            name: name.into(),
            bytes: bytes.into(),
        }
    }
}

/// Write every file of `set` into `dir`: refused as a whole when any is there (unless `force`),
/// then each written under a temporary name and renamed. Returns the paths, in `set`'s order.
pub fn write_set(dir: &Path, set: &[Produced], force: bool) -> Result<Vec<PathBuf>, OutputError> {
    let paths: Vec<PathBuf> = set.iter().map(|p| dir.join(&p.name)).collect();
    refuse_existing(paths.iter().cloned(), force)?;
    for (p, path) in set.iter().zip(&paths) {
        write(path, &p.bytes, true)?;
    }
    Ok(paths)
}

/// Create a new output folder (refused if it exists, unless `force`).
pub fn create_dir(dir: &Path, force: bool) -> Result<(), OutputError> {
    refuse_existing([dir.to_path_buf()], force)?;
    fs::create_dir_all(dir).map_err(io(dir))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn existing_files_are_refused_and_failures_leave_nothing_behind() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("a.txt");
        write(&p, b"one", false).unwrap();
        assert!(matches!(
            write(&p, b"two", false),
            Err(OutputError::Exists(_))
        ));
        assert_eq!(fs::read(&p).unwrap(), b"one");
        write(&p, b"two", true).unwrap();
        assert_eq!(fs::read(&p).unwrap(), b"two");
        // a producer that fails half-way leaves neither the file nor its temporary
        let q = dir.path().join("b.png");
        let r = write_with(&q, false, |tmp| {
            fs::write(tmp, b"half").unwrap();
            Err("disk full".into())
        });
        assert!(matches!(r, Err(OutputError::Produce { .. })));
        assert!(!q.exists() && !temporary(&q).exists());
    }

    #[test]
    fn a_set_is_refused_whole_when_one_of_its_files_is_there() {
        let dir = tempfile::tempdir().unwrap();
        fs::write(dir.path().join("b.csv"), "kept").unwrap();
        let set = [Produced::new("a.csv", "a"), Produced::new("b.csv", "b")];
        assert!(matches!(
            write_set(dir.path(), &set, false),
            Err(OutputError::Exists(_))
        ));
        // nothing of the set was written, the file there is untouched
        assert!(!dir.path().join("a.csv").exists());
        assert_eq!(fs::read(dir.path().join("b.csv")).unwrap(), b"kept");
        let written = write_set(dir.path(), &set, true).unwrap();
        assert_eq!(
            written,
            [dir.path().join("a.csv"), dir.path().join("b.csv")]
        );
        assert_eq!(fs::read(&written[1]).unwrap(), b"b");
    }
}
