use std::path::{Path, PathBuf};

use crate::diagnostics::Finding;
use crate::input::{not_a_regular_spec, read_limited, ReadError};
use crate::syntax::MAX_SOURCE_BYTES;

/// The spec files named on the command line: files as given, folders
/// searched recursively for `*.catena`, in sorted order.
pub fn collect(paths: &[PathBuf]) -> Result<Vec<PathBuf>, String> {
    let mut out = Vec::new();
    for path in paths {
        let meta = std::fs::metadata(path)
            .map_err(|e| format!("cannot read `{}`: {}", path.display(), plain_io(&e)))?;
        if meta.is_dir() {
            walk(path, &mut out).map_err(|e| {
                format!("cannot read folder `{}`: {}", path.display(), plain_io(&e))
            })?;
        } else {
            out.push(path.clone());
        }
    }
    Ok(out)
}

fn walk(dir: &Path, out: &mut Vec<PathBuf>) -> std::io::Result<()> {
    let mut entries: Vec<_> = std::fs::read_dir(dir)?.collect::<Result<_, _>>()?;
    entries.sort_by_key(|e| e.file_name());
    for entry in entries {
        let path = entry.path();
        let kind = entry.file_type()?;
        if kind.is_dir() {
            // Hidden folders (`.git`) and build output are never specs.
            let name = entry.file_name();
            let name = name.to_string_lossy();
            if !name.starts_with('.') && name != "target" {
                walk(&path, out)?;
            }
        } else if path.extension().is_some_and(|e| e == "catena") {
            out.push(path);
        }
    }
    Ok(())
}

/// An I/O error without the `(os error 2)` tail.
pub fn plain_io(e: &std::io::Error) -> String {
    let text = e.to_string();
    match text.find(" (os error") {
        Some(i) => text[..i].to_lowercase(),
        None => text.to_lowercase(),
    }
}

/// Reads one spec: its bytes (at most the size limit plus one), or the
/// finding that refuses it (not a regular file); an unreadable file is a
/// usage error, already reported.
pub fn read_spec(path: &Path) -> Result<Result<Vec<u8>, Finding>, u8> {
    match read_limited(path, MAX_SOURCE_BYTES) {
        Ok(bytes) => Ok(Ok(bytes)),
        Err(ReadError::NotRegular(kind)) => {
            Ok(Err(not_a_regular_spec(&path.to_string_lossy(), kind)))
        }
        Err(ReadError::Io(e)) => {
            errln!("catena: cannot read `{}`: {}", path.display(), plain_io(&e));
            Err(super::EXIT_USAGE)
        }
    }
}

/// Reads and checks one spec for a command that then works on it; an
/// unreadable file is a usage error, already reported.
pub fn check_one(path: &Path) -> Result<crate::check::CheckedFile, u8> {
    let bytes = match read_spec(path)? {
        Ok(bytes) => bytes,
        Err(refused) => {
            let mut findings = crate::diagnostics::Findings::new();
            findings.push(refused);
            return Ok(crate::check::CheckedFile {
                findings,
                ..Default::default()
            });
        }
    };
    let base = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    Ok(crate::check::check_bytes(
        &path.to_string_lossy(),
        &bytes,
        base,
        &mut crate::model::PartsCache::default(),
    ))
}
