//! Old versions of specs read with the `git` command: the spec and every
//! parts file it `use`s, from the same revision, following renames.

use std::path::{Path, PathBuf};
use std::process::Command;

/// Runs git in `dir`; its standard output, or its error in words.
fn git(dir: &Path, args: &[&str]) -> Result<Vec<u8>, String> {
    let out = Command::new("git")
        .args(args)
        .current_dir(dir)
        .output()
        .map_err(|e| format!("cannot run `git`: {}", super::files::plain_io(&e)))?;
    if out.status.success() {
        Ok(out.stdout)
    } else {
        let text = String::from_utf8_lossy(&out.stderr);
        Err(format!("git {}: {}", args.join(" "), text.trim()))
    }
}

/// The repository around `dir`: its root, canonical.
pub fn root(dir: &Path) -> Result<PathBuf, String> {
    let out = git(dir, &["rev-parse", "--show-toplevel"])?;
    let text = String::from_utf8_lossy(&out).trim().to_string();
    std::fs::canonicalize(&text)
        .map_err(|e| format!("cannot read `{text}`: {}", super::files::plain_io(&e)))
}

/// A spec changed since the revision: its path there (None: new since)
/// and here (None: removed since), both relative to the root.
#[derive(Clone, Debug, PartialEq)]
pub struct Changed {
    pub old: Option<String>,
    pub new: Option<String>,
}

/// Every file changed between `rev` and the working tree, renames
/// followed (`git diff --name-status -M`).
pub fn changes(root: &Path, rev: &str) -> Result<Vec<Changed>, String> {
    let out = git(root, &["diff", "--name-status", "-M", rev, "--"])?;
    let mut list = Vec::new();
    for line in String::from_utf8_lossy(&out).lines() {
        let fields: Vec<&str> = line.split('\t').collect();
        let status = fields.first().copied().unwrap_or_default();
        let entry = match (status.chars().next(), fields.as_slice()) {
            (Some('R' | 'C'), [_, old, new]) => Changed {
                old: (status.starts_with('R')).then(|| old.to_string()),
                new: Some(new.to_string()),
            },
            (Some('A'), [_, new]) => Changed {
                old: None,
                new: Some(new.to_string()),
            },
            (Some('D'), [_, old]) => Changed {
                old: Some(old.to_string()),
                new: None,
            },
            (Some(_), [_, path]) => Changed {
                old: Some(path.to_string()),
                new: Some(path.to_string()),
            },
            _ => continue,
        };
        list.push(entry);
    }
    Ok(list)
}

/// A file's bytes at the revision, by its path from the root.
pub fn show(root: &Path, rev: &str, path: &str) -> Result<Vec<u8>, String> {
    git(root, &["show", &format!("{rev}:./{path}")])
}

/// A throwaway folder holding the old spec and the parts files it uses,
/// at their paths from the root, with a `.git` marker so `use` paths are
/// confined to it as they are to the repository. Removed when dropped.
pub struct Snapshot {
    pub dir: PathBuf,
}

impl Snapshot {
    pub fn new() -> Result<Snapshot, String> {
        let base = std::env::temp_dir();
        let stamp = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map(|d| d.as_nanos())
            .unwrap_or(0);
        for attempt in 0..100u32 {
            let dir = base.join(format!(
                "catena-rev-{}-{stamp}-{attempt}",
                std::process::id()
            ));
            if std::fs::create_dir(&dir).is_ok() {
                std::fs::create_dir(dir.join(".git")).map_err(|e| {
                    format!(
                        "cannot write a temporary folder: {}",
                        super::files::plain_io(&e)
                    )
                })?;
                return Ok(Snapshot { dir });
            }
        }
        Err("cannot make a temporary folder".into())
    }

    /// Writes `bytes` at `path` (from the root) inside the snapshot.
    pub fn put(&self, path: &str, bytes: &[u8]) -> Result<PathBuf, String> {
        let target = self.dir.join(path);
        if let Some(parent) = target.parent() {
            std::fs::create_dir_all(parent).map_err(|e| {
                format!(
                    "cannot write a temporary folder: {}",
                    super::files::plain_io(&e)
                )
            })?;
        }
        crate::emit::write_atomic(&target, bytes)
            .map_err(|e| format!("cannot write a temporary file: {e}"))?;
        Ok(target)
    }
}

impl Drop for Snapshot {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

/// `dir/rel` made lexical (no `.` or `..`), or None when it climbs out
/// of the root.
pub fn join_inside(dir: &str, rel: &str) -> Option<String> {
    let mut parts: Vec<&str> = dir.split('/').filter(|p| !p.is_empty()).collect();
    for part in rel.split('/') {
        match part {
            "" | "." => {}
            ".." => {
                parts.pop()?;
            }
            p => parts.push(p),
        }
    }
    Some(parts.join("/"))
}

#[cfg(test)]
mod tests {
    use super::join_inside;

    #[test]
    fn joins_relative_paths_inside_the_root() {
        assert_eq!(
            join_inside("specs", "parts/a.yaml").as_deref(),
            Some("specs/parts/a.yaml")
        );
        assert_eq!(
            join_inside("specs/x", "../parts/a.yaml").as_deref(),
            Some("specs/parts/a.yaml")
        );
        assert_eq!(join_inside("", "../a.yaml"), None);
    }
}
