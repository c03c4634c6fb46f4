use std::fs;
use std::hash::{BuildHasher, Hasher};
use std::io::{ErrorKind, Write};
use std::path::{Path, PathBuf};

#[derive(Debug, thiserror::Error)]
pub enum WriteError {
    #[error("refusing to write through the symbolic link `{0}`")]
    Symlink(PathBuf),
    #[error("refusing to replace `{0}`: it is not writable by you (its mode is kept; change it first if the file should change)")]
    ReadOnly(PathBuf),
    #[error("refusing to replace `{0}`: it has {1} hard links and replacing it would split them (edit it through one name, or copy it first)")]
    HardLinked(PathBuf, u64),
    #[error("refusing to replace `{0}`: it changed since it was read (run again to work on the new contents)")]
    Changed(PathBuf),
    #[error("refusing to replace `{0}`: its owner could not be kept ({1})")]
    Owner(PathBuf, String),
    #[error("cannot write `{path}`: {source}")]
    Io {
        path: PathBuf,
        source: std::io::Error,
    },
}

/// How many random temporary names are tried before giving up: a
/// collision needs a leftover with the same 64 random bits.
const TEMP_ATTEMPTS: u32 = 16;

/// Writes `contents` to `path` through a temporary file in the same folder
/// and a rename, so a reader (or an interrupted run) sees the old file or
/// the new one, never half of either. The file and its folder are synced
/// before and after the rename. Replacing a file keeps its permissions and
/// owner, and is refused where it would bypass them: a file the user
/// cannot write, or one with other hard links (the rename would leave them
/// holding the old contents).
pub fn write_atomic(path: &Path, contents: &[u8]) -> Result<(), WriteError> {
    write_checked(path, contents, None)
}

/// [`write_atomic`] for a file that was read as `read_before`: refused if
/// the file no longer holds exactly that (another program changed it
/// meanwhile, and its change would be lost).
pub fn replace_atomic(path: &Path, contents: &[u8], read_before: &[u8]) -> Result<(), WriteError> {
    write_checked(path, contents, Some(read_before))
}

fn write_checked(
    path: &Path,
    contents: &[u8],
    read_before: Option<&[u8]>,
) -> Result<(), WriteError> {
    let io = |source| WriteError::Io {
        path: path.to_path_buf(),
        source,
    };
    let old = match fs::symlink_metadata(path) {
        Ok(m) => Some(m),
        Err(e) if e.kind() == ErrorKind::NotFound => None,
        Err(e) => return Err(io(e)),
    };
    if let Some(m) = &old {
        refuse_replacing(path, m)?;
    }
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let (tmp, mut f) = create_temporary(dir, path).map_err(io)?;
    let result = (|| {
        f.write_all(contents)?;
        if let Some(m) = &old {
            keep_owner(&f, m)?;
            fs::set_permissions(&tmp, m.permissions())?;
        }
        f.sync_all()?;
        if let Some(before) = read_before {
            if fs::read(path)? != before {
                return Err(std::io::Error::other(CHANGED));
            }
        }
        fs::rename(&tmp, path)?;
        sync_folder(dir)
    })();
    match result {
        Ok(()) => Ok(()),
        Err(e) => {
            if fs::symlink_metadata(&tmp).is_ok() {
                let _ = fs::remove_file(&tmp);
            }
            Err(classify(path, e))
        }
    }
}

const CHANGED: &str = "changed since read";
const OWNER: &str = "owner not kept";

fn classify(path: &Path, e: std::io::Error) -> WriteError {
    match e.get_ref().map(|inner| inner.to_string()) {
        Some(text) if text == CHANGED => WriteError::Changed(path.to_path_buf()),
        Some(text) if text.starts_with(OWNER) => WriteError::Owner(path.to_path_buf(), text),
        _ => WriteError::Io {
            path: path.to_path_buf(),
            source: e,
        },
    }
}

/// The checks before an existing file is replaced.
fn refuse_replacing(path: &Path, old: &fs::Metadata) -> Result<(), WriteError> {
    if old.file_type().is_symlink() {
        return Err(WriteError::Symlink(path.to_path_buf()));
    }
    // A file without any write permission was marked not to change, even
    // for an administrator who could; otherwise opening it for writing
    // (without truncating, nothing is written) asks the system the real
    // question for this user.
    if old.permissions().readonly() {
        return Err(WriteError::ReadOnly(path.to_path_buf()));
    }
    if let Err(e) = fs::OpenOptions::new().write(true).open(path) {
        return Err(if e.kind() == ErrorKind::PermissionDenied {
            WriteError::ReadOnly(path.to_path_buf())
        } else {
            WriteError::Io {
                path: path.to_path_buf(),
                source: e,
            }
        });
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if old.nlink() > 1 {
            return Err(WriteError::HardLinked(path.to_path_buf(), old.nlink()));
        }
    }
    Ok(())
}

/// A new file beside `path` under a random name, made exclusively: a
/// leftover from an earlier run (or anyone's file) is never opened, and a
/// collision just draws another name.
fn create_temporary(dir: &Path, path: &Path) -> std::io::Result<(PathBuf, fs::File)> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut last = None;
    for attempt in 0..TEMP_ATTEMPTS {
        let tmp = dir.join(format!(".{name}.catena-tmp-{:016x}", random_u64(attempt)));
        match fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)
        {
            Ok(f) => return Ok((tmp, f)),
            Err(e) if e.kind() == ErrorKind::AlreadyExists => last = Some(e),
            Err(e) => return Err(e),
        }
    }
    Err(last.unwrap_or_else(|| std::io::Error::other("no temporary name")))
}

/// 64 unpredictable bits: the standard library's randomly keyed hasher
/// (fresh keys per process) over the time and the attempt.
fn random_u64(attempt: u32) -> u64 {
    let mut h = std::collections::hash_map::RandomState::new().build_hasher();
    let now = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_nanos())
        .unwrap_or(0);
    h.write_u128(now);
    h.write_u32(attempt);
    h.write_u32(std::process::id());
    h.finish()
}

#[cfg(unix)]
fn keep_owner(f: &fs::File, old: &fs::Metadata) -> std::io::Result<()> {
    use std::os::unix::fs::MetadataExt;
    let new = f.metadata()?;
    if new.uid() == old.uid() && new.gid() == old.gid() {
        return Ok(());
    }
    std::os::unix::fs::fchown(f, Some(old.uid()), Some(old.gid())).map_err(|e| {
        std::io::Error::other(format!(
            "{OWNER}: {}",
            e.to_string().split(" (os error").next().unwrap_or_default()
        ))
    })
}

#[cfg(not(unix))]
fn keep_owner(_: &fs::File, _: &fs::Metadata) -> std::io::Result<()> {
    Ok(())
}

/// Makes the rename durable: the folder's entry is synced too.
#[cfg(unix)]
fn sync_folder(dir: &Path) -> std::io::Result<()> {
    fs::File::open(dir)?.sync_all()
}

#[cfg(not(unix))]
fn sync_folder(_: &Path) -> std::io::Result<()> {
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::{replace_atomic, write_atomic, WriteError};

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

    /// A write that fails (here: the file changed since it was read)
    /// leaves the file as it was and no temporary behind; a leftover from
    /// an earlier run under the old fixed name blocks nothing and is left
    /// alone.
    #[test]
    fn a_failed_write_leaves_the_old_file() {
        let dir = std::env::temp_dir().join(format!("catena-atomic-fail-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("b.catena");
        std::fs::write(&target, "theirs").unwrap();
        assert!(matches!(
            replace_atomic(&target, b"new", b"old"),
            Err(WriteError::Changed(_))
        ));
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "theirs");
        assert_eq!(
            std::fs::read_dir(&dir).unwrap().count(),
            1,
            "no temporary left"
        );
        let leftover = dir.join(format!(".b.catena.catena-tmp-{}", std::process::id()));
        std::fs::write(&leftover, "someone's").unwrap();
        replace_atomic(&target, b"new", b"theirs").unwrap();
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new");
        let left = std::fs::read_to_string(&leftover).unwrap();
        assert_eq!(left, "someone's", "what was there is left alone");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    /// The rename would bypass the file's own mode and split hard links:
    /// both are refused, and a replaced file keeps its mode.
    #[cfg(unix)]
    #[test]
    fn keeps_mode_and_refuses_read_only_and_hard_links() {
        use std::os::unix::fs::PermissionsExt;
        let dir = std::env::temp_dir().join(format!("catena-atomic-mode-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let target = dir.join("c.catena");
        std::fs::write(&target, "old").unwrap();
        std::fs::set_permissions(&target, std::fs::Permissions::from_mode(0o640)).unwrap();
        write_atomic(&target, b"new").unwrap();
        let mode = std::fs::metadata(&target).unwrap().permissions().mode();
        assert_eq!(mode & 0o777, 0o640);
        let link = dir.join("d.catena");
        std::fs::hard_link(&target, &link).unwrap();
        assert!(matches!(
            write_atomic(&target, b"x"),
            Err(WriteError::HardLinked(_, 2))
        ));
        assert_eq!(std::fs::read_to_string(&link).unwrap(), "new");
        std::fs::remove_file(&link).unwrap();
        std::fs::set_permissions(&target, std::fs::Permissions::from_mode(0o444)).unwrap();
        assert!(matches!(
            write_atomic(&target, b"x"),
            Err(WriteError::ReadOnly(_))
        ));
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "new");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
