//! Checks that run before the grammar: size, text encoding, braces and
//! strings. They bound what pest is asked to do (no deep recursion, no
//! exponential retries on junk) and give sharper messages than a parse
//! error at the end of the file.

use std::sync::Arc;

use crate::diagnostics::{Code, Finding, Findings, SourceFile, Span};

/// Specs are hand-written; anything bigger is almost surely not a spec.
pub const MAX_SOURCE_BYTES: usize = 4 * 1024 * 1024;
/// `chain { stage { } }` is the deepest the language nests.
pub const MAX_DEPTH: usize = 2;
/// Unclosed blocks reported per file, innermost first.
const MAX_UNCLOSED_REPORTED: usize = 8;

/// Turns raw bytes into a source file, or says why they are not one.
pub fn decode(name: &str, bytes: &[u8]) -> Result<Arc<SourceFile>, Finding> {
    let placeholder = |why: &str| SourceFile::new(name, why.to_string());
    if bytes.len() > MAX_SOURCE_BYTES {
        let file = placeholder("");
        return Err(Finding::new(
            Code::S004,
            &file,
            format!("file is over {MAX_SOURCE_BYTES} bytes, the limit for a spec"),
        )
        .help("split the file into several specs, or check that this is the file you meant"));
    }
    let (text, bad_at) = match std::str::from_utf8(bytes) {
        Ok(t) => (t.to_string(), bytes.iter().position(|&b| b == 0)),
        Err(e) => (
            String::from_utf8_lossy(&bytes[..e.valid_up_to()]).into_owned(),
            Some(e.valid_up_to()),
        ),
    };
    match bad_at {
        None => Ok(SourceFile::new(name, text)),
        Some(offset) => {
            let shown = text[..offset.min(text.len())].to_string();
            let file = SourceFile::new(name, shown);
            let end = file.text().len();
            Err(Finding::new(
                Code::S003,
                &file,
                format!("not a UTF-8 text file: byte {offset} is not text"),
            )
            .label(Span::new(end, end), "text ends here")
            .help("specs are UTF-8 text; check that this is a `.catena` file and not a binary"))
        }
    }
}

/// Brace balance and string termination, skipping comments and strings.
pub fn scan(file: &Arc<SourceFile>) -> Findings {
    let mut findings = bidi_controls(file);
    if let Some(f) = long_word(file) {
        findings.push(f);
    }
    let text = file.text();
    let mut open: Vec<usize> = Vec::new();
    // A `}` less indented than its `{` line most likely closes an outer
    // block, leaving the inner one open: the better place to point at.
    let mut suspect: Option<usize> = None;
    // Each line's indentation, found once: searching back from every brace
    // made a long line of braces quadratic.
    let line_starts: Vec<usize> = std::iter::once(0)
        .chain(text.match_indices('\n').map(|(i, _)| i + 1))
        .collect();
    let indent_of = |at: usize| {
        let line = line_starts.partition_point(|&s| s <= at) - 1;
        let start = line_starts[line];
        text[start..at].len() - text[start..at].trim_start().len()
    };
    let mut too_deep_reported = false;
    let mut chars = text.char_indices().peekable();
    while let Some((i, c)) = chars.next() {
        match c {
            '#' => while chars.next_if(|&(_, c)| c != '\n').is_some() {},
            '"' => findings.extend(string_end(file, &mut chars, i)),
            '{' => {
                open.push(i);
                if open.len() > MAX_DEPTH && !too_deep_reported {
                    too_deep_reported = true;
                    findings.push(too_deep(file, i, open.len()));
                }
            }
            '}' => match open.pop() {
                Some(o) => {
                    if indent_of(i) < indent_of(o) && suspect.is_none() {
                        suspect = Some(o);
                    }
                }
                None => findings.push(
                    Finding::new(Code::S002, file, "`}` closes nothing")
                        .label(Span::new(i, i + 1), "no block is open here")
                        .help("remove this `}` or add the `{` it was meant to close"),
                ),
            },
            _ => {}
        }
    }
    // Innermost first; a file of thousands of open braces needs only a few.
    if let (Some(s), false) = (suspect, open.is_empty()) {
        open = vec![s];
    }
    for &at in open.iter().rev().take(MAX_UNCLOSED_REPORTED) {
        findings.push(never_closed(file, at));
    }
    findings
}

/// Skips a string opened at `start`; S007 when the line ends first.
fn string_end(
    file: &Arc<SourceFile>,
    chars: &mut std::iter::Peekable<std::str::CharIndices>,
    start: usize,
) -> Option<Finding> {
    while let Some((_, c)) = chars.next_if(|&(_, c)| c != '\n') {
        if c == '\\' {
            chars.next_if(|&(_, c)| c != '\n');
        } else if c == '"' {
            return None;
        }
    }
    let end = chars.peek().map(|&(j, _)| j).unwrap_or(file.text().len());
    Some(
        Finding::new(Code::S007, file, "string is not closed on its line")
            .label(Span::new(start, end), "this string has no closing `\"`")
            .help("add a `\"` before the end of the line; strings cannot span lines"),
    )
}

/// S008 at the first `{` deeper than the language nests.
fn too_deep(file: &Arc<SourceFile>, at: usize, depth: usize) -> Finding {
    Finding::new(
        Code::S008,
        file,
        format!("blocks nest {depth} deep; the language nests at most {MAX_DEPTH}"),
    )
    .label(Span::new(at, at + 1), "this block is inside a stage")
    .help(
        "a `chain` holds stages and a stage holds parameter lines; close the stage with `}` first",
    )
}

/// S002 at a `{` without its `}`, naming the line it opens.
fn never_closed(file: &Arc<SourceFile>, at: usize) -> Finding {
    let text = file.text();
    let line_start = text[..at].rfind('\n').map(|n| n + 1).unwrap_or(0);
    let head = text[line_start..at].trim();
    let help = if head.is_empty() {
        "add the `}` that closes this block".to_string()
    } else {
        format!("add a `}}` after the last line of `{head}`")
    };
    Finding::new(Code::S002, file, "`{` is never closed")
        .label(Span::new(at, at + 1), "this block has no closing `}`")
        .help(help)
}

/// Names are at most this long. A name is repeated in every source id,
/// finding and report line that mentions its stage, so one of megabytes
/// would multiply into hundreds of megabytes of output.
pub const MAX_NAME_CHARS: usize = 256;

/// S017 at the first word (a name or a number) longer than
/// [`MAX_NAME_CHARS`] outside comments and strings, in one linear pass.
fn long_word(file: &Arc<SourceFile>) -> Option<Finding> {
    let text = file.text().as_bytes();
    let (mut in_string, mut in_comment, mut run_start) = (false, false, None::<usize>);
    for (i, &b) in text.iter().enumerate() {
        let word = b.is_ascii_alphanumeric() || b == b'_';
        if in_comment {
            in_comment = b != b'\n';
        } else if in_string {
            in_string = !(b == b'"' || b == b'\n') || (i > 0 && text[i - 1] == b'\\');
        } else if word {
            let start = *run_start.get_or_insert(i);
            if i - start + 1 > MAX_NAME_CHARS {
                let end = text[start..]
                    .iter()
                    .position(|c| !(c.is_ascii_alphanumeric() || *c == b'_'))
                    .map_or(text.len(), |n| start + n);
                return Some(
                    Finding::new(
                        Code::S017,
                        file,
                        format!(
                            "a name of {} characters; names are at most {MAX_NAME_CHARS}",
                            end - start
                        ),
                    )
                    .label(Span::new(start, end), "this name")
                    .help("shorten it: a stage or chain name is a word or two (`front_amp`)"),
                );
            }
            continue;
        } else {
            in_string = b == b'"';
            in_comment = b == b'#';
        }
        run_start = None;
    }
    None
}

/// The Unicode bidirectional controls: embeddings and overrides
/// (U+202A–U+202E), isolates (U+2066–U+2069), the marks U+200E, U+200F and
/// U+061C. In a comment or a string they reorder what a reviewer sees
/// without changing what is read ("trojan source", CVE-2021-42574).
fn is_bidi_control(c: char) -> bool {
    matches!(c, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{200E}' | '\u{200F}' | '\u{061C}')
}

/// At most this many S016 findings a file: one already says what to do.
const MAX_BIDI_REPORTED: usize = 8;

/// S016 at every bidirectional control character (up to a few).
fn bidi_controls(file: &Arc<SourceFile>) -> Findings {
    let mut findings = Findings::new();
    let found = file
        .text()
        .char_indices()
        .filter(|&(_, c)| is_bidi_control(c))
        .take(MAX_BIDI_REPORTED);
    for (at, c) in found {
        findings.push(
            Finding::new(
                Code::S016,
                file,
                format!(
                    "the invisible bidirectional control U+{:04X} reorders how this line is displayed",
                    u32::from(c)
                ),
            )
            .label(Span::new(at, at + c.len_utf8()), "hidden character here")
            .help("delete it: a spec reads left to right, and a reviewer cannot see this character in a diff"),
        );
    }
    findings
}

#[cfg(test)]
mod tests {
    use super::{decode, scan};
    use crate::diagnostics::Code;

    fn codes(text: &str) -> Vec<Code> {
        let file = decode("t.catena", text.as_bytes()).unwrap();
        scan(&file).into_iter().map(|f| f.code).collect()
    }

    #[test]
    fn braces_in_comments_and_strings_do_not_count() {
        assert!(codes("chain a \"{\" { # }\n}\n").is_empty());
    }

    #[test]
    fn unbalanced_and_deep() {
        assert_eq!(codes("chain a {\n"), vec![Code::S002]);
        assert_eq!(codes("}\n"), vec![Code::S002]);
        assert_eq!(codes("a{b{c{}}}"), vec![Code::S008]);
        assert_eq!(codes("title \"x\n"), vec![Code::S007]);
    }

    #[test]
    fn binary_is_refused() {
        let err = decode("t", &[b'a', 0, 1, 2]).unwrap_err();
        assert_eq!(err.code, Code::S003);
        let err = decode("t", &[b'a', 0xff, 0xfe]).unwrap_err();
        assert_eq!(err.code, Code::S003);
    }
}
