//! `catena export`: the C and Rust exports of every demo chain compile
//! warning-free, and programs linked with them give catena's readings —
//! its exact inverse across the whole valid code window, and `catena eval`
//! at points across the measurand range — within the error the export
//! states. Snapshots of every export of every demo spec; the refusals.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

use catena::check::check_bytes;
use catena::emit::export::exact_readings;
use catena::eval::lower;
use catena::model::{Chain, PartsCache};
use common::{catena, demo_specs, root};

/// Runs `catena` in the repository's root with git unable to find the
/// repository, so exports carry no revision and snapshots stay put.
fn export(args: &[&str]) -> common::Run {
    let out = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(args)
        .current_dir(root())
        .env("NO_COLOR", "1")
        .env("GIT_DIR", "/nonexistent/catena-export-test")
        .output()
        .expect("catena runs");
    common::Run {
        status: out.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("catena-export-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

/// A spec's chains, checked and lowered.
fn chains(spec: &Path) -> Vec<Chain> {
    let bytes = std::fs::read(spec).expect("spec is readable");
    let checked = check_bytes(
        &spec.to_string_lossy(),
        &bytes,
        spec.parent().expect("spec has a folder"),
        &mut PartsCache::default(),
    );
    assert!(!checked.findings.has_errors(), "{}", spec.display());
    checked.chains
}

fn relative(spec: &Path) -> String {
    spec.strip_prefix(root())
        .expect("spec under the root")
        .to_string_lossy()
        .to_string()
}

/// Runs a program with codes on its standard input; its readings.
fn run_program(program: &Path, codes: &[f64]) -> Vec<f64> {
    let mut child = Command::new(program)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("the program runs");
    let input: String = codes.iter().map(|c| format!("{c:?}\n")).collect();
    std::io::Write::write_all(&mut child.stdin.take().expect("stdin"), input.as_bytes())
        .expect("stdin takes the codes");
    let out = child.wait_with_output().expect("the program ends");
    assert!(out.status.success());
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|l| l.trim().parse().expect("a number per line"))
        .collect()
}

fn compile_c(dir: &Path, chain: &str) -> PathBuf {
    let main = format!(
        "#include <stdio.h>\n#include \"{chain}.h\"\nint main(void)\n{{\n    double code;\n    while (scanf(\"%lf\", &code) == 1) {{\n        printf(\"%.17g\\n\", {chain}_reading(code));\n    }}\n    return 0;\n}}\n"
    );
    std::fs::write(dir.join("main.c"), main).expect("main.c");
    let program = dir.join("reading_c");
    let status = Command::new("cc")
        .args([
            "-std=c99",
            "-Wall",
            "-Wextra",
            "-Werror",
            "-pedantic",
            "-O1",
        ])
        .arg(dir.join("main.c"))
        .arg(dir.join(format!("{chain}.c")))
        .arg("-o")
        .arg(&program)
        .status()
        .expect("a C compiler (cc) runs");
    assert!(status.success(), "the C export of `{chain}` compiles");
    program
}

fn compile_rust(dir: &Path, chain: &str) -> PathBuf {
    // The module alone, as a library with warnings denied.
    let status = Command::new("rustc")
        .args(["--edition", "2021", "--crate-type", "lib", "-D", "warnings"])
        .arg(dir.join("export.rs"))
        .arg("--out-dir")
        .arg(dir)
        .status()
        .expect("rustc runs");
    assert!(status.success(), "the Rust export of `{chain}` compiles");
    let main = format!(
        "#[path = \"export.rs\"]\nmod export;\nuse std::io::BufRead;\nfn main() {{\n    for line in std::io::stdin().lock().lines() {{\n        let code: f64 = line.unwrap().trim().parse().unwrap();\n        let reading = if code.fract() == 0.0 {{\n            export::{chain}::reading(code as i64)\n        }} else {{\n            export::{chain}::reading_mean(code)\n        }};\n        println!(\"{{reading:?}}\");\n    }}\n}}\n"
    );
    std::fs::write(dir.join("main.rs"), main).expect("main.rs");
    let program = dir.join("reading_rust");
    let status = Command::new("rustc")
        .args(["--edition", "2021", "-A", "dead_code"])
        .arg(dir.join("main.rs"))
        .arg("-o")
        .arg(&program)
        .status()
        .expect("rustc runs");
    assert!(
        status.success(),
        "a program using the Rust export of `{chain}` compiles"
    );
    program
}

/// Codes across the window: both ends, evenly spaced whole codes between,
/// and a few means of averaged codes.
fn window_codes(low: i64, high: i64) -> Vec<f64> {
    let n = 400;
    let mut codes: Vec<f64> = (0..=n)
        .map(|k| (low as f64 + (high - low) as f64 * k as f64 / n as f64).round())
        .collect();
    codes.extend([
        low as f64 + 0.25,
        (low + high) as f64 / 2.0 + 0.5,
        high as f64 - 0.75,
    ]);
    codes
}

fn assert_within(what: &str, got: &[f64], want: &[f64], codes: &[f64], bound: f64) {
    assert_eq!(got.len(), want.len(), "{what}: one reading per code");
    for ((g, w), c) in got.iter().zip(want).zip(codes) {
        // The stated error, plus the rounding of the arithmetic itself.
        let slack = bound + 1e-9 * (1.0 + w.abs());
        assert!(
            (g - w).abs() <= slack,
            "{what}: at code {c} the export reads {g}, catena {w}: {} beyond the stated {bound}",
            (g - w).abs()
        );
    }
}

/// `catena eval` at points across the measurand range at the reference
/// ambient: (code, reading).
fn eval_points(spec: &str, chain: &Chain) -> Vec<(f64, f64)> {
    let m = chain.measurand.as_ref().expect("a measurand");
    let show = |x: f64| catena::units::format::from_si(x, &m.unit);
    (0..=10)
        .map(|k| {
            let at = show(m.low) + (show(m.high) - show(m.low)) * f64::from(k) / 10.0;
            let at = format!("{at}");
            let run = catena(
                &root(),
                &[
                    "eval",
                    spec,
                    "--chain",
                    &chain.name,
                    "--at",
                    &at,
                    "--format",
                    "json",
                ],
                None,
            );
            let v: serde_json::Value = serde_json::from_str(&run.stdout).expect("eval JSON");
            (
                v["code"].as_f64().expect("a code"),
                v["reading"]["value"].as_f64().expect("a reading"),
            )
        })
        .collect()
}

/// Chains whose conversion needs a cold junction's reading as well as the
/// code: not exported yet, refused with exit status 2.
fn needs_cold_junction(run: &common::Run) -> bool {
    run.status == 2 && run.stderr.contains("cold junction")
}

#[test]
fn exports_compile_and_reproduce_catena_readings() {
    let mut exported = 0;
    for spec in demo_specs() {
        let rel = relative(&spec);
        for chain in chains(&spec) {
            let name = chain.name.clone();
            let json = export(&["export", &rel, "--chain", &name, "--lang", "json"]);
            if needs_cold_junction(&json) {
                continue;
            }
            assert_eq!(json.status, 0, "{rel} {name}: {}", json.stderr);
            let doc: serde_json::Value = serde_json::from_str(&json.stdout).expect("JSON");
            let c = &doc["chains"][0];
            let (low, high) = (
                c["window"]["low"].as_i64().expect("low"),
                c["window"]["high"].as_i64().expect("high"),
            );
            let bound = c["conversion"]["max_error"].as_f64().expect("max_error");
            let codes = window_codes(low, high);
            let plan = lower(&chain).expect("the chain lowers");
            let want = exact_readings(&chain, &plan, &codes).expect("exact readings");

            let dir = scratch(&format!(
                "{}-{name}",
                spec.file_stem().unwrap().to_string_lossy()
            ));
            let out = dir.join(&name).to_string_lossy().to_string();
            let run = export(&["export", &rel, "--chain", &name, "--lang", "c", "-o", &out]);
            assert_eq!(run.status, 0, "{}", run.stderr);
            let c_program = compile_c(&dir, &name);
            let got = run_program(&c_program, &codes);
            assert_within(&format!("C {rel} {name}"), &got, &want, &codes, bound);

            let rs = dir.join("export.rs").to_string_lossy().to_string();
            let run = export(&[
                "export", &rel, "--chain", &name, "--lang", "rust", "-o", &rs,
            ]);
            assert_eq!(run.status, 0, "{}", run.stderr);
            let rust_program = compile_rust(&dir, &name);
            let got_rust = run_program(&rust_program, &codes);
            assert_within(
                &format!("Rust {rel} {name}"),
                &got_rust,
                &want,
                &codes,
                bound,
            );
            // One arithmetic, one result: the two languages agree to the bit.
            assert_eq!(got, got_rust, "{rel} {name}: C and Rust differ");

            // `catena eval`'s own readings, at the codes it gives.
            let points = eval_points(&rel, &chain);
            let (eval_codes, eval_readings): (Vec<f64>, Vec<f64>) = points.into_iter().unzip();
            let got = run_program(&c_program, &eval_codes);
            assert_within(
                &format!("eval {rel} {name}"),
                &got,
                &eval_readings,
                &eval_codes,
                bound,
            );
            let _ = std::fs::remove_dir_all(&dir);
            exported += 1;
        }
    }
    assert!(exported >= 10, "only {exported} demo chains exported");
}

#[test]
fn every_export_of_every_demo_spec() {
    for spec in demo_specs() {
        let rel = relative(&spec);
        let stem = spec.file_stem().unwrap().to_string_lossy().to_string();
        for lang in ["json", "rust"] {
            let run = export(&["export", &rel, "--lang", lang]);
            let again = export(&["export", &rel, "--lang", lang]);
            assert_eq!(
                run.stdout, again.stdout,
                "{rel} {lang}: the same bytes twice"
            );
            let text = if run.status == 0 {
                run.stdout
            } else {
                format!("exit {}\n{}", run.status, run.stderr)
            };
            insta::assert_snapshot!(format!("{stem}_{lang}"), text);
        }
        let dir = scratch(&format!("snap-{stem}"));
        let out = dir.join(&stem).to_string_lossy().to_string();
        let run = export(&["export", &rel, "--lang", "c", "-o", &out]);
        let text = if run.status == 0 {
            let h = std::fs::read_to_string(dir.join(format!("{stem}.h"))).expect("header");
            let c = std::fs::read_to_string(dir.join(format!("{stem}.c"))).expect("source");
            format!("==> {stem}.h <==\n{h}\n==> {stem}.c <==\n{c}")
        } else {
            format!("exit {}\n{}", run.status, run.stderr)
        };
        insta::assert_snapshot!(format!("{stem}_c"), text);
        let _ = std::fs::remove_dir_all(&dir);
    }
}

#[test]
fn alarms_carry_the_caution_and_other_chains_do_not() {
    let run = export(&["export", "specs/cold_store.catena", "--lang", "rust"]);
    assert!(run.stdout.contains("not a safety assessment"));
    let run = export(&["export", "specs/greenhouse_soil.catena", "--lang", "rust"]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(!run.stdout.contains("not a safety assessment"));
}

#[test]
fn a_spec_is_never_overwritten() {
    let dir = scratch("refuse");
    let spec = dir.join("a.catena");
    std::fs::copy(root().join("specs/weighing_hopper.catena"), &spec).expect("copy");
    std::fs::create_dir_all(dir.join("parts")).expect("parts");
    std::fs::copy(
        root().join("specs/parts/hopper.yaml"),
        dir.join("parts/hopper.yaml"),
    )
    .expect("copy parts");
    let before = std::fs::read(&spec).expect("spec");
    for (lang, out) in [
        ("json", "a.catena"),
        ("rust", "b.catena"),
        ("c", "a.catena"),
    ] {
        let run = catena(
            &dir,
            &["export", "a.catena", "--lang", lang, "-o", out],
            None,
        );
        assert_eq!(run.status, 2, "{lang} {out}: {}", run.stderr);
        assert!(run.stderr.contains("it is a spec"), "{}", run.stderr);
    }
    assert_eq!(std::fs::read(&spec).expect("spec"), before);
    assert!(!dir.join("b.catena").exists());
    // C needs somewhere to put its two files.
    let run = catena(&dir, &["export", "a.catena", "--lang", "c"], None);
    assert_eq!(run.status, 2);
    assert!(run.stderr.contains("-o PATH"), "{}", run.stderr);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_revision_is_named_in_a_repository() {
    let dir = scratch("revision");
    let git = |args: &[&str]| {
        let ok = Command::new("git")
            .args(args)
            .current_dir(&dir)
            .env("GIT_AUTHOR_NAME", "t")
            .env("GIT_AUTHOR_EMAIL", "t@example.invalid")
            .env("GIT_COMMITTER_NAME", "t")
            .env("GIT_COMMITTER_EMAIL", "t@example.invalid")
            .output()
            .expect("git runs");
        assert!(ok.status.success(), "git {args:?}");
        String::from_utf8_lossy(&ok.stdout).trim().to_string()
    };
    git(&["init", "-q"]);
    std::fs::copy(
        root().join("tests/fixtures/eval/ntc_divider.catena"),
        dir.join("s.catena"),
    )
    .expect("copy");
    git(&["add", "s.catena"]);
    git(&["commit", "-qm", "spec"]);
    let head = git(&["rev-parse", "--short=12", "HEAD"]);
    let run = catena(&dir, &["export", "s.catena", "--lang", "json"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(
        run.stdout.contains(&format!("\"revision\": \"{head}\"")),
        "{}",
        run.stdout
    );
    let mut text = std::fs::read_to_string(dir.join("s.catena")).expect("spec");
    text.push_str("\n# edited\n");
    std::fs::write(dir.join("s.catena"), text).expect("edit");
    let run = catena(&dir, &["export", "s.catena", "--lang", "rust"], None);
    assert!(
        run.stdout
            .contains(&format!("revision {head} (with uncommitted changes)")),
        "{}",
        run.stdout
    );
    let _ = std::fs::remove_dir_all(&dir);
}
