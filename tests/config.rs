//! `catena.yaml` through the binary: the fixtures of the configuration
//! codes (each folder a `catena.yaml` and a spec whose first line says what
//! it must report, at a line of the configuration), rules that change the
//! exit status, values that reach the analyses, flags that override, and
//! the lookup that stops at the repository's root.

mod common;

use std::path::{Path, PathBuf};

use common::{catena, root};

fn findings(dir: &Path, args: &[&str]) -> (i32, serde_json::Value) {
    let mut all = vec!["check", "--format", "json"];
    all.extend_from_slice(args);
    let run = catena(dir, &all, None);
    let v: serde_json::Value = serde_json::from_str(&run.stdout)
        .unwrap_or_else(|e| panic!("not JSON ({e}): {}{}", run.stdout, run.stderr));
    (run.status, v["findings"].clone())
}

#[test]
fn every_configuration_fixture_reports_its_expectation() {
    let base = root().join("tests/fixtures/config");
    let mut dirs: Vec<PathBuf> = std::fs::read_dir(&base)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    dirs.sort();
    assert!(dirs.len() >= 5);
    for dir in dirs {
        let spec = std::fs::read_to_string(dir.join("spec.catena")).unwrap();
        let header = spec.lines().next().unwrap();
        let words: Vec<&str> = header.split_whitespace().collect();
        let [_, "expect:", severity, code, "line", line] = words.as_slice() else {
            panic!("{}: malformed header {header:?}", dir.display());
        };
        let (status, found) = findings(&dir, &["spec.catena"]);
        assert_eq!(status, 1, "{}", dir.display());
        let hit = found.as_array().unwrap().iter().any(|f| {
            f["code"] == *code
                && f["severity"] == *severity
                && f["file"] == "catena.yaml"
                && f["line"].as_u64() == line.parse().ok()
        });
        assert!(
            hit,
            "{}: expected {code} at catena.yaml:{line}, found {found}",
            dir.display()
        );
        insta::assert_snapshot!(
            format!("config-{}", dir.file_name().unwrap().to_string_lossy()),
            serde_json::to_string_pretty(&found).unwrap()
        );
    }
}

/// A throwaway repository with a spec that misses its accuracy
/// requirement (R611, an error).
fn repo(name: &str) -> common::TempDir {
    let dir = common::temp_dir("config", name);
    std::fs::create_dir_all(dir.join("repo/.git")).unwrap();
    std::fs::create_dir_all(dir.join("repo/specs")).unwrap();
    std::fs::copy(
        root().join("tests/fixtures/invalid/R611-accuracy-too-tight.catena"),
        dir.join("repo/specs/oven.catena"),
    )
    .unwrap();
    dir
}

#[test]
fn a_rule_that_demotes_a_code_changes_the_exit_status() {
    let dir = repo("demote");
    let repo = dir.join("repo");
    let (status, found) = findings(&repo, &["specs"]);
    assert_eq!((status, found[0]["severity"].as_str()), (1, Some("error")));
    std::fs::write(repo.join("catena.yaml"), "rules:\n  R611: warn\n").unwrap();
    let (status, found) = findings(&repo, &["specs"]);
    assert_eq!(
        (status, found[0]["severity"].as_str()),
        (0, Some("warning"))
    );
    assert_eq!(findings(&repo, &["--deny", "warnings", "specs"]).0, 1);
    // The SARIF level follows the rule too.
    let run = catena(&repo, &["check", "--format", "sarif", "specs"], None);
    assert!(
        run.stdout.contains("\"level\": \"warning\""),
        "{}",
        run.stdout
    );
    std::fs::write(repo.join("catena.yaml"), "rules:\n  R611: allow\n").unwrap();
    let (status, found) = findings(&repo, &["specs"]);
    assert_eq!((status, found.as_array().unwrap().len()), (0, 0));
    // A configuration above the repository's root never applies.
    std::fs::remove_file(repo.join("catena.yaml")).unwrap();
    std::fs::write(dir.join("catena.yaml"), "rules:\n  R611: allow\n").unwrap();
    assert_eq!(findings(&repo, &["specs"]).0, 1);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn a_misspelt_key_is_reported_in_the_configuration_file() {
    let dir = repo("misspelt");
    let repo = dir.join("repo");
    std::fs::write(
        repo.join("specs/catena.yaml"),
        "rules:\n  R611: warn\nmonte_carlo:\n  trails: 500\n",
    )
    .unwrap();
    let run = catena(&repo, &["check", "--format", "short", "specs"], None);
    assert_eq!(run.status, 1);
    assert_eq!(
        run.stdout,
        "specs/catena.yaml:4:3: error C802 `trails` is not a configuration key\n\
         specs/oven.catena:6:5: warning R611 accuracy ± 1.17 K (GUM, k = 2) misses the required ± 0.5 K at 30 degC, ambient 30 degC\n"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// The ambient and reference reach the budget; the seed and trials too;
/// flags override them.
#[test]
fn values_reach_the_analyses_and_flags_override_them() {
    let dir = repo("values");
    let repo = dir.join("repo");
    std::fs::copy(
        root().join("tests/fixtures/budget/gum_rtd.catena"),
        repo.join("specs/gum.catena"),
    )
    .unwrap();
    std::fs::write(
        repo.join("catena.yaml"),
        "ambient: 0 degC .. 40 degC\nreference: 20 degC\nmonte_carlo:\n  trials: 300\n  seed: 9\n",
    )
    .unwrap();
    let budget = |extra: &[&str]| {
        let mut args = vec![
            "budget",
            "--format",
            "json",
            "--points",
            "2",
            "specs/gum.catena",
        ];
        args.extend_from_slice(extra);
        let run = catena(&repo, &args, None);
        assert_eq!(run.status, 0, "{}", run.stderr);
        serde_json::from_str::<serde_json::Value>(&run.stdout).unwrap()
    };
    let v = budget(&[]);
    let ambients: Vec<f64> = v["points"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["ambient"].as_f64().unwrap())
        .collect();
    assert_eq!(ambients, [0.0, 0.0, 20.0, 20.0, 40.0, 40.0]);
    assert_eq!(
        (v["trials"].as_u64(), v["seed"].as_u64()),
        (Some(300), Some(9))
    );
    let v = budget(&["--trials", "200", "--seed", "3"]);
    assert_eq!(
        (v["trials"].as_u64(), v["seed"].as_u64()),
        (Some(200), Some(3))
    );
    let run = catena(
        &repo,
        &["check", "--print-config", "--trials", "50", "specs"],
        None,
    );
    assert_eq!(run.status, 0, "{}", run.stderr);
    for line in [
        "configuration: catena.yaml",
        "ambient              0 degC .. 40 degC        catena.yaml:1",
        "reference            20 degC                  catena.yaml:2",
        "margin               5 %                      default",
        "monte_carlo.trials   50                       flag --trials",
        "monte_carlo.seed     9                        catena.yaml:5",
    ] {
        assert!(
            run.stdout.contains(line),
            "{line:?} missing from\n{}",
            run.stdout
        );
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A parts file the configuration lists serves every spec without a `use`.
#[test]
fn configured_parts_serve_every_spec() {
    let dir = repo("parts");
    let repo = dir.join("repo");
    let spec =
        std::fs::read_to_string(root().join("tests/fixtures/invalid/L403-misspelt-part.catena"))
            .unwrap()
            .replace("use \"parts/cold-store-parts.yaml\"", "")
            .replace("inamp_4x", "inamp_x4");
    std::fs::write(repo.join("specs/store.catena"), spec).unwrap();
    std::fs::remove_file(repo.join("specs/oven.catena")).unwrap();
    let (status, found) = findings(&repo, &["specs"]);
    assert_eq!(status, 1);
    assert_eq!(found[0]["code"], "L406", "{found}");
    std::fs::create_dir_all(repo.join("lib")).unwrap();
    std::fs::copy(
        root().join("tests/fixtures/invalid/parts/cold-store-parts.yaml"),
        repo.join("lib/approved.yaml"),
    )
    .unwrap();
    std::fs::write(repo.join("catena.yaml"), "parts:\n  - lib/approved.yaml\n").unwrap();
    let (status, found) = findings(&repo, &["specs"]);
    assert_eq!((status, found.as_array().unwrap().len()), (0, 0), "{found}");
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A rule relaxes a fault finding in a chain that guards nothing, but not
/// in one that says it protects property: there the silent open couple
/// (R670) stays an error and R675 on the rule says it was not applied.
/// `warn` is refused the same way; `deny` still applies.
#[test]
fn a_rule_cannot_weaken_a_safety_finding() {
    let dir = common::temp_dir("config", "safety");
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    for name in ["check_open_couple_silent", "check_open_couple_protects"] {
        std::fs::copy(
            root().join(format!("tests/fixtures/faults/{name}.catena")),
            dir.join(format!("{name}.catena")),
        )
        .unwrap();
    }
    let codes = |found: &serde_json::Value, file: &str| -> Vec<(String, String)> {
        found
            .as_array()
            .unwrap()
            .iter()
            .filter(|f| f["file"] == file)
            .map(|f| (f["code"].to_string(), f["severity"].to_string()))
            .collect()
    };
    for level in ["allow", "warn"] {
        std::fs::write(
            dir.join("catena.yaml"),
            format!("rules:\n  R670: {level}\n"),
        )
        .unwrap();
        let (status, found) = findings(&dir, &["."]);
        assert_eq!(status, 1, "{found}");
        let protects = codes(&found, "check_open_couple_protects.catena");
        assert_eq!(
            protects,
            [("\"R670\"".into(), "\"error\"".into())],
            "{found}"
        );
        let plain = codes(&found, "check_open_couple_silent.catena");
        let expected: Vec<(String, String)> = match level {
            "allow" => Vec::new(),
            _ => vec![("\"R670\"".into(), "\"warning\"".into())],
        };
        assert_eq!(plain, expected, "{found}");
        let rule = codes(&found, "catena.yaml");
        assert_eq!(rule, [("\"R675\"".into(), "\"warning\"".into())], "{found}");
    }
    std::fs::write(dir.join("catena.yaml"), "rules:\n  R670: deny\n").unwrap();
    let (_, found) = findings(&dir, &["."]);
    assert_eq!(
        codes(&found, "check_open_couple_silent.catena"),
        [("\"R670\"".into(), "\"error\"".into())]
    );
    assert!(codes(&found, "catena.yaml").is_empty(), "{found}");
}
