use std::path::{Path, PathBuf};

/// The spec files named on the command line: files as given, folders
/// searched recursively for `*.catena`, in sorted order. A folder with no
/// spec in it is an error: a mistyped path must not pass as a clean check.
pub fn collect(paths: &[PathBuf]) -> Result<Vec<PathBuf>, String> {
    let mut out = Vec::new();
    for path in paths {
        let meta = std::fs::metadata(path)
            .map_err(|e| format!("cannot read `{}`: {}", path.display(), plain_io(&e)))?;
        if meta.is_dir() {
            let before = out.len();
            walk(path, &mut out).map_err(|e| {
                format!("cannot read folder `{}`: {}", path.display(), plain_io(&e))
            })?;
            if out.len() == before {
                return Err(format!("no *.catena files under `{}`", path.display()));
            }
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
        // `check .` names `s/a.catena`, not `./s/a.catena`: the name is
        // also a SARIF location's relative URI.
        let path = entry.path();
        let path = match path.strip_prefix(".") {
            Ok(inner) if dir == Path::new(".") => inner.to_path_buf(),
            _ => path,
        };
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

/// Reads and checks one spec for a command that then works on it, with
/// the `catena.yaml` that applies to its folder (its rules applied, its
/// own findings among the spec's); an unreadable file is a usage error,
/// already reported.
pub fn check_one(
    path: &Path,
) -> Result<
    (
        crate::check::CheckedFile,
        std::sync::Arc<crate::config::Config>,
    ),
    u8,
> {
    let bytes = std::fs::read(path).map_err(|e| {
        eprintln!("catena: cannot read `{}`: {}", path.display(), plain_io(&e));
        super::EXIT_USAGE
    })?;
    let base = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    Ok(check_configured(&path.to_string_lossy(), &bytes, base))
}

/// Checks a spec's bytes as [`check_one`] does, `base` being its folder
/// (for `use` paths and the `catena.yaml` lookup) and `name` how findings
/// show it.
pub fn check_configured(
    name: &str,
    bytes: &[u8],
    base: &Path,
) -> (
    crate::check::CheckedFile,
    std::sync::Arc<crate::config::Config>,
) {
    let mut configs = super::settings::Configs::default();
    let config = configs.for_folder(base);
    let options = crate::analysis::CheckOptions {
        margin: config.margin.as_ref().map_or(0.0, |s| s.value.max(1e-12)),
        seed: config.seed.as_ref().map(|s| s.value),
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
