//! Any file, however broken, gets coded diagnostics and exit 1: never a
//! panic, a hang or exit 0.

mod common;

use common::{catena, TempDir};

fn temp(name: &str, bytes: &[u8]) -> (TempDir, String) {
    let dir = common::temp_dir("bad", name);
    std::fs::write(dir.join(name), bytes).unwrap();
    (dir, name.to_string())
}

fn codes_of(stdout: &str) -> Vec<String> {
    let v: serde_json::Value = serde_json::from_str(stdout).expect("JSON");
    v["findings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["code"].as_str().unwrap().to_string())
        .collect()
}

fn check(name: &str, bytes: &[u8]) -> Vec<String> {
    let (dir, file) = temp(name, bytes);
    let run = catena(&dir, &["check", "--format", "json", &file], None);
    assert_eq!(run.status, 1, "{name}: {}{}", run.stdout, run.stderr);
    let codes = codes_of(&run.stdout);
    assert!(!codes.is_empty());
    codes
}

#[test]
fn binary_junk() {
    let junk: Vec<u8> = (0..4096u32)
        .map(|i| (i.wrapping_mul(2654435761) >> 13) as u8)
        .collect();
    assert_eq!(check("junk.catena", &junk), vec!["S003"]);
}

#[test]
fn a_ten_megabyte_line() {
    let line = vec![b'x'; 10 * 1024 * 1024];
    assert_eq!(check("long.catena", &line), vec!["S004"]);
}

#[test]
fn oversized_file_is_refused() {
    let mut text = b"chain a {\n".to_vec();
    text.extend(std::iter::repeat_n(b"  # padding\n".as_slice(), 400_000).flatten());
    text.extend(b"}\n");
    assert_eq!(check("big.catena", &text), vec!["S004"]);
}

#[test]
fn a_long_line_below_the_limit() {
    let mut text = b"chain a {\n    title \"".to_vec();
    text.extend(vec![b'y'; 2 * 1024 * 1024]);
    text.extend(b"\" @\n}\n");
    let codes = check("wide.catena", &text);
    assert!(codes.contains(&"S001".to_string()), "{codes:?}");
}

#[test]
fn unbalanced_braces() {
    assert_eq!(
        check("open.catena", b"chain a {\n  sensor p {\n"),
        vec!["S002", "S002"]
    );
    assert_eq!(check("close.catena", b"chain a {\n}\n}\n"), vec!["S002"]);
    let deep = "{".repeat(100_000);
    let codes = check("deep.catena", deep.as_bytes());
    assert!(
        codes.contains(&"S008".to_string()) && codes.contains(&"S002".to_string()),
        "{codes:?}"
    );
}

#[test]
fn unknown_units() {
    let spec =
        b"chain a {\n measurand temperature 0 degC .. 10 degC\n excitation e { current 1 mQ }\n}\n";
    assert!(check("unit.catena", spec).contains(&"U101".to_string()));
}

#[test]
fn many_bad_lines_are_capped() {
    let mut text = String::from("chain a {\n");
    for _ in 0..500 {
        text.push_str("  @@@\n");
    }
    text.push_str("}\n");
    let codes = check("many.catena", text.as_bytes());
    assert_eq!(codes.len(), catena::syntax::MAX_FINDINGS_PER_FILE + 1);
    assert_eq!(codes.last().unwrap(), "S009");
}
