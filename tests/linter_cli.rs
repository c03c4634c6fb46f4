//! The conventions of a linter, through the binary: standard input with a
//! name, a path without specs, colour, quiet, completions and man pages,
//! `fmt --check --diff`, and `budget` over several files.

mod common;

use std::process::{Command, Stdio};

use common::{catena, root};

fn temp_dir(name: &str) -> common::TempDir {
    common::temp_dir("linter", name)
}

/// Standard input is named by `--stdin-filename`, and its `use` paths
/// start from that name's folder.
#[test]
fn stdin_takes_its_name_and_folder_from_stdin_filename() {
    let spec = std::fs::read(root().join("specs/weighing_hopper.catena")).unwrap();
    let run = catena(
        &root(),
        &[
            "check",
            "--format",
            "short",
            "--stdin-filename",
            "specs/hopper.catena",
            "-",
        ],
        Some(&spec),
    );
    assert_eq!(run.status, 0, "{}{}", run.stdout, run.stderr);
    assert_eq!(run.stdout, "");
    // From the repository root, without the name, `parts/hopper.yaml` is
    // not there: the finding names standard input.
    let run = catena(&root(), &["check", "--format", "short", "-"], Some(&spec));
    assert_eq!(run.status, 1);
    assert!(
        run.stdout.starts_with("<stdin>:5:") && run.stdout.contains("L401"),
        "{}",
        run.stdout
    );
}

#[test]
fn a_folder_without_specs_is_a_usage_error() {
    let dir = temp_dir("empty");
    std::fs::create_dir_all(dir.join("nothing")).unwrap();
    for command in ["check", "fmt", "budget"] {
        let run = catena(&dir, &[command, "nothing"], None);
        assert_eq!(run.status, 2, "{command}: {}", run.stderr);
        assert_eq!(run.stderr, "catena: no *.catena files under `nothing`\n");
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn quiet_drops_the_summary_line() {
    let run = catena(&root(), &["check", "specs/cold_store.catena"], None);
    assert!(run.stderr.contains("checked 1 file"), "{}", run.stderr);
    let run = catena(&root(), &["check", "-q", "specs/cold_store.catena"], None);
    assert_eq!((run.status, run.stderr.as_str()), (0, ""));
}

/// stderr of `check` on a fixture with a finding, with the environment
/// given and the test helper's `NO_COLOR` left out.
fn colored_stderr(args: &[&str], env: &[(&str, &str)]) -> String {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_catena"));
    cmd.args(args)
        .arg("check")
        .arg("tests/fixtures/invalid/U103-missing-unit.catena")
        .current_dir(root())
        .env_remove("NO_COLOR")
        .env_remove("CLICOLOR_FORCE")
        .stdin(Stdio::null());
    for (k, v) in env {
        cmd.env(k, v);
    }
    let out = cmd.output().unwrap();
    String::from_utf8_lossy(&out.stderr).into_owned()
}

#[test]
fn color_follows_the_flag_then_the_environment() {
    let escape = |s: &str| s.contains('\u{1b}');
    // Not a terminal: plain, unless forced.
    assert!(!escape(&colored_stderr(&[], &[])));
    assert!(escape(&colored_stderr(&[], &[("CLICOLOR_FORCE", "1")])));
    assert!(!escape(&colored_stderr(&[], &[("CLICOLOR_FORCE", "0")])));
    assert!(escape(&colored_stderr(
        &["--color", "always"],
        &[("NO_COLOR", "1")]
    )));
    assert!(!escape(&colored_stderr(
        &["--color", "never"],
        &[("CLICOLOR_FORCE", "1")]
    )));
}

#[test]
fn completions_and_man_pages_come_from_the_commands() {
    for shell in ["bash", "zsh", "fish", "elvish", "powershell"] {
        let run = catena(&root(), &["completions", shell], None);
        assert_eq!(run.status, 0, "{shell}: {}", run.stderr);
        for word in ["catena", "check", "stdin-filename", "budget"] {
            assert!(run.stdout.contains(word), "{shell} lacks {word}");
        }
    }
    let run = catena(&root(), &["man"], None);
    assert_eq!(run.status, 0);
    assert!(run.stdout.contains(".TH catena 1"), "{}", run.stdout);
    assert!(run.stdout.contains("completions"));
    let run = catena(&root(), &["man", "check"], None);
    assert!(run.stdout.contains(".TH catena-check 1"), "{}", run.stdout);
    assert!(run.stdout.contains("stdin\\-filename"), "{}", run.stdout);
    assert_eq!(catena(&root(), &["man", "nope"], None).status, 2);
}

#[test]
fn fmt_check_diff_shows_the_change_and_changes_nothing() {
    let dir = temp_dir("diff");
    let messy = "chain a \"A\" {\n    measurand temperature 0 degC .. 1 degC\n        ambient 0 degC .. 40 degC\n}\n";
    std::fs::write(dir.join("a.catena"), messy).unwrap();
    let run = catena(&dir, &["fmt", "--check", "--diff", "a.catena"], None);
    assert_eq!(run.status, 1, "{}", run.stderr);
    assert_eq!(
        run.stdout,
        "--- a/a.catena\n+++ b/a.catena\n@@ -1,4 +1,4 @@\n chain a \"A\" {\n     measurand temperature 0 degC .. 1 degC\n-        ambient 0 degC .. 40 degC\n+    ambient 0 degC .. 40 degC\n }\n"
    );
    assert_eq!(
        std::fs::read_to_string(dir.join("a.catena")).unwrap(),
        messy
    );
    let run = catena(
        &dir,
        &["fmt", "--check", "--diff", "-"],
        Some(messy.as_bytes()),
    );
    assert_eq!(run.status, 1);
    assert!(run.stdout.starts_with("--- a/<stdin>\n"), "{}", run.stdout);
    let run = catena(&dir, &["fmt", "--check", "-q", "a.catena"], None);
    assert_eq!((run.status, run.stdout.as_str()), (1, ""));
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn budget_takes_several_files_and_folders() {
    let budget = |more: &[&str]| {
        let mut args = vec!["budget", "--trials", "0", "--format", "json"];
        args.extend_from_slice(more);
        catena(&root(), &args, None)
    };
    let run = budget(&["tests/fixtures/budget/gum_rtd.catena", "specs"]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let docs = common::json(&run.stdout);
    let docs = docs.as_array().expect("one document per chain");
    let demo_chains: usize = common::demo_specs()
        .iter()
        .map(|p| {
            let text = std::fs::read_to_string(p).unwrap();
            text.lines().filter(|l| l.starts_with("chain ")).count()
        })
        .sum();
    assert_eq!(docs.len(), 1 + demo_chains);
    assert_eq!(docs[0]["file"], "tests/fixtures/budget/gum_rtd.catena");
    assert!(docs[1]["file"].as_str().unwrap().starts_with("specs/"));
    // One chain picked out of several files.
    let run = budget(&["--chain", "cold_store", "specs"]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let doc = common::json(&run.stdout);
    assert_eq!(doc["chain"], "cold_store");
    let run = catena(&root(), &["budget", "--chain", "nowhere", "specs"], None);
    assert_eq!(run.status, 2);
}
