//! Every diagnostic code has an explain page and at least one fixture.

mod common;

use catena::diagnostics::Code;
use common::{catena, root};

#[test]
fn every_code_has_a_fixture() {
    let dir = root().join("tests/fixtures/invalid");
    let mut headers = String::new();
    for entry in std::fs::read_dir(&dir).expect("fixtures folder") {
        let path = entry.expect("entry").path();
        if path.extension().is_some_and(|e| e == "catena") {
            let bytes = std::fs::read(&path).expect("readable");
            headers.push_str(String::from_utf8_lossy(&bytes).lines().next().unwrap_or(""));
            headers.push('\n');
        }
    }
    // Configuration codes: each fixture is a folder with its `catena.yaml`.
    for entry in std::fs::read_dir(root().join("tests/fixtures/config")).expect("config fixtures") {
        let spec = entry.expect("entry").path().join("spec.catena");
        let text = std::fs::read_to_string(&spec).expect("each folder has a spec.catena");
        headers.push_str(text.lines().next().unwrap_or(""));
        headers.push('\n');
    }
    // A file too large to check cannot be a committed fixture, nor can a
    // named pipe or a folder link loop; they are made by
    // `bad_input::oversized_file_is_refused`,
    // `robustness::pipes_and_devices_are_refused` and
    // `robustness::folder_links_are_followed_and_loops_skipped` instead.
    let generated = [Code::S004, Code::S012, Code::S015];
    let missing: Vec<&str> = Code::ALL
        .iter()
        .filter(|c| !generated.contains(c) && !headers.contains(c.as_str()))
        .map(|c| c.as_str())
        .collect();
    assert!(missing.is_empty(), "codes without a fixture: {missing:?}");
}

#[test]
fn every_code_has_an_explain_page() {
    for code in Code::ALL {
        let page = code.explain();
        assert!(
            page.starts_with(&format!("# {}", code.as_str())) && page.lines().count() >= 5,
            "{} has no real explain page",
            code.as_str()
        );
        let run = catena(&root(), &["explain", code.as_str()], None);
        assert_eq!(run.status, 0);
        assert_eq!(run.stdout, page);
    }
}

#[test]
fn explain_lists_codes_and_refuses_unknown_ones() {
    let run = catena(&root(), &["explain"], None);
    assert_eq!(run.status, 0);
    assert_eq!(run.stdout.lines().count(), Code::ALL.len());
    let run = catena(&root(), &["explain", "U1O2"], None);
    assert_eq!(run.status, 2);
    assert!(
        run.stderr.contains("did you mean `U102`?"),
        "{}",
        run.stderr
    );
}
