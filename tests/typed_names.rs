//! Kinds and parameters cross the layers as types, never as catch-alls or
//! name strings: a match over node kinds, stage models or stage kinds
//! names every kind (so a new kind makes the compiler list the site), and
//! a parameter's name is written in the schema alone.

mod common;

use std::fs;
use std::path::{Path, PathBuf};

/// The enums whose variants are the kinds: a match that names one of
/// them in its arms must name them all.
const KIND_ENUMS: &[&str] = &["Node", "StageModel", "StageKind"];

/// Matches whose wildcard is over something else than the kind, as
/// (file, the function's signature line, why).
const CATCH_ALL_ALLOWED: &[(&str, &str, &str)] = &[
    (
        "src/analysis/faults.rs",
        "fn fix(",
        "a dispatch over the fault kind, with one general advice; the node only refines a few",
    ),
    (
        "src/analysis/faults.rs",
        "fn unstated_limit(",
        "a dispatch over the fault kind; the node only refines a saturated amplifier",
    ),
    (
        "src/cli/eval.rs",
        "fn json(",
        "over the signal: only a conversion gives a reading, whose unit is the chain's",
    ),
    (
        "src/model/graph.rs",
        "fn wrong_signal(",
        "a help message: a pair of signal and stage kind without advice of its own gets the general one",
    ),
];

#[test]
fn no_match_over_kinds_has_a_catch_all_arm() {
    let mut found = Vec::new();
    let mut allowed_used = vec![false; CATCH_ALL_ALLOWED.len()];
    for (path, text) in sources() {
        let code = blank_comments_and_strings(&text);
        for site in catch_alls(&code) {
            let function = enclosing_function(&text, site);
            let allowance = CATCH_ALL_ALLOWED
                .iter()
                .position(|(file, f, _)| *file == path && function.contains(f));
            match allowance {
                Some(k) => allowed_used[k] = true,
                None => found.push(format!("{path}:{}", line_of(&text, site))),
            }
        }
    }
    assert!(
        found.is_empty(),
        "a match over kinds with a catch-all arm; name every kind (grouped with `|`) \
         so a new kind makes the compiler list the site:\n  {}",
        found.join("\n  ")
    );
    for ((file, f, _), used) in CATCH_ALL_ALLOWED.iter().zip(allowed_used) {
        assert!(
            used,
            "the allowance for `{f}` in {file} matches nothing: remove it"
        );
    }
}

/// The scanner sees a catch-all beside a kind, in a tuple too, and not a
/// wildcard over another position, a guard or another enum.
#[test]
fn the_catch_all_scanner_finds_what_it_should() {
    let flagged = |text: &str| catch_alls(&blank_comments_and_strings(text)).len();
    assert_eq!(
        flagged("match n { Node::Adc(a) => 1, _ => 0 }"),
        1,
        "a plain catch-all"
    );
    assert_eq!(flagged("match n { Node::Adc(a) => 1, other => 0 }"), 1);
    assert_eq!(
        flagged("match (n, l) { (Node::Adc(_), _) => 1, (_, _) => 0 }"),
        1
    );
    assert_eq!(
        flagged("match m { Some(StageModel::Rtd(r)) => { r } _ => None }"),
        1,
        "after a block arm"
    );
    assert_eq!(
        flagged(
            "match (n, l) { (Node::Adc(_), _) => 1, (Node::Rtd(_) | Node::Filter(_), _) => 0 }"
        ),
        0,
        "a wildcard over the other position"
    );
    assert_eq!(flagged("match s { Signal::Code { .. } => 1, _ => 0 }"), 0);
    assert_eq!(
        flagged("match x { Some(y) if y.kind == StageKind::Adc => 1, _ => 0 }"),
        0,
        "a kind in a guard only"
    );
    assert_eq!(flagged("// match n { Node::Adc(a) => 1, _ => 0 }"), 0);
    assert_eq!(
        flagged("let s = \"match n { Node::Adc(a) => 1, _ => 0 }\";"),
        0
    );
    assert_eq!(
        flagged("match n { Node::Adc(a) => match a.x { 'a' => 1, _ => 2 }, Node::Rtd(_) => 0 }"),
        0,
        "a nested match over something else"
    );
}

/// Where each catch-all arm of a match over kinds starts, as byte
/// offsets into `code` (comments and strings blanked).
fn catch_alls(code: &str) -> Vec<usize> {
    let mut out = Vec::new();
    let bytes = code.as_bytes();
    let mut from = 0;
    while let Some(at) = find_word(code, "match", from) {
        from = at + "match".len();
        let Some(open) = body_start(bytes, from) else {
            continue;
        };
        let Some(close) = closing(bytes, open) else {
            continue;
        };
        let arms = arm_patterns(code, open + 1, close);
        let names_a_kind = arms
            .iter()
            .any(|&(s, e)| names_kind(pattern_without_guard(&code[s..e])));
        if names_a_kind {
            out.extend(
                arms.iter()
                    .filter(|&&(s, e)| is_wildcard(pattern_without_guard(&code[s..e])))
                    .map(|&(s, _)| s),
            );
        }
    }
    out
}

/// `word` as a whole word at or after `from`.
fn find_word(code: &str, word: &str, mut from: usize) -> Option<usize> {
    let ident = |b: u8| b.is_ascii_alphanumeric() || b == b'_';
    let bytes = code.as_bytes();
    while let Some(k) = code[from..].find(word) {
        let at = from + k;
        let end = at + word.len();
        let before = at == 0 || !ident(bytes[at - 1]);
        let after = end >= bytes.len() || !ident(bytes[end]);
        if before && after {
            return Some(at);
        }
        from = end;
    }
    None
}

/// The `{` that opens a match's arms: the first brace outside brackets
/// after the scrutinee.
fn body_start(bytes: &[u8], from: usize) -> Option<usize> {
    let mut depth = 0i32;
    for (k, &b) in bytes.iter().enumerate().skip(from) {
        match b {
            b'(' | b'[' => depth += 1,
            b')' | b']' => depth -= 1,
            b'{' if depth == 0 => return Some(k),
            b';' | b'}' if depth <= 0 => return None,
            _ => {}
        }
    }
    None
}

/// The bracket closing the one opened at `open`.
fn closing(bytes: &[u8], open: usize) -> Option<usize> {
    let mut depth = 0i32;
    for (k, &b) in bytes.iter().enumerate().skip(open) {
        match b {
            b'(' | b'[' | b'{' => depth += 1,
            b')' | b']' | b'}' => {
                depth -= 1;
                if depth == 0 {
                    return Some(k);
                }
            }
            _ => {}
        }
    }
    None
}

/// The byte ranges of a match body's arm patterns (each up to its `=>`).
fn arm_patterns(code: &str, start: usize, end: usize) -> Vec<(usize, usize)> {
    let bytes = code.as_bytes();
    let mut arms = Vec::new();
    let mut k = start;
    while k < end {
        while k < end && (bytes[k].is_ascii_whitespace() || bytes[k] == b',') {
            k += 1;
        }
        if k >= end {
            break;
        }
        // The pattern, to the `=>` outside brackets.
        let pattern_start = k;
        let mut depth = 0i32;
        while k < end && !(depth == 0 && code[k..].starts_with("=>")) {
            match bytes[k] {
                b'(' | b'[' | b'{' => depth += 1,
                b')' | b']' | b'}' => depth -= 1,
                _ => {}
            }
            k += 1;
        }
        if k >= end {
            break;
        }
        arms.push((pattern_start, k));
        k += 2;
        // The expression: a block, or up to the comma outside brackets.
        while k < end && bytes[k].is_ascii_whitespace() {
            k += 1;
        }
        if k < end && bytes[k] == b'{' {
            k = closing(bytes, k).map_or(end, |c| c + 1);
            continue;
        }
        let mut depth = 0i32;
        while k < end && !(depth == 0 && bytes[k] == b',') {
            match bytes[k] {
                b'(' | b'[' | b'{' => depth += 1,
                b')' | b']' | b'}' => depth -= 1,
                _ => {}
            }
            k += 1;
        }
    }
    arms
}

fn pattern_without_guard(pattern: &str) -> &str {
    match find_word(pattern, "if", 0) {
        Some(at) => pattern[..at].trim(),
        None => pattern.trim(),
    }
}

fn names_kind(pattern: &str) -> bool {
    KIND_ENUMS.iter().any(|e| {
        let path = format!("{e}::");
        let mut from = 0;
        while let Some(at) = find_word(pattern, e, from) {
            if pattern[at..].starts_with(&path) {
                return true;
            }
            from = at + e.len();
        }
        false
    })
}

/// `_`, a bare binding, or a tuple of nothing but `_`.
fn is_wildcard(pattern: &str) -> bool {
    let binding = |p: &str| {
        p == "_"
            || (!p.is_empty()
                && p.starts_with(|c: char| c.is_ascii_lowercase() || c == '_')
                && p.chars().all(|c| c.is_ascii_alphanumeric() || c == '_'))
    };
    if binding(pattern) {
        return true;
    }
    match pattern.strip_prefix('(').and_then(|p| p.strip_suffix(')')) {
        Some(inner) => inner
            .split(',')
            .map(str::trim)
            .filter(|p| !p.is_empty())
            .all(|p| p == "_"),
        None => false,
    }
}

/// The line of a function's signature that holds offset `at`.
fn enclosing_function(text: &str, at: usize) -> &str {
    let before = &text[..at];
    let start = find_last_fn(before).unwrap_or(0);
    text[start..].lines().next().unwrap_or("")
}

fn find_last_fn(text: &str) -> Option<usize> {
    let mut last = None;
    let mut from = 0;
    while let Some(at) = find_word(text, "fn", from) {
        last = Some(at);
        from = at + 2;
    }
    last
}

fn line_of(text: &str, at: usize) -> usize {
    text[..at].matches('\n').count() + 1
}

/// Every `.rs` file under `src/`, by its path from the repository's root.
fn sources() -> Vec<(String, String)> {
    let root = common::root();
    let mut files = Vec::new();
    rust_files(&root.join("src"), &mut files);
    files
        .into_iter()
        .map(|path| {
            let name = path
                .strip_prefix(&root)
                .expect("under the root")
                .to_string_lossy()
                .replace('\\', "/");
            let text = fs::read_to_string(&path).expect("a source file reads");
            (name, text)
        })
        .collect()
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let mut entries: Vec<_> = fs::read_dir(dir)
        .expect("a source folder reads")
        .map(|e| e.expect("an entry").path())
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

/// The text with comments and the insides of string and character
/// literals replaced by spaces (quotes kept), byte for byte, so offsets
/// and lines stay those of the file.
fn blank_comments_and_strings(text: &str) -> String {
    let bytes = text.as_bytes();
    let mut out = bytes.to_vec();
    let blank = |out: &mut Vec<u8>, from: usize, to: usize| {
        for b in &mut out[from..to] {
            if *b != b'\n' {
                *b = b' ';
            }
        }
    };
    let mut k = 0;
    while k < bytes.len() {
        let rest = &bytes[k..];
        if rest.starts_with(b"//") {
            let end = text[k..].find('\n').map_or(bytes.len(), |e| k + e);
            blank(&mut out, k, end);
            k = end;
        } else if rest.starts_with(b"/*") {
            let end = text[k + 2..]
                .find("*/")
                .map_or(bytes.len(), |e| k + 2 + e + 2);
            blank(&mut out, k, end);
            k = end;
        } else if let Some(hashes) = raw_string_start(bytes, k) {
            let open = k + 1 + hashes + 1;
            let close = format!("\"{}", "#".repeat(hashes));
            let end = text[open..].find(&close).map_or(bytes.len(), |e| open + e);
            blank(&mut out, open, end);
            k = end + close.len();
        } else if bytes[k] == b'"' {
            let mut j = k + 1;
            while j < bytes.len() && bytes[j] != b'"' {
                j += if bytes[j] == b'\\' { 2 } else { 1 };
            }
            blank(&mut out, k + 1, j.min(bytes.len()));
            k = j + 1;
        } else if bytes[k] == b'\'' {
            match char_literal_len(&text[k..]) {
                Some(len) => {
                    blank(&mut out, k + 1, k + len - 1);
                    k += len;
                }
                None => k += 1, // a lifetime
            }
        } else {
            k += 1;
        }
    }
    String::from_utf8(out).expect("only ASCII spaces replace whole characters")
}

/// The number of `#` of a raw string starting at `k` (`r"`, `r#"`, `br"`).
fn raw_string_start(bytes: &[u8], k: usize) -> Option<usize> {
    let ident = |b: u8| b.is_ascii_alphanumeric() || b == b'_';
    if bytes[k] != b'r' || (k > 0 && ident(bytes[k - 1]) && bytes[k - 1] != b'b') {
        return None;
    }
    let hashes = bytes[k + 1..].iter().take_while(|&&b| b == b'#').count();
    (bytes.get(k + 1 + hashes) == Some(&b'"')).then_some(hashes)
}

/// The length of a character literal at the start of `text`, None for a
/// lifetime.
fn char_literal_len(text: &str) -> Option<usize> {
    let mut chars = text.char_indices().skip(1);
    let (_, first) = chars.next()?;
    if first == '\\' {
        let close = text.get(3..)?.find('\'')?;
        return Some(3 + close + 1);
    }
    match chars.next() {
        Some((at, '\'')) => Some(at + 1),
        _ => None,
    }
}

/// String literals that spell a parameter's name but are another word,
/// as (file, literal, why).
const NAME_ALLOWED: &[(&str, &str, &str)] = &[
    (
        "src/eval/plan.rs",
        "tolerance",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "drift",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "offset",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "gain",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "bias",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "sensor",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "lead",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "cold_junction",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "nonlinearity",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/plan.rs",
        "inl",
        "a source kind's word in the budget",
    ),
    (
        "src/eval/node/rtd.rs",
        "c",
        "the Callendar-Van Dusen coefficient C's slot, not a filter's `c`",
    ),
    (
        "src/analysis/budget.rs",
        "noise",
        "the noise source's id and kind in the budget",
    ),
    (
        "src/analysis/monte_carlo.rs",
        "noise",
        "the noise source's id in the draws",
    ),
    (
        "src/analysis/soundness.rs",
        "noise",
        "what a source drives beyond any number, in a finding's words",
    ),
    (
        "src/analysis/review/mod.rs",
        "power",
        "the bill's figure in the comparison, a word for people",
    ),
    (
        "src/cli/compare.rs",
        "power",
        "the bill's row in the comparison table, a word for people",
    ),
    (
        "src/cli/budget_json.rs",
        "rate",
        "a JSON key of the dynamics",
    ),
    ("src/cli/budget_table.rs", "limit", "a table heading"),
    ("src/cli/budget_table.rs", "method", "a table heading"),
    ("src/cli/eval.rs", "output", "a table heading"),
    ("src/cli/export.rs", "c", "a file extension"),
    (
        "src/cli/report.rs",
        "output",
        "the command's `--output` flag",
    ),
    (
        "src/cli/settings.rs",
        "reference",
        "the `reference` setting of catena.yaml",
    ),
    (
        "src/config/values.rs",
        "reference",
        "the `reference` key of catena.yaml",
    ),
    (
        "src/model/settings.rs",
        "reference",
        "the chain's `reference` setting",
    ),
    (
        "src/syntax/ast.rs",
        "reference",
        "the keyword of the chain's `reference` setting",
    ),
    ("src/syntax/ast.rs", "sensor", "the `sensor` stage keyword"),
    (
        "src/emit/export/mod.rs",
        "cold_junction",
        "an exported curve's name",
    ),
    (
        "src/emit/export/model.rs",
        "offset",
        "the `offset` calibration method",
    ),
    (
        "src/emit/report/build.rs",
        "offset",
        "the `offset` calibration method",
    ),
    (
        "src/emit/report/markdown.rs",
        "offset",
        "the `offset` calibration method",
    ),
    (
        "src/model/interpret.rs",
        "offset",
        "the `offset` calibration method",
    ),
    ("src/model/interpret.rs", "bits", "the unit `bits`"),
    ("src/units/table.rs", "bits", "the unit `bits`"),
    ("src/units/table.rs", "c", "a unit's alias"),
    (
        "src/model/requirement.rs",
        "accuracy",
        "the `require accuracy` kind",
    ),
    (
        "src/model/track.rs",
        "ratio",
        "the `ratio` clause of a tracking group",
    ),
    ("src/emit/report/plots.rs", "gain", "a plot's axis label"),
    ("src/emit/report/plots.rs", "limit", "a plot's legend label"),
    (
        "src/analysis/ranges.rs",
        "output",
        "the limited quantity in a finding's words",
    ),
    (
        "src/analysis/ranges.rs",
        "input",
        "the limited quantity in a finding's words",
    ),
    (
        "src/analysis/ranges.rs",
        "reference",
        "the limited quantity in a finding's words",
    ),
    (
        "src/analysis/ranges.rs",
        "current",
        "the limited quantity in a finding's words",
    ),
    (
        "src/emit/report/build.rs",
        "current",
        "a signal's kind in the report's words",
    ),
    (
        "src/emit/report/build.rs",
        "voltage",
        "a signal's kind in the report's words",
    ),
];

/// Every parameter name the schema declares, with the model words whose
/// line states the stage's value (an excitation's `current`), which a
/// slot is named by too.
fn parameter_names() -> std::collections::BTreeSet<&'static str> {
    use catena::model::schema::{self, Shape};
    use catena::syntax::ast::StageKind;
    StageKind::ALL
        .iter()
        .flat_map(|&kind| schema::models(kind))
        .flat_map(|model| {
            let valued = matches!(model.model_shape, Shape::Measure { .. });
            let word = model.model.filter(|_| valued);
            model.params.iter().map(|p| p.name).chain(word)
        })
        .collect()
}

#[test]
fn no_parameter_name_is_written_outside_the_schema() {
    let names = parameter_names();
    assert!(names.len() > 50, "read only {} names", names.len());
    let mut found = Vec::new();
    let mut allowed_used = vec![false; NAME_ALLOWED.len()];
    for (path, text) in sources() {
        if path == "src/model/schema.rs" {
            continue;
        }
        // Unit tests write specs and slot ids as a user reads them.
        let product = text
            .find("#[cfg(test)]\nmod tests")
            .map_or(text.as_str(), |end| &text[..end]);
        for (at, literal) in string_literals(product) {
            if !names.contains(literal) {
                continue;
            }
            match NAME_ALLOWED
                .iter()
                .position(|(file, word, _)| *file == path && *word == literal)
            {
                Some(k) => allowed_used[k] = true,
                None => found.push(format!("{path}:{}: \"{literal}\"", line_of(&text, at))),
            }
        }
    }
    assert!(
        found.is_empty(),
        "a parameter's name outside the schema; read the typed field, or name the \
         parameter by its constant in `schema::param`:\n  {}",
        found.join("\n  ")
    );
    for ((file, word, _), used) in NAME_ALLOWED.iter().zip(allowed_used) {
        assert!(
            used,
            "the allowance for \"{word}\" in {file} matches nothing: remove it"
        );
    }
}

/// Plain string literals of one word (no escapes), with their offsets.
fn string_literals(text: &str) -> Vec<(usize, &str)> {
    let code = blank_comments_and_strings(text);
    let bytes = code.as_bytes();
    let mut out = Vec::new();
    let mut k = 0;
    while k < bytes.len() {
        if bytes[k] == b'"' {
            let end = code[k + 1..].find('"').map_or(bytes.len(), |e| k + 1 + e);
            let literal = &text[k + 1..end.min(text.len())];
            if !literal.is_empty()
                && literal
                    .bytes()
                    .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit() || b == b'_')
            {
                out.push((k, literal));
            }
            k = end + 1;
        } else {
            k += 1;
        }
    }
    out
}

#[test]
fn string_literals_are_read_whole_and_outside_comments() {
    let text = "let a = \"gain\"; // \"offset\"\nlet b = \"two words\"; let c = 'x'; f(\"r\")";
    let words: Vec<&str> = string_literals(text).into_iter().map(|(_, w)| w).collect();
    assert_eq!(words, ["gain", "r"]);
}
