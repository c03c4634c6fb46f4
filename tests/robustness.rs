//! Hostile inputs and outputs: parts files that expand without bound,
//! paths that leave the repository, writes through symbolic links.

mod common;

use common::catena;

fn temp_dir(name: &str) -> common::TempDir {
    common::temp_dir("robust", name)
}

const SPEC_USING_PARTS: &str = "use \"parts.yaml\"\nchain a {\n    measurand temperature 0 degC .. 50 degC\n    sensor ic : probe { }\n    adc conv {\n        bits 12\n        input single\n        vref 2.5 V\n    }\n    convert reading { method exact }\n    ic -> conv -> reading\n}\n";

/// A YAML "billion laughs": nine levels of aliases, each nine times the
/// last. The parser's alias-expansion limit refuses it as a malformed
/// parts file, quickly and in bounded memory.
#[test]
fn alias_bombs_are_refused() {
    let dir = temp_dir("bomb");
    let mut yaml = String::from(
        "a: &a [\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\",\"lol\"]\n",
    );
    for (prev, next) in ["a", "b", "c", "d", "e", "f", "g", "h"]
        .iter()
        .zip(["b", "c", "d", "e", "f", "g", "h", "i"])
    {
        yaml.push_str(&format!("{next}: &{next} [*{prev},*{prev},*{prev},*{prev},*{prev},*{prev},*{prev},*{prev},*{prev}]\n"));
    }
    yaml.push_str("parts:\n  probe:\n    kind: sensor\n    ic_voltage:\n    slope: 10 mV/K\n    output: 0 V at 0 degC\n    bomb: *i\n");
    std::fs::write(dir.join("parts.yaml"), yaml).unwrap();
    std::fs::write(dir.join("a.catena"), SPEC_USING_PARTS).unwrap();
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    let start = std::time::Instant::now();
    let run = catena(&dir, &["check", "--format", "json", "a.catena"], None);
    assert_eq!(run.status, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("\"L402\""), "{}", run.stdout);
    // Not a timed test: a bound far above any normal run, to catch a hang.
    assert!(start.elapsed().as_secs() < 30);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Deeply nested YAML is refused by the parser's recursion limit.
#[test]
fn deep_yaml_is_refused() {
    let dir = temp_dir("deep");
    let yaml = format!("parts: {}1{}\n", "[".repeat(10_000), "]".repeat(10_000));
    std::fs::write(dir.join("parts.yaml"), yaml).unwrap();
    std::fs::write(dir.join("a.catena"), SPEC_USING_PARTS).unwrap();
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    let run = catena(&dir, &["check", "--format", "json", "a.catena"], None);
    assert_eq!(run.status, 1);
    assert!(run.stdout.contains("\"L402\""), "{}", run.stdout);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// `use` stays inside the spec's repository unless told otherwise.
#[test]
fn use_paths_are_confined() {
    let dir = temp_dir("confined");
    let repo = dir.join("repo");
    std::fs::create_dir_all(repo.join(".git")).unwrap();
    std::fs::write(dir.join("parts.yaml"), "parts:\n  probe:\n    kind: sensor\n    ic_voltage:\n    slope: 10 mV/K\n    output: 0.5 V at 0 degC\n").unwrap();
    std::fs::write(
        repo.join("a.catena"),
        SPEC_USING_PARTS.replace("\"parts.yaml\"", "\"../parts.yaml\""),
    )
    .unwrap();
    let run = catena(&repo, &["check", "--format", "json", "a.catena"], None);
    assert_eq!(run.status, 1);
    assert!(run.stdout.contains("\"L407\""), "{}", run.stdout);
    let run = catena(&repo, &["check", "--allow-outside-paths", "a.catena"], None);
    assert!(!run.stderr.contains("L407"), "{}", run.stderr);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// `fmt` never writes through a symbolic link, and leaves its target alone.
#[cfg(unix)]
#[test]
fn fmt_refuses_symbolic_links() {
    let dir = temp_dir("link");
    let target = dir.join("real.catena");
    let messy = "chain a {\nmeasurand temperature 0 degC .. 10 degC\n}\n";
    std::fs::write(&target, messy).unwrap();
    std::os::unix::fs::symlink(&target, dir.join("link.catena")).unwrap();
    let run = catena(&dir, &["fmt", "link.catena"], None);
    assert_eq!(run.status, 2, "{}", run.stderr);
    assert!(run.stderr.contains("symbolic link"), "{}", run.stderr);
    assert_eq!(std::fs::read_to_string(&target).unwrap(), messy);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A reader that goes away (`| head -c1`) ends the output quietly with
/// the status already earned, as Unix tools do: no panic, no exit 101.
/// The budget's JSON (about 270 KB) is far larger than a pipe's buffer,
/// so the write meets the closed pipe.
#[test]
fn a_closed_pipe_ends_the_output_quietly() {
    use std::io::Read;
    use std::process::{Command, Stdio};
    let mut child = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["budget", "--format", "json", "--trials", "0"])
        .arg(common::root().join("specs/cold_store.catena"))
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut first = [0u8; 1];
    child.stdout.take().unwrap().read_exact(&mut first).unwrap();
    let out = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{stderr}");
    assert!(stderr.is_empty(), "{stderr}");
}

/// Any other write failure (a full disk) is one clean error line and
/// exit 2, never a panic and never exit 0 with the output lost.
#[cfg(target_os = "linux")]
#[test]
fn a_full_disk_is_a_clean_error() {
    use std::process::{Command, Stdio};
    let spec = common::root().join("specs/cold_store.catena");
    let text = std::fs::read(&spec).unwrap();
    let runs: [(&[&str], Option<&[u8]>); 3] = [
        (&["fmt", "-"], Some(&text)),
        (&["check", "--format", "json", spec.to_str().unwrap()], None),
        (&["budget", "--trials", "0", spec.to_str().unwrap()], None),
    ];
    for (args, stdin) in runs {
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let mut child = Command::new(env!("CARGO_BIN_EXE_catena"))
            .args(args)
            .stdin(Stdio::piped())
            .stdout(full)
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        {
            use std::io::Write;
            let mut pipe = child.stdin.take().unwrap();
            pipe.write_all(stdin.unwrap_or_default()).unwrap();
        }
        let out = child.wait_with_output().unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(
            stderr.ends_with("catena: cannot write standard output: no space left on device\n"),
            "{args:?}: {stderr}"
        );
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
    }
}

/// Makes a named pipe (no writer ever opens it).
#[cfg(unix)]
fn mkfifo(path: &std::path::Path) {
    let status = std::process::Command::new("mkfifo")
        .arg(path)
        .status()
        .expect("mkfifo runs");
    assert!(status.success());
}

/// A FIFO given directly, found in a checked folder or named by `use`
/// used to block `check` forever; a device was read until memory ran out.
/// Each is refused with a coded finding, the rest is still checked.
#[cfg(target_os = "linux")]
#[test]
fn pipes_and_devices_are_refused() {
    let dir = temp_dir("fifo");
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    mkfifo(&dir.join("pipe.catena"));
    mkfifo(&dir.join("parts.yaml"));
    std::fs::write(dir.join("uses.catena"), SPEC_USING_PARTS).unwrap();
    let run = catena(&dir, &["check", "--format", "json", "pipe.catena"], None);
    assert_eq!(run.status, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("\"S012\""), "{}", run.stdout);
    let run = catena(&dir, &["check", "--format", "json", "."], None);
    assert_eq!(run.status, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("\"S012\""), "{}", run.stdout);
    assert!(run.stdout.contains("\"L408\""), "{}", run.stdout);
    let run = catena(&dir, &["check", "/dev/zero"], None);
    assert_eq!(run.status, 1, "{}", run.stderr);
    assert!(run.stderr.contains("S012"), "{}", run.stderr);
    for args in [
        &["budget", "pipe.catena"][..],
        &["eval", "pipe.catena", "--at", "1"],
    ] {
        let command = args[0];
        let run = catena(&dir, args, None);
        assert_eq!(run.status, 1, "{command}: {}", run.stderr);
        assert!(run.stderr.contains("S012"), "{command}: {}", run.stderr);
    }
    let run = catena(&dir, &["fmt", "pipe.catena"], None);
    assert_eq!(run.status, 1, "{}", run.stderr);
    assert!(run.stderr.contains("S012"), "{}", run.stderr);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// Standard input is read up to the size limit plus one byte: an endless
/// stream is refused as too large instead of filling memory.
#[test]
fn endless_standard_input_is_cut_at_the_limit() {
    use std::io::Write;
    use std::process::{Command, Stdio};
    let mut child = Command::new(env!("CARGO_BIN_EXE_catena"))
        .args(["fmt", "-"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    let feeder = std::thread::spawn(move || {
        let block = vec![b'#'; 65536];
        // Ends when catena stops reading and closes its end.
        while stdin.write_all(&block).is_ok() {}
    });
    let out = child.wait_with_output().unwrap();
    feeder.join().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{stderr}");
    assert!(stderr.contains("S004"), "{stderr}");
}

/// `fmt` replaces a file through a temporary and a rename, which used to
/// bypass the file's own mode, split its hard links and revert what
/// another program wrote meanwhile. Now it refuses a read-only file and a
/// hard-linked one, keeps the mode of the file it replaces, and a leftover
/// temporary from an earlier run (same process id, as in a container where
/// Catena is always PID 1) blocks nothing.
#[cfg(unix)]
#[test]
fn fmt_keeps_modes_links_and_leftovers() {
    use std::os::unix::fs::PermissionsExt;
    let dir = temp_dir("fmt-modes");
    let messy = "chain a {\n  measurand temperature 0 degC .. 50 degC\n}\n";
    let set_mode = |name: &str, mode: u32| {
        std::fs::set_permissions(dir.join(name), std::fs::Permissions::from_mode(mode)).unwrap()
    };
    std::fs::write(dir.join("ro.catena"), messy).unwrap();
    set_mode("ro.catena", 0o444);
    let run = catena(&dir, &["fmt", "ro.catena"], None);
    assert_eq!(run.status, 2, "{}", run.stderr);
    assert!(run.stderr.contains("not writable"), "{}", run.stderr);
    assert_eq!(
        std::fs::read_to_string(dir.join("ro.catena")).unwrap(),
        messy
    );

    std::fs::write(dir.join("linked.catena"), messy).unwrap();
    std::fs::hard_link(dir.join("linked.catena"), dir.join("other.name")).unwrap();
    let run = catena(&dir, &["fmt", "linked.catena"], None);
    assert_eq!(run.status, 2, "{}", run.stderr);
    assert!(run.stderr.contains("hard links"), "{}", run.stderr);

    std::fs::write(dir.join("mode.catena"), messy).unwrap();
    set_mode("mode.catena", 0o600);
    for pid in [1, 2, 100] {
        std::fs::write(dir.join(format!(".mode.catena.catena-tmp-{pid}")), "left").unwrap();
    }
    let run = catena(&dir, &["fmt", "mode.catena"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    let meta = std::fs::metadata(dir.join("mode.catena")).unwrap();
    assert_eq!(meta.permissions().mode() & 0o777, 0o600);
    assert_ne!(
        std::fs::read_to_string(dir.join("mode.catena")).unwrap(),
        messy
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// The cold store with one line changed.
fn cold_store_with(from: &str, to: &str) -> String {
    let text = std::fs::read_to_string(common::root().join("specs/cold_store.catena")).unwrap();
    assert!(text.contains(from), "{from}");
    text.replace(from, to)
}

/// Every number an output carries is finite: no `inf`, `NaN` or a JSON
/// `null` standing for one (the deliberate nulls — a limit without a
/// lower end, a bandwidth nothing bounds — are no numbers gone wrong).
fn assert_no_non_finite(text: &str) {
    for word in ["inf", "NaN"] {
        assert!(
            !text
                .split(|c: char| !c.is_alphanumeric())
                .any(|w| w == word),
            "`{word}` printed:\n{text}"
        );
    }
    for field in ["error", "achieved", "gum_expanded", "contribution", "sigma"] {
        assert!(
            !text.contains(&format!("\"{field}\": null")),
            "{field}: null in\n{text}"
        );
    }
}

/// An ADC noise of 1e160 uV used to print `accuracy ± inf K`, a gain error
/// of ± 1e150 % `"error": null` with exit 0. Each is now E505 naming the
/// parameter, and no budget is shown with a number that is not one.
#[test]
fn non_finite_numbers_are_findings_naming_the_parameter() {
    let dir = temp_dir("non-finite");
    let cases = [
        (
            "noise.catena",
            "noise 0.4 uV",
            "noise 1e160 uV",
            "conv.noise",
        ),
        (
            "gain.catena",
            "gain_error ± 0.01 %",
            "gain_error ± 1e150 %",
            "conv.gain_error",
        ),
    ];
    for (name, from, to, parameter) in cases {
        std::fs::write(dir.join(name), cold_store_with(from, to)).unwrap();
        for args in [
            &["check", name][..],
            &["check", "--format", "json", name],
            &["budget", "--trials", "500", name],
            &["budget", "--format", "json", "--trials", "500", name],
        ] {
            let run = catena(&dir, args, None);
            assert_eq!(run.status, 1, "{args:?}: {}", run.stderr);
            let all = format!("{}{}", run.stdout, run.stderr);
            // `check` of the gain case stops at R601 (the converter's input
            // leaves its range), before any budget is made.
            if args[0] == "budget" || name == "noise.catena" {
                assert!(all.contains("E505"), "{args:?}: {all}");
                assert!(all.contains(&format!("`{parameter}`")), "{args:?}: {all}");
            }
            assert!(all.len() < 20_000, "{args:?}: {all}");
            assert_no_non_finite(&all);
        }
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A point given on the command line is a number and a temperature above
/// absolute zero: `--at 1e400` used to print `inf degC`.
#[test]
fn eval_points_are_validated() {
    let spec = common::root().join("specs/cold_store.catena");
    let spec = spec.to_str().unwrap();
    for (args, says) in [
        (
            &["eval", spec, "--at", "1e400"][..],
            "beyond any finite value",
        ),
        (
            &["eval", spec, "--at", "0", "--ambient", "-300 degC"],
            "below absolute zero",
        ),
        (&["eval", spec, "--at", "-300 degC"], "below absolute zero"),
    ] {
        let run = catena(&common::root(), args, None);
        assert_eq!(run.status, 2, "{args:?}: {}", run.stderr);
        assert!(run.stderr.contains(says), "{args:?}: {}", run.stderr);
        assert_no_non_finite(&run.stderr);
    }
}

/// A chain that really clips: the cold store's amplifier with a CMRR of
/// 20 dB on its 1.4 V common mode and an output that swings only to
/// 1.2 V, so the common-mode error drives it into its rail at one limit.
/// The GUM sum used to see the clipped source's slope (zero) and pass at
/// ± 0.1 K while Monte Carlo reached 30 K. Now the evaluated limits
/// stand in, the points are flagged (`linear: false`, R616), the GUM
/// interval covers what Monte Carlo finds, and the spec's errors (R601)
/// make `budget` exit 1.
#[test]
fn gum_keeps_a_clipped_source() {
    let dir = temp_dir("clip");
    let spec = cold_store_with("cmrr 110 dB", "cmrr 20 dB")
        .replace("output 0.05 V .. 3.25 V", "output 0.05 V .. 1.2 V");
    std::fs::write(dir.join("clip.catena"), spec).unwrap();
    let run = catena(
        &dir,
        &[
            "budget",
            "--format",
            "json",
            "--trials",
            "4000",
            "clip.catena",
        ],
        None,
    );
    assert_eq!(run.status, 1, "{}", run.stderr);
    assert!(run.stderr.contains("R601"), "{}", run.stderr);
    assert!(run.stderr.contains("R616"), "{}", run.stderr);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    let points = doc["points"].as_array().unwrap();
    assert!(points.iter().any(|p| p["linear"] == false));
    for p in points {
        let gum = p["gum_expanded"].as_f64().unwrap();
        let mc = p["monte_carlo_95"].as_array().unwrap();
        let reach = mc
            .iter()
            .map(|x| x.as_f64().unwrap().abs())
            .fold(0.0, f64::max);
        assert!(gum >= reach, "GUM ± {gum} inside Monte Carlo's {mc:?}");
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A parts file whose value text differs from its value (a quoted value
/// with an escape) next to non-ASCII text used to crash the renderer
/// ("end byte index is not a char boundary"); a part named like a key
/// elsewhere got its finding on the wrong line. Positions now come from
/// the YAML parser and every span is snapped to character boundaries.
#[test]
fn parts_values_are_placed_by_position() {
    let dir = temp_dir("yaml-positions");
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    let yaml = "# gain ± 1 % µ\nparts:\n  gain:\n    kind: amplifier\n    gain: 4\n  probe:\n    kind: sensor\n    ic_voltage:\n    slope: \"±±1 %\\x21\"\n    output: 0 V at 0 degC\n";
    std::fs::write(dir.join("parts.yaml"), yaml).unwrap();
    std::fs::write(dir.join("a.catena"), SPEC_USING_PARTS).unwrap();
    for format in ["human", "json"] {
        let run = catena(&dir, &["check", "--format", format, "a.catena"], None);
        assert_eq!(run.status, 1, "{}{}", run.stdout, run.stderr);
        assert!(!run.stderr.contains("panicked"), "{}", run.stderr);
    }
    let run = catena(&dir, &["check", "--format", "json", "a.catena"], None);
    let findings: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    let slope = findings["findings"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["file"] == "parts.yaml")
        .expect("a finding in the parts file");
    assert_eq!(slope["line"], 9, "{slope}");
    std::fs::remove_dir_all(&dir).unwrap();
}

/// YAML forms a spec would not accept are findings, not silently read:
/// a tag, keys that are not words, a hex integer; and a tolerance of
/// negative size.
#[test]
fn yaml_oddities_and_negative_tolerances_are_findings() {
    let dir = temp_dir("yaml-odd");
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    std::fs::write(dir.join("a.catena"), SPEC_USING_PARTS).unwrap();
    let probe =
        "    kind: sensor\n    ic_voltage:\n    slope: 10 mV/K\n    output: 0 V at 0 degC\n";
    let cases = [
        (format!("parts:\n  probe: !custom\n{probe}"), "L410"),
        (format!("parts:\n  probe:\n{probe}    1: 4\n"), "L409"),
        (format!("parts:\n  probe:\n{probe}    [a, b]: 4\n"), "L409"),
        (format!("parts:\n  probe:\n{probe}    null: 4\n"), "L409"),
        (
            format!("parts:\n  probe:\n{probe}  7:\n    kind: sensor\n"),
            "L409",
        ),
        (
            format!("parts:\n  probe:\n{probe}    noise: 0x80\n"),
            "L411",
        ),
        (
            format!("parts:\n  probe:\n{probe}    noise: !!str 4\n"),
            "L410",
        ),
    ];
    for (yaml, code) in cases {
        std::fs::write(dir.join("parts.yaml"), &yaml).unwrap();
        let run = catena(&dir, &["check", "--format", "json", "a.catena"], None);
        assert_eq!(run.status, 1, "{yaml}: {}{}", run.stdout, run.stderr);
        assert!(
            run.stdout.contains(&format!("\"{code}\"")),
            "{yaml}: {}",
            run.stdout
        );
    }
    let spec = "chain a {\n    measurand temperature 0 degC .. 50 degC\n    amplifier front { gain 4 ± -0.05 % }\n}\n";
    std::fs::write(dir.join("neg.catena"), spec).unwrap();
    let run = catena(&dir, &["check", "--format", "json", "neg.catena"], None);
    assert!(run.stdout.contains("\"S013\""), "{}", run.stdout);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// An empty file, or one with only comments, used to pass with no
/// finding; it declares no chain and is now S014.
#[test]
fn a_spec_without_a_chain_is_a_finding() {
    let dir = temp_dir("empty");
    for (name, text) in [
        ("empty.catena", ""),
        ("comments.catena", "# to do\n\n# later\n"),
    ] {
        std::fs::write(dir.join(name), text).unwrap();
        let run = catena(&dir, &["check", "--format", "json", name], None);
        assert_eq!(run.status, 1, "{name}: {}", run.stdout);
        assert!(run.stdout.contains("\"S014\""), "{name}: {}", run.stdout);
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A folder link inside a checked folder used to be skipped ("checked 0
/// files"), so a broken spec behind it passed; a link loop stopped the
/// whole run. Links are now followed, and a loop is reported (S015) and
/// skipped while the rest is checked.
#[cfg(unix)]
#[test]
fn folder_links_are_followed_and_loops_skipped() {
    let dir = temp_dir("links");
    let real = dir.join("elsewhere");
    std::fs::create_dir_all(&real).unwrap();
    std::fs::write(real.join("broken.catena"), "chain a {\n    bogus line\n}\n").unwrap();
    let tree = dir.join("tree");
    std::fs::create_dir_all(&tree).unwrap();
    std::os::unix::fs::symlink(&real, tree.join("linked")).unwrap();
    std::os::unix::fs::symlink("..", tree.join("up")).unwrap();
    std::os::unix::fs::symlink("self", tree.join("self")).unwrap();
    let run = catena(&dir, &["check", "--format", "json", "tree"], None);
    assert_eq!(run.status, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("broken.catena"), "{}", run.stdout);
    assert_eq!(run.stdout.matches("\"S015\"").count(), 2, "{}", run.stdout);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A bidirectional control in a comment or a string (the "trojan
/// source" pattern) used to pass silently; each is S016 at its place.
#[test]
fn bidirectional_controls_are_findings() {
    let dir = temp_dir("bidi");
    for (i, c) in ['\u{202E}', '\u{2066}', '\u{200F}', '\u{061C}']
        .iter()
        .enumerate()
    {
        let name = format!("b{i}.catena");
        let text = format!(
            "chain a \"title {c}x\" {{\n    measurand temperature 0 degC .. 50 degC # {c}\n}}\n"
        );
        std::fs::write(dir.join(&name), &text).unwrap();
        let run = catena(&dir, &["check", "--format", "json", &name], None);
        assert_eq!(run.status, 1, "{}", run.stdout);
        let doc: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
        let lines: Vec<i64> = doc["findings"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|f| f["code"] == "S016")
            .map(|f| f["line"].as_i64().unwrap())
            .collect();
        assert_eq!(lines, [1, 2], "{}", run.stdout);
    }
    std::fs::remove_dir_all(&dir).unwrap();
}
