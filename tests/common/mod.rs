//! Helpers shared by the integration tests: run the built binary.

#![allow(dead_code)]

pub mod worst;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

pub struct Run {
    pub status: i32,
    pub stdout: String,
    pub stderr: String,
}

pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Runs `catena` in `dir` with colour off and a fixed width.
pub fn catena(dir: &Path, args: &[&str], stdin: Option<&[u8]>) -> Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(args)
        .current_dir(dir)
        .env("NO_COLOR", "1")
        .env("COLUMNS", "80")
        .stdin(if stdin.is_some() {
            Stdio::piped()
        } else {
            Stdio::null()
        })
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the catena binary runs");
    if let Some(input) = stdin {
        let mut pipe = child.stdin.take().expect("stdin is piped");
        pipe.write_all(input).expect("stdin accepts the input");
    }
    let out = child.wait_with_output().expect("catena finishes");
    Run {
        status: out.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

/// A fresh, empty folder under the system's temporary folder, its name
/// made of `prefix`, this test binary's process id and `name`; removed
/// with everything in it when the test is done with it.
pub fn temp_dir(prefix: &str, name: &str) -> TempDir {
    let dir = std::env::temp_dir().join(format!("catena-{prefix}-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("a temporary folder can be made");
    TempDir(dir)
}

/// A test's scratch folder ([`temp_dir`]), removed when dropped.
pub struct TempDir(PathBuf);

impl std::ops::Deref for TempDir {
    type Target = Path;

    fn deref(&self) -> &Path {
        &self.0
    }
}

impl AsRef<Path> for TempDir {
    fn as_ref(&self) -> &Path {
        &self.0
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

/// Runs `git` in `dir` with a throwaway identity; fails the test if it
/// fails.
pub fn git(dir: &Path, args: &[&str]) {
    let status = Command::new("git")
        .args(["-c", "user.name=t", "-c", "user.email=t@example.invalid"])
        .args(args)
        .current_dir(dir)
        .status()
        .expect("git runs");
    assert!(status.success(), "git {args:?}");
}

/// A command's standard output parsed as JSON.
pub fn json(stdout: &str) -> serde_json::Value {
    serde_json::from_str(stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {stdout}"))
}

/// Every demo spec, sorted.
pub fn demo_specs() -> Vec<PathBuf> {
    let mut specs: Vec<PathBuf> = std::fs::read_dir(root().join("specs"))
        .expect("specs/ exists")
        .map(|e| e.expect("readable entry").path())
        .filter(|p| p.extension().is_some_and(|e| e == "catena"))
        .collect();
    specs.sort();
    specs
}
