//! `rust-version` in Cargo.toml is a promise: the crate builds with that
//! toolchain. It holds only if no locked dependency needs a newer one, so
//! this reads the lock through `cargo metadata --locked` and compares.

use std::process::Command;

fn version(text: &str) -> Vec<u64> {
    text.split('.').map(|p| p.parse().unwrap_or(0)).collect()
}

#[test]
fn rust_version_covers_every_locked_dependency() {
    let out = Command::new(env!("CARGO"))
        .args(["metadata", "--locked", "--offline", "--format-version", "1"])
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("cargo metadata runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).expect("metadata JSON");
    let packages = doc["packages"].as_array().expect("packages");
    let ours = packages
        .iter()
        .find(|p| p["name"] == "catena")
        .and_then(|p| p["rust_version"].as_str())
        .expect("Cargo.toml states a rust-version");
    let too_new: Vec<String> = packages
        .iter()
        .filter(|p| p["name"] != "catena")
        .filter_map(|p| {
            let needs = p["rust_version"].as_str()?;
            (version(needs) > version(ours))
                .then(|| format!("{} {} needs {needs}", p["name"], p["version"]))
        })
        .collect();
    assert!(
        too_new.is_empty(),
        "rust-version {ours} is below what the lock needs: {too_new:?}"
    );
}
