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

fn scratch(name: &str) -> common::TempDir {
    common::temp_dir("export", name)
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

/// What a chain's test program computes.
#[derive(Clone, Copy, PartialEq)]
enum Kind {
    /// reading(code).
    CodeAlone,
    /// reading(code, cold_junction), and cold_junction(code) when the
    /// chain has its own junction conversion.
    Junction { conversion: bool },
}

/// One line of input: a code, the cold junction (reading unit) and the
/// junction converter's code (the last two unused by a code-alone chain).
type Line = (f64, f64, f64);

/// Runs a program on the lines; per line, the reading and the junction's
/// reading (0 without one).
fn run_program(program: &Path, lines: &[Line]) -> Vec<(f64, f64)> {
    let mut child = Command::new(program)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("the program runs");
    let input: String = lines
        .iter()
        .map(|(c, t, k)| format!("{c:?} {t:?} {k:?}\n"))
        .collect();
    std::io::Write::write_all(&mut child.stdin.take().expect("stdin"), input.as_bytes())
        .expect("stdin takes the codes");
    let out = child.wait_with_output().expect("the program ends");
    assert!(out.status.success());
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|l| {
            let v: Vec<f64> = l
                .split_whitespace()
                .map(|x| x.parse().expect("a number"))
                .collect();
            (v[0], v[1])
        })
        .collect()
}

fn compile_c(dir: &Path, chain: &str, kind: Kind) -> PathBuf {
    let print = match kind {
        Kind::CodeAlone => format!("printf(\"%.17g 0\\n\", {chain}_reading(code));"),
        Kind::Junction { conversion: false } => {
            format!("printf(\"%.17g 0\\n\", {chain}_reading(code, cj));")
        }
        Kind::Junction { conversion: true } => format!(
            "printf(\"%.17g %.17g\\n\", {chain}_reading(code, cj), {chain}_cold_junction(cj_code));"
        ),
    };
    let main = format!(
        "#include <stdio.h>\n#include \"{chain}.h\"\nint main(void)\n{{\n    double code, cj, cj_code;\n    while (scanf(\"%lf %lf %lf\", &code, &cj, &cj_code) == 3) {{\n        (void)cj;\n        (void)cj_code;\n        {print}\n    }}\n    return 0;\n}}\n"
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

fn compile_rust(dir: &Path, chain: &str, kind: Kind) -> PathBuf {
    let m = format!("export::{chain}");
    let (whole, mean, junction) = match kind {
        Kind::CodeAlone => (
            format!("{m}::reading(code as i64)"),
            format!("{m}::reading_mean(code)"),
            "0.0".to_string(),
        ),
        Kind::Junction { conversion } => (
            format!("{m}::reading(code as i64, cj)"),
            format!("{m}::reading_mean(code, cj)"),
            if conversion {
                format!("{m}::cold_junction(cj_code)")
            } else {
                "0.0".to_string()
            },
        ),
    };
    let main = format!(
        "#[path = \"export.rs\"]\nmod export;\nuse std::io::BufRead;\nfn main() {{\n    for line in std::io::stdin().lock().lines() {{\n        let line = line.unwrap();\n        let v: Vec<f64> = line.split_whitespace().map(|x| x.parse().unwrap()).collect();\n        let (code, cj, cj_code) = (v[0], v[1], v[2]);\n        let _ = (cj, cj_code);\n        let reading = if code.fract() == 0.0 {{ {whole} }} else {{ {mean} }};\n        println!(\"{{reading:?}} {{:?}}\", {junction});\n    }}\n}}\n"
    );
    std::fs::write(dir.join("main.rs"), main).expect("main.rs");
    let program = dir.join("reading_rust");
    // Every warning denied but unused items (the program uses a few).
    let status = Command::new("rustc")
        .args(["--edition", "2021", "-D", "warnings", "-A", "dead_code"])
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
/// ambient: the program's input line (code, the junction's reading in the
/// reading unit, the junction converter's code) and eval's reading.
fn eval_points(spec: &str, chain: &Chain, junction: Option<(&str, &str)>) -> Vec<(Line, f64)> {
    let m = chain.measurand.as_ref().expect("a measurand");
    let show = |x: f64| catena::units::format::from_si(x, &m.unit);
    (0..=5)
        .map(|k| {
            let at = show(m.low) + (show(m.high) - show(m.low)) * f64::from(k) / 5.0;
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
            let (cj, cj_code) = match junction {
                Some((stage, converter)) => (
                    show(
                        v["nodes"][stage]["value"]
                            .as_f64()
                            .expect("the junction's reading"),
                    ),
                    v["nodes"][converter]["value"].as_f64().unwrap_or(0.0),
                ),
                None => (0.0, 0.0),
            };
            (
                (v["code"].as_f64().expect("a code"), cj, cj_code),
                v["reading"]["value"].as_f64().expect("a reading"),
            )
        })
        .collect()
}

/// A chain's (stage, converter) of its junction conversion, from the
/// export's JSON.
fn junction_stages(c: &serde_json::Value) -> Option<(String, String)> {
    let cj = &c["junction"]["cold_junction"];
    Some((
        cj["stage"].as_str()?.to_string(),
        cj["converter"].as_str()?.to_string(),
    ))
}

/// The program's readings against the expected, within `bound`.
fn check_lines(what: &str, program: &Path, lines: &[Line], want: &[f64], bound: f64) -> Vec<f64> {
    let got: Vec<f64> = run_program(program, lines).iter().map(|r| r.0).collect();
    let codes: Vec<f64> = lines.iter().map(|l| l.0).collect();
    assert_within(what, &got, want, &codes, bound);
    got
}

#[test]
fn exports_compile_and_reproduce_catena_readings() {
    let (mut exported, mut total) = (0, 0);
    for spec in demo_specs() {
        let rel = relative(&spec);
        for chain in chains(&spec) {
            total += 1;
            let name = chain.name.clone();
            let json = export(&["export", &rel, "--chain", &name, "--lang", "json"]);
            assert_eq!(json.status, 0, "{rel} {name}: {}", json.stderr);
            let doc: serde_json::Value = serde_json::from_str(&json.stdout).expect("JSON");
            let c = &doc["chains"][0];
            let (low, high) = (
                c["window"]["low"].as_i64().expect("low"),
                c["window"]["high"].as_i64().expect("high"),
            );
            let bound = c["conversion"]["max_error"].as_f64().expect("max_error");
            let stages = junction_stages(c);
            let kind = match c.get("junction") {
                Some(_) => Kind::Junction {
                    conversion: stages.is_some(),
                },
                None => Kind::CodeAlone,
            };
            // Codes across the window; with a junction, at its range's ends
            // and middle.
            let junctions: Vec<Option<f64>> = match kind {
                Kind::CodeAlone => vec![None],
                Kind::Junction { .. } => {
                    let r = &c["junction"]["range"];
                    let (a, b) = (r[0].as_f64().unwrap(), r[1].as_f64().unwrap());
                    vec![Some(a), Some((a + b) / 2.0), Some(b)]
                }
            };
            let plan = lower(&chain).expect("the chain lowers");
            let mut lines = Vec::new();
            let mut want = Vec::new();
            for cj in junctions {
                let codes = window_codes(low, high);
                want.extend(exact_readings(&chain, &plan, &codes, cj).expect("exact readings"));
                lines.extend(codes.iter().map(|&code| (code, cj.unwrap_or(0.0), 0.0)));
            }

            let dir = scratch(&format!(
                "{}-{name}",
                spec.file_stem().unwrap().to_string_lossy()
            ));
            let out = dir.join(&name).to_string_lossy().to_string();
            let run = export(&["export", &rel, "--chain", &name, "--lang", "c", "-o", &out]);
            assert_eq!(run.status, 0, "{}", run.stderr);
            let c_program = compile_c(&dir, &name, kind);
            let got = check_lines(&format!("C {rel} {name}"), &c_program, &lines, &want, bound);

            let rs = dir.join("export.rs").to_string_lossy().to_string();
            let run = export(&[
                "export", &rel, "--chain", &name, "--lang", "rust", "-o", &rs,
            ]);
            assert_eq!(run.status, 0, "{}", run.stderr);
            let rust_program = compile_rust(&dir, &name, kind);
            let got_rust = check_lines(
                &format!("Rust {rel} {name}"),
                &rust_program,
                &lines,
                &want,
                bound,
            );
            // One arithmetic, one result: the two languages agree to the bit.
            assert_eq!(got, got_rust, "{rel} {name}: C and Rust differ");

            // `catena eval`'s own readings, at the codes (and junction
            // readings) it gives.
            let stage_names = stages.as_ref().map(|(s, a)| (s.as_str(), a.as_str()));
            let (eval_lines, eval_readings): (Vec<Line>, Vec<f64>) =
                eval_points(&rel, &chain, stage_names).into_iter().unzip();
            check_lines(
                &format!("eval {rel} {name}"),
                &c_program,
                &eval_lines,
                &eval_readings,
                bound,
            );
            // The junction's own conversion against eval's junction reading.
            if let Some(cj) = c["junction"]["cold_junction"].as_object() {
                let cj_bound = cj["max_error"].as_f64().expect("its max_error");
                let got: Vec<f64> = run_program(&c_program, &eval_lines)
                    .iter()
                    .map(|r| r.1)
                    .collect();
                let want: Vec<f64> = eval_lines.iter().map(|l| l.1).collect();
                let codes: Vec<f64> = eval_lines.iter().map(|l| l.2).collect();
                assert_within(
                    &format!("junction {rel} {name}"),
                    &got,
                    &want,
                    &codes,
                    cj_bound,
                );
            }
            let _ = std::fs::remove_dir_all(&dir);
            exported += 1;
        }
    }
    assert_eq!(exported, total, "every demo chain exports");
    assert!(total >= 13, "only {total} demo chains");
}

/// The exported fault thresholds and alarm trip codes are the fault
/// analysis's own: the same as `catena checklist` lists, each detectable
/// fault's threshold strictly between the valid window and the fault's
/// codes, and a constant for each in the C and Rust exports.
#[test]
fn fault_thresholds_and_trip_codes_are_the_checklists() {
    for spec in demo_specs() {
        let rel = relative(&spec);
        let json = export(&["export", &rel, "--lang", "json"]);
        assert_eq!(json.status, 0, "{rel}: {}", json.stderr);
        let doc: serde_json::Value = serde_json::from_str(&json.stdout).expect("JSON");
        let list = export(&["checklist", &rel, "--format", "json"]);
        assert_eq!(list.status, 0, "{rel}: {}", list.stderr);
        let list: serde_json::Value = serde_json::from_str(&list.stdout).expect("JSON");
        let rust = export(&["export", &rel, "--lang", "rust"]).stdout;
        for (c, l) in doc["chains"]
            .as_array()
            .unwrap()
            .iter()
            .zip(list["chains"].as_array().unwrap())
        {
            let (low, high) = (
                c["window"]["low"].as_i64().unwrap(),
                c["window"]["high"].as_i64().unwrap(),
            );
            let exported = c["faults"].as_array().unwrap();
            let listed = l["faults"].as_array().unwrap();
            assert_eq!(exported.len(), listed.len(), "{rel}");
            for (f, r) in exported.iter().zip(listed) {
                let what = format!("{rel} {} {}", f["stage"], f["fault"]);
                assert_eq!(
                    (&f["stage"], &f["fault"]),
                    (&r["stage"], &r["fault"]),
                    "{what}"
                );
                assert_eq!(f["verdict"], r["verdict"], "{what}");
                assert_eq!(f["codes"], r["codes"], "{what}");
                assert_eq!(f["channel"], r["channel"], "{what}");
                // A fault one summed channel's own code shows is judged
                // against that channel's own window.
                let channel = f["channel"].as_str();
                let (low, high, code) = match channel {
                    Some(ch) => {
                        let w = c["window"]["channels"]
                            .as_array()
                            .unwrap()
                            .iter()
                            .find(|w| w["channel"] == ch)
                            .unwrap_or_else(|| panic!("{what}: no window for {ch}"));
                        (
                            w["low"].as_i64().unwrap(),
                            w["high"].as_i64().unwrap(),
                            format!("{ch} code"),
                        )
                    }
                    None => (low, high, "code".to_string()),
                };
                let threshold = match (f["below"].as_i64(), f["above"].as_i64()) {
                    (Some(n), None) => {
                        assert!(f["codes"][1].as_i64().unwrap() < n && n < low, "{what}");
                        Some(format!("{code} < {n}"))
                    }
                    (None, Some(n)) => {
                        assert!(high < n && n < f["codes"][0].as_i64().unwrap(), "{what}");
                        Some(format!("{code} > {n}"))
                    }
                    // A fault that leaves the code at either end.
                    (Some(a), Some(b)) => {
                        assert!(a < low && high < b, "{what}");
                        Some(format!("{code} < {a} or {code} > {b}"))
                    }
                    _ => None,
                };
                assert_eq!(threshold.as_deref(), r["threshold"].as_str(), "{what}");
                if let Some(names) = f["constant"].as_str() {
                    for name in names.split(", ") {
                        let n = if name.ends_with("_BELOW") {
                            f["below"].as_i64()
                        } else {
                            f["above"].as_i64()
                        }
                        .unwrap();
                        assert!(
                            rust.contains(&format!("pub const {name}: i64 = {n};")),
                            "{what}"
                        );
                    }
                }
            }
            let alarms = c["alarms"].as_array().unwrap();
            let listed = l["alarms"].as_array().unwrap();
            assert_eq!(alarms.len(), listed.len(), "{rel}");
            for (a, r) in alarms.iter().zip(listed) {
                assert_eq!(a["trip_code"], r["trip_code"], "{rel}");
                assert_eq!(a["masked_by"], r["masked_by"], "{rel}");
            }
        }
    }
}

/// The C export's fault thresholds compile, and a program linked with it
/// finds each outside the valid window (`code_valid` false).
#[test]
fn the_c_fault_thresholds_lie_outside_the_window() {
    let dir = scratch("faults-cold-store");
    let out = dir.join("cold_store").to_string_lossy().to_string();
    let run = export(&[
        "export",
        "specs/cold_store.catena",
        "--lang",
        "c",
        "-o",
        &out,
    ]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let header = std::fs::read_to_string(dir.join("cold_store.h")).expect("header");
    let names: Vec<&str> = header
        .lines()
        .filter_map(|l| l.strip_prefix("#define COLD_STORE_FAULT_"))
        .filter_map(|l| l.split_whitespace().next())
        .collect();
    assert!(names.len() >= 5, "{header}");
    let checks: String = names
        .iter()
        .map(|n| format!("    if (cold_store_code_valid(COLD_STORE_FAULT_{n})) {{\n        return 1;\n    }}\n"))
        .collect();
    let main =
        format!("#include \"cold_store.h\"\nint main(void)\n{{\n{checks}    return 0;\n}}\n");
    std::fs::write(dir.join("main.c"), main).expect("main.c");
    let program = dir.join("faults_c");
    let status = Command::new("cc")
        .args(["-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic"])
        .arg(dir.join("main.c"))
        .arg(dir.join("cold_store.c"))
        .arg("-o")
        .arg(&program)
        .status()
        .expect("a C compiler (cc) runs");
    assert!(status.success(), "the C export's thresholds compile");
    let status = Command::new(&program).status().expect("the program runs");
    assert!(status.success(), "a threshold lies inside the valid window");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Every code constant of a C export survives its type: a ratio of two
/// channels' codes, scaled, runs past 32 bits (a shorted reference
/// resistor's threshold in the bath is 4.2e11), and a cast to `int32_t`
/// would wrap it.
#[test]
fn the_c_code_type_holds_every_code() {
    let dir = scratch("ratio-bath-types");
    let out = dir.join("bath").to_string_lossy().to_string();
    let spec = "tests/fixtures/channels/ratio_bath.catena";
    let run = export(&["export", spec, "--lang", "c", "-o", &out]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let header = std::fs::read_to_string(dir.join("bath.h")).expect("header");
    let codes: Vec<(&str, &str)> = header
        .lines()
        .filter_map(|l| l.strip_prefix("#define "))
        .filter_map(|l| l.split_once(" ((int"))
        .filter_map(|(name, rest)| Some((name, rest.split_once(")")?.1.trim_end_matches(')'))))
        .collect();
    assert!(
        codes
            .iter()
            .any(|(_, v)| v.parse::<i64>().is_ok_and(|v| i32::try_from(v).is_err())),
        "the bath has a code past 32 bits: {codes:?}"
    );
    let prints: String = codes
        .iter()
        .map(|(n, _)| format!("    printf(\"%lld\\n\", (long long){n});\n"))
        .collect();
    let main = format!(
        "#include <stdio.h>\n#include \"bath.h\"\nint main(void)\n{{\n{prints}    return 0;\n}}\n"
    );
    std::fs::write(dir.join("main.c"), main).expect("main.c");
    let program = dir.join("types_c");
    let status = Command::new("cc")
        .args(["-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic"])
        .arg(dir.join("main.c"))
        .arg(dir.join("bath.c"))
        .arg("-o")
        .arg(&program)
        .status()
        .expect("a C compiler (cc) runs");
    assert!(status.success(), "the C export compiles");
    let printed = Command::new(&program).output().expect("the program runs");
    let printed = String::from_utf8_lossy(&printed.stdout);
    let written: Vec<&str> = codes.iter().map(|(_, v)| *v).collect();
    assert_eq!(printed.lines().collect::<Vec<_>>(), written);
    let _ = std::fs::remove_dir_all(&dir);
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
    // A header and its source are written together or not at all.
    std::fs::write(dir.join("fw.c"), "/* kept */\n").expect("source");
    let mut mode = std::fs::metadata(dir.join("fw.c"))
        .expect("meta")
        .permissions();
    mode.set_readonly(true);
    std::fs::set_permissions(dir.join("fw.c"), mode).expect("read-only");
    let run = catena(
        &dir,
        &["export", "a.catena", "--lang", "c", "-o", "fw"],
        None,
    );
    assert_eq!(run.status, 2, "{}", run.stderr);
    assert!(!dir.join("fw.h").exists(), "no header without its source");
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

/// `-o DIR/` creates the folder and names the files after the spec, as
/// `catena report` and `catena checklist` do; a file in a missing folder
/// is refused, naming the folder, and nothing is written.
#[test]
fn a_new_folder_is_made_on_request_and_a_missing_one_refused() {
    let dir = scratch("folders");
    let new = dir.join("fw/");
    let run = export(&[
        "export",
        "specs/cold_store.catena",
        "--lang",
        "c",
        "-o",
        &new.to_string_lossy(),
    ]);
    assert_eq!(run.status, 0, "{}", run.stderr);
    for name in ["cold_store.h", "cold_store.c"] {
        assert!(
            new.join(name).is_file(),
            "{name} written into the new folder"
        );
    }
    let missing = dir.join("nowhere/out.rs");
    for command in [
        vec!["export", "specs/cold_store.catena", "--lang", "rust", "-o"],
        vec!["checklist", "specs/cold_store.catena", "-o"],
        vec!["report", "specs/cold_store.catena", "-o"],
    ] {
        let mut args = command.clone();
        let path = missing.to_string_lossy();
        args.push(&path);
        let run = export(&args);
        assert_eq!(run.status, 2, "{command:?}: {}", run.stderr);
        assert!(
            run.stderr.contains("the folder") && run.stderr.contains("does not exist"),
            "{command:?}: {}",
            run.stderr
        );
        assert!(!dir.join("nowhere").exists(), "{command:?} made the folder");
    }
}

/// A spec with errors gets its findings, a closing line saying that no
/// constants were written and why, status 1, and no file.
#[test]
fn a_spec_with_errors_writes_nothing_and_says_so() {
    let dir = scratch("errors");
    let out = dir.join("fw.h");
    let out_arg = out.to_string_lossy().into_owned();
    let run = export(&[
        "export",
        "tests/fixtures/invalid/R601-over-gained-amplifier.catena",
        "--lang",
        "c",
        "-o",
        &out_arg,
    ]);
    assert_eq!(run.status, 1, "{}", run.stderr);
    assert!(run.stderr.contains("R601"), "{}", run.stderr);
    let last = run.stderr.trim_end().lines().last().unwrap_or_default();
    assert!(
        last.starts_with("catena: no constants written:") && last.contains("1 error (above)"),
        "{last}"
    );
    assert!(!out.exists() && !dir.join("fw.c").exists());
}
