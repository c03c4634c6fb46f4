//! Where a spec's configuration is: the nearest `catena.yaml` from the
//! spec's folder upwards, stopping at the repository's root (a folder that
//! holds `.git`), so a file outside the repository never applies.

use std::path::{Component, Path, PathBuf};

use super::FILE_NAME;

/// The configuration file for a spec in `folder`: the path to read it at
/// and the name to show, as `folder` is written (`specs/catena.yaml`,
/// `../catena.yaml`).
pub fn find(folder: &Path) -> Option<(PathBuf, String)> {
    let start = std::fs::canonicalize(folder)
        .or_else(|_| std::path::absolute(folder))
        .ok()?;
    for (up, dir) in start.ancestors().enumerate() {
        let candidate = dir.join(FILE_NAME);
        if candidate.is_file() {
            let mut shown = folder.to_path_buf();
            for _ in 0..up {
                shown.push("..");
            }
            shown.push(FILE_NAME);
            return Some((candidate, normalise(&shown)));
        }
        if dir.join(".git").exists() {
            return None;
        }
    }
    None
}

/// `specs/sub/../catena.yaml` as `specs/catena.yaml`; a leading `./` goes.
fn normalise(path: &Path) -> String {
    let mut parts: Vec<Component> = Vec::new();
    for c in path.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir if matches!(parts.last(), Some(Component::Normal(_))) => {
                parts.pop();
            }
            other => parts.push(other),
        }
    }
    let joined: PathBuf = parts.iter().collect();
    joined.to_string_lossy().into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_normalised_as_written() {
        assert_eq!(
            normalise(Path::new("specs/sub/../catena.yaml")),
            "specs/catena.yaml"
        );
        assert_eq!(normalise(Path::new("./../catena.yaml")), "../catena.yaml");
        assert_eq!(normalise(Path::new("./catena.yaml")), "catena.yaml");
    }

    #[test]
    fn the_search_stops_at_the_repository_root() {
        let dir = std::env::temp_dir().join(format!("catena-lookup-{}", std::process::id()));
        let repo = dir.join("repo");
        std::fs::create_dir_all(repo.join("specs/deep")).unwrap();
        std::fs::create_dir_all(repo.join(".git")).unwrap();
        std::fs::write(dir.join(FILE_NAME), "rules: {}\n").unwrap();
        assert_eq!(find(&repo.join("specs/deep")), None);
        std::fs::write(repo.join(FILE_NAME), "rules: {}\n").unwrap();
        let (path, shown) = find(&repo.join("specs/deep")).unwrap();
        assert_eq!(path, std::fs::canonicalize(repo.join(FILE_NAME)).unwrap());
        assert!(shown.ends_with("repo/catena.yaml"), "{shown}");
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
