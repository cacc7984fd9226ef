//! Writing files without losing what was there: every write goes to a temporary file in the
//! target folder, is flushed and synced, then renamed over (or beside) the target. A crash
//! mid-way leaves the old file whole.

use std::io::Write;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// Why a file could not be written.
#[derive(Debug, Error)]
pub enum WriteError {
    /// The target exists and overwriting was not allowed.
    #[error("{path}: already exists; choose another name or remove it first")]
    Exists {
        /// The target.
        path: PathBuf,
    },
    /// The operating system refused.
    #[error("{path}: cannot write: {source}")]
    Io {
        /// The target.
        path: PathBuf,
        /// Why.
        #[source]
        source: std::io::Error,
    },
}

/// Writes `bytes` to `path` atomically. With `overwrite` false an existing file is an error
/// (checked at the rename, so a file created meanwhile is not lost either).
///
/// # Errors
/// [`WriteError::Exists`] when the target exists and `overwrite` is false; [`WriteError::Io`]
/// when the folder cannot be written.
pub fn write_atomic(path: &Path, bytes: &[u8], overwrite: bool) -> Result<(), WriteError> {
    write_atomic_with(path, overwrite, |file| file.write_all(bytes))
}

/// As [`write_atomic`], with the content produced by `fill` writing into the temporary file.
/// If `fill` fails the temporary file is removed and the target is untouched.
///
/// # Errors
/// As [`write_atomic`], and [`WriteError::Io`] with `fill`'s error.
pub fn write_atomic_with(
    path: &Path,
    overwrite: bool,
    fill: impl FnOnce(&mut dyn Write) -> std::io::Result<()>,
) -> Result<(), WriteError> {
    let io = |source| WriteError::Io {
        path: path.to_path_buf(),
        source,
    };
    if !overwrite && path.exists() {
        return Err(WriteError::Exists {
            path: path.to_path_buf(),
        });
    }
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut temp = tempfile::Builder::new()
        .prefix(".loadfit-")
        .suffix(".tmp")
        .tempfile_in(&folder)
        .map_err(io)?;
    {
        let mut buffered = std::io::BufWriter::new(temp.as_file_mut());
        fill(&mut buffered).map_err(io)?;
        buffered.flush().map_err(io)?;
    }
    // A temporary file is created private (0600); the file it becomes should have the
    // permissions of the file it replaces, or the usual 0644 for a new one.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(path).map_or(0o644, |m| m.permissions().mode() & 0o7777);
        temp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(mode))
            .map_err(io)?;
    }
    temp.as_file().sync_all().map_err(io)?;
    if overwrite {
        temp.persist(path).map_err(|e| io(e.error))?;
    } else {
        temp.persist_noclobber(path).map_err(|e| {
            if e.error.kind() == std::io::ErrorKind::AlreadyExists {
                WriteError::Exists {
                    path: path.to_path_buf(),
                }
            } else {
                io(e.error)
            }
        })?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn writes_and_refuses_to_overwrite() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.txt");
        write_atomic(&path, b"one", false).unwrap();
        assert!(matches!(
            write_atomic(&path, b"two", false),
            Err(WriteError::Exists { .. })
        ));
        assert_eq!(std::fs::read(&path).unwrap(), b"one");
        write_atomic(&path, b"two", true).unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"two");
    }

    #[cfg(unix)]
    #[test]
    fn written_files_are_readable_like_any_other() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("new.csv");
        write_atomic(&path, b"x", false).unwrap();
        assert_eq!(
            std::fs::metadata(&path).unwrap().permissions().mode() & 0o777,
            0o644
        );
        std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o640)).unwrap();
        write_atomic(&path, b"y", true).unwrap();
        assert_eq!(
            std::fs::metadata(&path).unwrap().permissions().mode() & 0o777,
            0o640
        );
    }

    #[test]
    fn a_failing_writer_leaves_the_old_file_whole() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("stage.toml");
        std::fs::write(&path, "title = \"old\"\n").unwrap();
        let result = write_atomic_with(&path, true, |out| {
            out.write_all(b"title = \"half")?;
            Err(std::io::Error::other("disk full"))
        });
        assert!(result.is_err());
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "title = \"old\"\n");
        let leftovers = std::fs::read_dir(dir.path()).unwrap().count();
        assert_eq!(leftovers, 1, "the temporary file is removed");
    }
}
