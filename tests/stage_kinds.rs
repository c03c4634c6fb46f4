//! Every stage keyword of the grammar and every model of it has its one
//! place in each layer (DEVELOPERS.md, "Add a stage kind"): a schema row,
//! a node file in `src/eval/node/`, an entry in the language reference, a
//! demo spec and a test fixture that use it. Adding a kind without one of
//! them fails here.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use catena::model::{schema, PartsCache};
use catena::syntax::ast::StageKind;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn specs_under(dir: &Path, skip: &[&str], out: &mut Vec<PathBuf>) {
    let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
        .expect("a readable folder")
        .map(|e| e.expect("entry").path())
        .collect();
    entries.sort();
    for path in entries {
        let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
        if path.is_dir() && !skip.contains(&name) {
            specs_under(&path, skip, out);
        } else if path.extension().is_some_and(|e| e == "catena") {
            out.push(path);
        }
    }
}

/// The (keyword, model word) of every stage the specs resolve to a typed
/// model; the model word is empty for a kind with one model.
fn used(files: &[PathBuf]) -> BTreeSet<(String, String)> {
    let mut parts = PartsCache::default();
    let mut out = BTreeSet::new();
    for file in files {
        let bytes = std::fs::read(file).expect("readable spec");
        let base = file.parent().expect("a folder");
        let name = file.display().to_string();
        let checked = catena::check::check_bytes(&name, &bytes, base, &mut parts);
        for stage in checked.chains.iter().flat_map(|c| &c.stages) {
            if stage.typed.is_some() {
                let model = stage.model.unwrap_or("").to_string();
                out.insert((stage.kind.keyword().to_string(), model));
            }
        }
    }
    out
}

#[test]
fn every_stage_kind_has_its_place_in_every_layer() {
    let root = root();
    let reference = std::fs::read_to_string(root.join("grammar/README.md")).expect("reference");
    let mut demos = Vec::new();
    specs_under(&root.join("specs"), &["parts"], &mut demos);
    let mut fixtures = Vec::new();
    specs_under(&root.join("tests/fixtures"), &["invalid"], &mut fixtures);
    let (demos, fixtures) = (used(&demos), used(&fixtures));
    let mut missing = Vec::new();
    for kind in StageKind::ALL {
        let keyword = kind.keyword();
        let models: Vec<_> = schema::models(kind).collect();
        if models.is_empty() {
            missing.push(format!(
                "`{keyword}` has no schema row (src/model/schema.rs)"
            ));
        }
        for spec in models {
            let what = match spec.model {
                Some(m) => format!("{keyword} `{m}`"),
                None => format!("`{keyword}`"),
            };
            let node_file = [spec.model, Some(keyword)]
                .into_iter()
                .flatten()
                .any(|f| root.join(format!("src/eval/node/{f}.rs")).is_file());
            if !node_file {
                missing.push(format!("{what} has no node file in src/eval/node/"));
            }
            // As code of its own, or opening one (`lowpass rc | …`).
            for word in std::iter::once(keyword).chain(spec.model) {
                let written = [format!("`{word}`"), format!("`{word} ")];
                if !written.iter().any(|w| reference.contains(w.as_str())) {
                    missing.push(format!("`{word}` is not in grammar/README.md"));
                }
            }
            let key = (keyword.to_string(), spec.model.unwrap_or("").to_string());
            if !demos.contains(&key) {
                missing.push(format!("no demo spec in specs/ uses {what}"));
            }
            if !fixtures.contains(&key) {
                missing.push(format!("no fixture in tests/fixtures/ uses {what}"));
            }
        }
    }
    assert!(missing.is_empty(), "{}", missing.join("\n"));
}
