//! No function in `src/` runs over `MAX_BODY_LINES` lines: a long
//! function is split into named steps. The sources are rustfmt'd, so a
//! function's closing brace stands alone at the indentation of its `fn`
//! line; the body is what lies between the line that opens it and that
//! brace (a multi-line signature does not count).

use std::fs;
use std::path::{Path, PathBuf};

const MAX_BODY_LINES: usize = 80;

/// Functions allowed to be longer, with the reason: data tables only
/// (a list of rows reads best as one list). Each entry is
/// (path under `src/`, function name). None is needed today.
const ALLOWED: &[(&str, &str)] = &[];

/// A function found longer than allowed.
#[derive(Debug, PartialEq)]
struct Long {
    name: String,
    line: usize,
    body: usize,
}

/// The name of the function a line declares, if it does (`pub(crate)
/// const fn name<..>(` and the like).
fn declared_fn(line: &str) -> Option<&str> {
    let mut words = line.split_whitespace();
    let mut word = words.next()?;
    while word != "fn" {
        let qualifier = word.starts_with("pub")
            || matches!(word, "const" | "async" | "unsafe" | "extern" | "\"C\"");
        if !qualifier {
            return None;
        }
        word = words.next()?;
    }
    let rest = words.next()?;
    let end = rest
        .find(|c: char| !(c.is_alphanumeric() || c == '_'))
        .unwrap_or(rest.len());
    (end > 0).then(|| &rest[..end])
}

fn indentation(line: &str) -> &str {
    &line[..line.len() - line.trim_start().len()]
}

/// Every function of `source` whose body is over `max` lines.
fn long_functions(source: &str, max: usize) -> Vec<Long> {
    let lines: Vec<&str> = source.lines().collect();
    let mut out = Vec::new();
    for (i, line) in lines.iter().enumerate() {
        let Some(name) = declared_fn(line) else {
            continue;
        };
        // The signature ends at the line that opens the body, or at a `;`
        // (a trait's declaration without one).
        let Some(open) = (i..lines.len()).find(|&k| {
            let l = lines[k].trim_end();
            l.ends_with('{') || l.ends_with(';') || l.ends_with('}')
        }) else {
            continue;
        };
        if !lines[open].trim_end().ends_with('{') {
            continue;
        }
        let closing = format!("{}}}", indentation(line));
        let Some(close) = (open + 1..lines.len()).find(|&k| lines[k].trim_end() == closing) else {
            continue;
        };
        let body = close - open - 1;
        if body > max {
            out.push(Long {
                name: name.to_string(),
                line: i + 1,
                body,
            });
        }
    }
    out
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let mut entries: Vec<_> = fs::read_dir(dir)
        .expect("src/ is readable")
        .map(|e| e.expect("a directory entry").path())
        .collect();
    entries.sort();
    for path in entries {
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn no_function_in_src_is_over_the_limit() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    assert!(
        files.len() > 50,
        "found only {} files under src/",
        files.len()
    );
    let mut over = Vec::new();
    for path in files {
        let relative = path
            .strip_prefix(&src)
            .unwrap()
            .to_string_lossy()
            .replace('\\', "/");
        let source = fs::read_to_string(&path).expect("a source file is UTF-8");
        for long in long_functions(&source, MAX_BODY_LINES) {
            if !ALLOWED.contains(&(relative.as_str(), long.name.as_str())) {
                over.push(format!(
                    "src/{relative}:{} `{}` has a body of {} lines",
                    long.line, long.name, long.body
                ));
            }
        }
    }
    assert!(
        over.is_empty(),
        "functions over {MAX_BODY_LINES} lines (split them into named steps):\n{}",
        over.join("\n")
    );
}

#[test]
fn the_scanner_measures_bodies() {
    let body = |n: usize| "        x += 1;\n".repeat(n);
    let source = format!(
        "impl A {{\n    pub(crate) fn short(x: u8) -> u8 {{\n{}    }}\n\n    \
         fn long<T>(\n        x: T,\n    ) {{\n{}    }}\n}}\n\
         trait B {{\n    fn declared(&self);\n}}\n",
        body(3),
        body(5),
    );
    assert_eq!(
        long_functions(&source, 4),
        vec![Long {
            name: "long".to_string(),
            line: 8,
            body: 5,
        }]
    );
    assert_eq!(long_functions(&source, 5), vec![]);
    assert_eq!(declared_fn("    pub const fn f() {}"), Some("f"));
    assert_eq!(declared_fn("    let fn_name = 1;"), None);
    assert_eq!(declared_fn("// fn in a comment"), None);
}
