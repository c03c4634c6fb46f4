use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    #[error("refusing to write through the symbolic link `{0}`")]
    Symlink(PathBuf),
    #[error("cannot write `{path}`: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
}

/// Writes `contents` to `path` through a temporary file in the same folder
/// and a rename, so a reader (or an interrupted run) sees the old file or
/// the new one, never half of either. Keeps the old file's permissions.
pub fn write_atomic(path: &Path, contents: &[u8]) -> Result<(), WriteError> {
    let io = |source| WriteError::Io {
        path: path.to_path_buf(),
        source,
    };
    let old = fs::symlink_metadata(path).ok();
    if old.as_ref().is_some_and(|m| m.file_type().is_symlink()) {
        return Err(WriteError::Symlink(path.to_path_buf()));
    }
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.catena-tmp-{}", std::process::id()));
    // Only a temporary this call made is ever removed: whatever already
    // sits at its name is someone's, and is left alone.
    let mut f = fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&tmp)
        .map_err(io)?;
    let result = (|| {
        f.write_all(contents)?;
        f.sync_all()?;
        if let Some(m) = &old {
            fs::set_permissions(&tmp, m.permissions())?;
        }
        fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result.map_err(io)
}

#[cfg(test)]
mod tests {
    use super::{write_atomic, WriteError};

    #[test]
    fn replaces_whole_and_refuses_symlinks() {
        let dir = std::env::temp_dir().join(format!("catena-atomic-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("a.catena");
        std::fs::write(&target, "old").unwrap();
        write_atomic(&target, b"new").unwrap();
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new");
        #[cfg(unix)]
        {
            let link = dir.join("link.catena");
            let _ = std::fs::remove_file(&link);
            std::os::unix::fs::symlink(&target, &link).unwrap();
            assert!(matches!(
                write_atomic(&link, b"x"),
                Err(WriteError::Symlink(_))
            ));
            assert_eq!(std::fs::read_to_string(&target).unwrap(), "new");
        }
        std::fs::remove_dir_all(&dir).unwrap();
    }

    /// A write that fails (here the temporary file cannot be made: a file
    /// already sits at its name) leaves the old output whole, as an
    /// interrupted run would, and the file in the way untouched.
    #[test]
    fn a_failed_write_leaves_the_old_file() {
        let dir = std::env::temp_dir().join(format!("catena-atomic-fail-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("b.catena");
        std::fs::write(&target, "old").unwrap();
        let blocker = dir.join(format!(".b.catena.catena-tmp-{}", std::process::id()));
        std::fs::write(&blocker, "someone's").unwrap();
        assert!(matches!(
            write_atomic(&target, b"new"),
            Err(WriteError::Io { .. })
        ));
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "old");
        let left = std::fs::read_to_string(&blocker).unwrap();
        assert_eq!(left, "someone's", "what was there is left alone");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
