//! Every file Catena reads — specs, parts files, standard input — comes
//! through here: only regular files are read (a FIFO would block forever,
//! `/dev/zero` would never end), and never more than the caller's limit
//! plus one byte, so an oversized input is recognised without being held.

use std::fs::{File, Metadata};
use std::io::Read;
use std::path::Path;

use crate::diagnostics::{Code, Finding, SourceFile};

/// Why a path was not read.
#[derive(Debug)]
pub enum ReadError {
    /// It exists but is not a regular file: a FIFO, a device, a socket
    /// or a folder. The text names what it is.
    NotRegular(&'static str),
    Io(std::io::Error),
}

/// Reads at most `limit + 1` bytes of the regular file at `path`
/// (following symbolic links): a result longer than `limit` means the
/// file is over it.
pub fn read_limited(path: &Path, limit: usize) -> Result<Vec<u8>, ReadError> {
    // Refuse before opening: opening a FIFO for reading waits for a writer.
    let meta = std::fs::metadata(path).map_err(ReadError::Io)?;
    refuse_unless_regular(&meta)?;
    let file = open_nonblocking(path).map_err(ReadError::Io)?;
    // The path may have been replaced since it was looked at: what was
    // opened is what counts.
    refuse_unless_regular(&file.metadata().map_err(ReadError::Io)?)?;
    read_at_most(file, limit).map_err(ReadError::Io)
}

/// The finding for a spec path that is not a regular file.
pub fn not_a_regular_spec(shown: &str, kind: &str) -> Finding {
    let file = SourceFile::new(shown, "");
    Finding::new(
        Code::S012,
        &file,
        format!("`{shown}` is {kind}, not a regular file; it is not read"),
    )
    .help("name the spec file itself; Catena reads only regular files")
}

/// Reads standard input, at most `limit + 1` bytes.
pub fn read_stdin_limited(limit: usize) -> std::io::Result<Vec<u8>> {
    read_at_most(std::io::stdin().lock(), limit)
}

fn read_at_most(reader: impl Read, limit: usize) -> std::io::Result<Vec<u8>> {
    let mut bytes = Vec::new();
    reader.take(limit as u64 + 1).read_to_end(&mut bytes)?;
    Ok(bytes)
}

fn refuse_unless_regular(meta: &Metadata) -> Result<(), ReadError> {
    if meta.is_file() {
        Ok(())
    } else {
        Err(ReadError::NotRegular(kind_of(meta)))
    }
}

/// What a non-regular file is, in words.
fn kind_of(meta: &Metadata) -> &'static str {
    if meta.is_dir() {
        return "a folder";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        let kind = meta.file_type();
        if kind.is_fifo() {
            return "a named pipe (FIFO)";
        }
        if kind.is_char_device() || kind.is_block_device() {
            return "a device";
        }
        if kind.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

#[cfg(unix)]
fn open_nonblocking(path: &Path) -> std::io::Result<File> {
    use std::os::unix::fs::OpenOptionsExt;
    // Non-blocking only for the open itself: should a FIFO slip in between
    // the check and the open, the open returns instead of waiting. Reads of
    // a regular file ignore the flag.
    std::fs::OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK)
        .open(path)
}

#[cfg(not(unix))]
fn open_nonblocking(path: &Path) -> std::io::Result<File> {
    File::open(path)
}

#[cfg(test)]
mod tests {
    use super::{read_limited, ReadError};

    #[test]
    fn reads_at_most_the_limit_plus_one() {
        let dir = std::env::temp_dir().join(format!("catena-input-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("a.catena");
        std::fs::write(&path, vec![b'x'; 100]).unwrap();
        assert_eq!(read_limited(&path, 1000).unwrap().len(), 100);
        assert_eq!(read_limited(&path, 10).unwrap().len(), 11);
        assert!(matches!(
            read_limited(&dir, 10),
            Err(ReadError::NotRegular("a folder"))
        ));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn devices_are_refused() {
        assert!(matches!(
            read_limited(std::path::Path::new("/dev/zero"), 10),
            Err(ReadError::NotRegular("a device"))
        ));
    }
}
