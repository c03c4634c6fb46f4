//! Generated worst cases inside the input limits (4 MiB a spec, 1 MiB a
//! parts file): each runs to completion with output proportional to its
//! input and a peak memory far under 300 MB, measured as sizes (bytes
//! written, the children's peak resident set), never as time. The wall
//! times of the release build are recorded in DEVELOPERS.md; to write the
//! cases out for measuring, set `CATENA_WORST_CASES=folder`.

mod common;

use std::path::Path;

use common::catena;
use common::worst::{braces, deep_yaml, long_name, many_chains, many_parts, many_stages};

const USES_PARTS: &str = "use \"parts.yaml\"\nchain a {\n    measurand temperature 0 degC .. 50 degC\n    amplifier front : p0 { }\n}\n";

/// Peak resident set of the children so far, bytes (Linux reports KiB).
#[cfg(target_os = "linux")]
fn children_peak_bytes() -> u64 {
    // SAFETY: getrusage writes one plain struct we own.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    unsafe { libc::getrusage(libc::RUSAGE_CHILDREN, &mut usage) };
    usage.ru_maxrss as u64 * 1024
}

/// Every case at the size the limits allow, checked in both formats.
#[test]
fn worst_cases_stay_linear_in_size() {
    let dir = std::env::var_os("CATENA_WORST_CASES")
        .map(std::path::PathBuf::from)
        .unwrap_or_else(|| {
            std::env::temp_dir().join(format!("catena-worst-{}", std::process::id()))
        });
    std::fs::create_dir_all(dir.join(".git")).unwrap();
    let cases: Vec<(&str, String, Option<String>)> = vec![
        ("stages.catena", many_stages(20_000), None),
        ("chains.catena", many_chains(10_000), None),
        ("braces.catena", braces(200_000), None),
        ("long_name.catena", long_name(2 * 1024 * 1024), None),
        (
            "deep_yaml.catena",
            USES_PARTS.to_string(),
            Some(deep_yaml(100_000)),
        ),
        (
            "many_parts.catena",
            USES_PARTS.to_string(),
            Some(many_parts(21_000)),
        ),
    ];
    for (name, spec, parts) in &cases {
        assert!(spec.len() <= 4 << 20, "{name} is inside the spec limit");
        let case = dir.join(name.trim_end_matches(".catena"));
        std::fs::create_dir_all(&case).unwrap();
        std::fs::write(case.join(name), spec).unwrap();
        if let Some(parts) = parts {
            assert!(
                parts.len() <= 1 << 20,
                "{name}'s parts file is inside its limit"
            );
            std::fs::write(case.join("parts.yaml"), parts).unwrap();
        }
        if std::env::var_os("CATENA_WORST_CASES").is_some() {
            continue;
        }
        let input = spec.len() + parts.as_ref().map_or(0, String::len);
        for format in ["human", "json"] {
            let run = catena(&case, &["check", "--format", format, name], None);
            assert!(run.status == 0 || run.status == 1, "{name}: {}", run.stderr);
            let written = run.stdout.len() + run.stderr.len();
            // Findings are capped per file; what is written stays a small
            // multiple of what was read.
            assert!(
                written <= 64 * input + 100_000,
                "{name} {format}: {written} bytes from {input}"
            );
        }
        check_bytes_limits(&case);
    }
    #[cfg(target_os = "linux")]
    assert!(
        children_peak_bytes() < 300_000_000,
        "peak memory {} bytes",
        children_peak_bytes()
    );
    if std::env::var_os("CATENA_WORST_CASES").is_none() {
        std::fs::remove_dir_all(&dir).unwrap();
    }
}

fn check_bytes_limits(case: &Path) {
    // Nothing the run writes is left behind beside the inputs.
    let left: Vec<_> = std::fs::read_dir(case)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains("catena-tmp"))
        .collect();
    assert!(left.is_empty());
}
