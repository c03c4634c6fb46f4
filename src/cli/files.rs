use std::path::{Path, PathBuf};

use crate::analysis::Keep;
use crate::diagnostics::Finding;
use crate::input::{not_a_regular_spec, read_limited, ReadError};
use crate::syntax::MAX_SOURCE_BYTES;

/// The spec files named on the command line: files as given, folders
/// searched recursively for `*.catena`, in sorted order. A folder with no
/// spec in it is an error: a mistyped path must not pass as a clean check.
pub fn collect(paths: &[PathBuf]) -> Result<Vec<PathBuf>, String> {
    let (files, loops) = collect_reporting(paths)?;
    for finding in loops {
        errln!("catena: {}", finding.message);
    }
    Ok(files)
}

/// [`collect`], with a finding (S015) for each folder link that leads back
/// into a folder being searched: it is skipped and the search goes on.
pub fn collect_reporting(paths: &[PathBuf]) -> Result<(Vec<PathBuf>, Vec<Finding>), String> {
    let mut out = Vec::new();
    let mut loops = Vec::new();
    for path in paths {
        let meta = std::fs::metadata(path)
            .map_err(|e| format!("cannot read `{}`: {}", path.display(), plain_io(&e)))?;
        if meta.is_dir() {
            let before = out.len();
            let mut walk = Walk {
                out: &mut out,
                loops: &mut loops,
                ancestors: Vec::new(),
            };
            walk.folder(path).map_err(|e| {
                format!("cannot read folder `{}`: {}", path.display(), plain_io(&e))
            })?;
            if out.len() == before {
                return Err(format!("no *.catena files under `{}`", path.display()));
            }
        } else {
            out.push(path.clone());
        }
    }
    Ok((out, loops))
}

struct Walk<'a> {
    out: &'a mut Vec<PathBuf>,
    loops: &'a mut Vec<Finding>,
    /// The folders being searched, resolved: a link back to one is a loop.
    ancestors: Vec<PathBuf>,
}

impl Walk<'_> {
    fn folder(&mut self, dir: &Path) -> std::io::Result<()> {
        let resolved = std::fs::canonicalize(dir)?;
        if self.ancestors.contains(&resolved) {
            self.loops.push(link_loop(dir, &resolved));
            return Ok(());
        }
        self.ancestors.push(resolved);
        let mut entries: Vec<_> = std::fs::read_dir(dir)?.collect::<Result<_, _>>()?;
        entries.sort_by_key(|e| e.file_name());
        for entry in entries {
            self.entry(dir, &entry)?;
        }
        self.ancestors.pop();
        Ok(())
    }

    fn entry(&mut self, dir: &Path, entry: &std::fs::DirEntry) -> std::io::Result<()> {
        // `check .` names `s/a.catena`, not `./s/a.catena`: the name is
        // also a SARIF location's relative URI.
        let path = entry.path();
        let path = match path.strip_prefix(".") {
            Ok(inner) if dir == Path::new(".") => inner.to_path_buf(),
            _ => path,
        };
        let mut kind = entry.file_type()?;
        if kind.is_symlink() {
            // A link is followed to what it names: a folder behind a link
            // is searched like any other.
            match std::fs::metadata(&path) {
                Ok(meta) => kind = meta.file_type(),
                Err(e) if e.raw_os_error() == Some(ELOOP) => {
                    self.loops.push(link_loop(&path, &path));
                    return Ok(());
                }
                Err(_) => {}
            }
        }
        if kind.is_dir() {
            // Hidden folders (`.git`) and build output are never specs.
            let name = entry.file_name();
            let name = name.to_string_lossy();
            if !name.starts_with('.') && name != "target" {
                self.folder(&path)?;
            }
        } else if path.extension().is_some_and(|e| e == "catena") {
            self.out.push(path);
        }
        Ok(())
    }
}

/// The error number of a chain of symbolic links that never ends.
#[cfg(unix)]
const ELOOP: i32 = libc::ELOOP;
#[cfg(not(unix))]
const ELOOP: i32 = -1;

fn link_loop(path: &Path, target: &Path) -> Finding {
    let shown = path.display().to_string();
    let file = crate::diagnostics::SourceFile::new(shown.clone(), "");
    Finding::new(
        crate::diagnostics::Code::S015,
        &file,
        format!(
            "`{shown}` leads back to `{}`, a folder already being searched; it is skipped",
            target.display()
        ),
    )
    .help("remove the link or point it outside the folder it sits in")
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

/// Reads and checks one spec for a command that then works on it, with
/// the `catena.yaml` that applies to its folder (its rules applied, its
/// own findings among the spec's), keeping what the command uses of each
/// chain (`keep`); an unreadable file is a usage error, already reported.
pub fn check_one(
    path: &Path,
    keep: Keep,
) -> Result<
    (
        crate::check::CheckedFile,
        std::sync::Arc<crate::config::Config>,
    ),
    u8,
> {
    let read = read_spec(path)?;
    let base = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let bytes = match read {
        Ok(bytes) => bytes,
        Err(refused) => {
            let mut findings = crate::diagnostics::Findings::new();
            findings.push(refused);
            let checked = crate::check::CheckedFile {
                findings,
                ..Default::default()
            };
            let config = super::settings::Configs::default().for_folder(base);
            return Ok((checked, config));
        }
    };
    Ok(check_configured(
        &path.to_string_lossy(),
        &bytes,
        base,
        keep,
    ))
}

/// Checks a spec's bytes as [`check_one`] does, `base` being its folder
/// (for `use` paths and the `catena.yaml` lookup) and `name` how findings
/// show it.
pub fn check_configured(
    name: &str,
    bytes: &[u8],
    base: &Path,
    keep: Keep,
) -> (
    crate::check::CheckedFile,
    std::sync::Arc<crate::config::Config>,
) {
    let mut configs = super::settings::Configs::default();
    let config = configs.for_folder(base);
    let options = crate::analysis::CheckOptions {
        margin: config.margin.as_ref().map_or(0.0, |s| s.value.max(1e-12)),
        seed: config.seed.as_ref().map(|s| s.value),
        keep,
        ..Default::default()
    };
    let mut checked = crate::check::check_bytes_configured(
        name,
        bytes,
        base,
        &mut crate::model::PartsCache::default(),
        &options,
        &config.defaults(),
    );
    let mut findings = crate::diagnostics::Findings::new();
    for f in configs.findings() {
        findings.push(f);
    }
    for f in config.apply(checked.findings.into_vec()) {
        findings.push(f);
    }
    checked.findings = findings;
    (checked, config)
}

/// Where a command writes its file given `-o PATH`: a folder (one that
/// exists, or a path ending in `/`, created if missing) takes `stem.ext`
/// inside it; any other path is the file itself, in a folder that must
/// exist, so a mistyped folder is refused rather than created.
#[derive(Clone, Debug, PartialEq)]
pub struct Destination {
    pub file: PathBuf,
    pub folder: PathBuf,
    /// The folder is to be created before writing.
    pub create: bool,
}

pub fn destination(output: &Path, stem: &str, ext: &str) -> Result<Destination, String> {
    if output.is_dir() || output.to_string_lossy().ends_with('/') {
        return Ok(Destination {
            file: output.join(format!("{stem}.{ext}")),
            folder: output.to_path_buf(),
            create: !output.is_dir(),
        });
    }
    let folder = output
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    if !folder.is_dir() {
        return Err(format!(
            "cannot write `{}`: the folder `{}` does not exist (end the path with `/` to write into a new folder)",
            output.display(),
            folder.display()
        ));
    }
    Ok(Destination {
        file: output.to_path_buf(),
        folder: folder.to_path_buf(),
        create: false,
    })
}

impl Destination {
    /// Creates the folder if it is to be created.
    pub fn prepare(&self) -> Result<(), String> {
        if self.create {
            std::fs::create_dir_all(&self.folder).map_err(|e| {
                format!(
                    "cannot create `{}`: {}",
                    self.folder.display(),
                    plain_io(&e)
                )
            })?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod destination_tests {
    use super::*;

    #[test]
    fn a_trailing_slash_names_a_folder_to_create() {
        let d = destination(Path::new("no_such_folder_here/"), "cold_store", "h").unwrap();
        assert_eq!(d.file, Path::new("no_such_folder_here/cold_store.h"));
        assert!(d.create);
    }

    #[test]
    fn a_file_in_a_missing_folder_is_refused() {
        let e = destination(Path::new("no_such_folder_here/x.h"), "s", "h").unwrap_err();
        assert!(
            e.contains("the folder `no_such_folder_here` does not exist"),
            "{e}"
        );
    }

    #[test]
    fn a_file_in_the_current_folder_is_itself() {
        let d = destination(Path::new("x.md"), "s", "md").unwrap();
        assert_eq!(
            (d.file.as_path(), d.folder.as_path()),
            (Path::new("x.md"), Path::new("."))
        );
        assert!(!d.create);
    }
}
