//! The canonical layout `catena fmt` writes: four-space indentation by
//! block depth, one space between tokens (none around the `.` of a port,
//! none before `,` and `;`), a space between a number and its unit, blank
//! lines collapsed to one, and comments kept where they were.
//!
//! Trailing comments are separated by two spaces rather than aligned in a
//! column: aligning would rewrite neighbouring lines whenever one line
//! grows, and a spec's diff should show only the lines that changed.
//!
//! The formatter works on tokens of each line and never reorders lines, so
//! it cannot change what a spec means; callers format only files that
//! parse without syntax findings.

const INDENT: &str = "    ";

#[derive(Clone, Debug, PartialEq)]
enum Token<'a> {
    Number(String),
    Word(&'a str),
    Text(&'a str),
    Punct(&'a str),
}

/// Formats a spec's text.
pub fn format_source(text: &str) -> String {
    let mut out: Vec<String> = Vec::new();
    let mut depth: usize = 0;
    let mut pending_blank = false;
    for raw in text.lines() {
        let (code, comment) = split_comment(raw);
        let tokens = tokenize(code.trim());
        if tokens.is_empty() && comment.is_none() {
            pending_blank = !out.is_empty();
            continue;
        }
        let closes_first = matches!(tokens.first(), Some(Token::Punct("}")));
        let indent = depth.saturating_sub(usize::from(closes_first));
        let opens_block = out.last().is_some_and(|l| l.trim_end().ends_with('{'));
        if pending_blank && !closes_first && !opens_block {
            out.push(String::new());
        }
        pending_blank = false;
        let mut line = INDENT.repeat(indent);
        let code = render(&tokens);
        line.push_str(&code);
        if let Some(c) = comment {
            if !code.is_empty() {
                line.push_str("  ");
            }
            line.push_str(c.trim_end());
        }
        for t in &tokens {
            match t {
                Token::Punct("{") => depth += 1,
                Token::Punct("}") => depth = depth.saturating_sub(1),
                _ => {}
            }
        }
        out.push(line);
    }
    let mut text = out.join("\n");
    text.push('\n');
    text
}

/// Splits off a `#` comment that is not inside a string.
pub fn split_comment(line: &str) -> (&str, Option<&str>) {
    let mut in_string = false;
    let mut escaped = false;
    for (i, c) in line.char_indices() {
        match c {
            _ if escaped => escaped = false,
            '\\' if in_string => escaped = true,
            '"' => in_string = !in_string,
            '#' if !in_string => return (&line[..i], Some(&line[i..])),
            _ => {}
        }
    }
    (line, None)
}

fn is_word_char(c: char) -> bool {
    c.is_alphanumeric() || matches!(c, '_' | '%' | '√' | '°' | '/' | '*' | '^')
}

fn tokenize(code: &str) -> Vec<Token<'_>> {
    let mut tokens = Vec::new();
    let bytes = code.as_bytes();
    let mut i = 0;
    while i < code.len() {
        let rest = &code[i..];
        let c = rest.chars().next().unwrap_or(' ');
        if c.is_whitespace() {
            i += c.len_utf8();
            continue;
        }
        if c == '"' {
            let mut end = i + 1;
            let mut escaped = false;
            for (j, ch) in code[i + 1..].char_indices() {
                end = i + 1 + j + ch.len_utf8();
                match ch {
                    _ if escaped => escaped = false,
                    '\\' => escaped = true,
                    '"' => break,
                    _ => {}
                }
            }
            tokens.push(Token::Text(&code[i..end]));
            i = end;
            continue;
        }
        if let Some(p) = ["->", "..", "+-", "±", "=>", "+/-"]
            .iter()
            .find(|p| rest.starts_with(**p))
        {
            tokens.push(Token::Punct(p));
            i += p.len();
            continue;
        }
        let starts_number =
            c.is_ascii_digit() || (c == '.' && bytes.get(i + 1).is_some_and(u8::is_ascii_digit));
        let signed = (c == '+' || c == '-') && {
            let after = rest[1..].trim_start();
            after.starts_with(|d: char| d.is_ascii_digit() || d == '.')
        };
        if starts_number || signed {
            let (number, len) = scan_number(rest);
            tokens.push(Token::Number(number));
            i += len;
            continue;
        }
        if is_word_char(c) {
            let mut len = 0;
            let mut last = ' ';
            for ch in rest.chars() {
                if !(is_word_char(ch) || (ch == '-' && last == '^')) {
                    break;
                }
                len += ch.len_utf8();
                last = ch;
            }
            let len = len.max(c.len_utf8());
            tokens.push(Token::Word(&rest[..len]));
            i += len;
            continue;
        }
        tokens.push(Token::Punct(&rest[..c.len_utf8()]));
        i += c.len_utf8();
    }
    tokens
}

/// A number with an optional sign (spaces after the sign dropped) and
/// exponent; returns its canonical text and the bytes consumed.
fn scan_number(s: &str) -> (String, usize) {
    let b = s.as_bytes();
    let mut i = 0;
    let mut text = String::new();
    if b[0] == b'+' || b[0] == b'-' {
        text.push(b[0] as char);
        i = 1;
        while i < b.len() && (b[i] == b' ' || b[i] == b'\t') {
            i += 1;
        }
    }
    let start = i;
    while i < b.len() && b[i].is_ascii_digit() {
        i += 1;
    }
    if i + 1 < b.len() && b[i] == b'.' && b[i + 1].is_ascii_digit() {
        i += 1;
        while i < b.len() && b[i].is_ascii_digit() {
            i += 1;
        }
    }
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        let mut j = i + 1;
        if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
            j += 1;
        }
        if j < b.len() && b[j].is_ascii_digit() {
            while j < b.len() && b[j].is_ascii_digit() {
                j += 1;
            }
            i = j;
        }
    }
    text.push_str(&s[start..i]);
    (text, i)
}

fn render(tokens: &[Token<'_>]) -> String {
    let mut out = String::new();
    let mut prev: Option<&Token<'_>> = None;
    // A `track` line's colon closes its name, as in prose.
    let tracking = matches!(tokens.first(), Some(Token::Word("track")));
    for t in tokens {
        let text = match t {
            Token::Number(n) => n.as_str(),
            Token::Word(w) | Token::Text(w) | Token::Punct(w) => w,
        };
        let glue = matches!(t, Token::Punct("." | "," | ";"))
            || (tracking && matches!(t, Token::Punct(":")))
            || matches!(prev, Some(Token::Punct(".")))
            || prev.is_none();
        if !glue {
            out.push(' ');
        }
        out.push_str(text);
        prev = Some(t);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::format_source;

    #[test]
    fn canonical_spacing_and_indent() {
        let src = "chain a {\n  sensor  p {rtd pt100}\n\n\n amplifier f{gain 4±0.1%   # why\n offset 20uV max\n}\np.out->f.in\n}\n";
        let want = "chain a {\n    sensor p { rtd pt100 }\n\n    amplifier f { gain 4 ± 0.1 %  # why\n        offset 20 uV max\n    }\n    p.out -> f.in\n}\n";
        assert_eq!(format_source(src), want);
    }

    #[test]
    fn numbers_units_and_tolerances() {
        let src = "x 4.7kohm +0.1 -0.2 % 1e-3 -5 degC..15 degC 2 mV/V nV/rtHz Hz^-1\n";
        assert_eq!(
            format_source(src),
            "x 4.7 kohm +0.1 -0.2 % 1e-3 -5 degC .. 15 degC 2 mV/V nV/rtHz Hz^-1\n"
        );
    }

    #[test]
    fn idempotent_and_keeps_strings() {
        let src = "chain a \"a # not a comment\" {\n# lead\n  title \"x  y\"\n}\n";
        let once = format_source(src);
        assert_eq!(
            once,
            "chain a \"a # not a comment\" {\n    # lead\n    title \"x  y\"\n}\n"
        );
        assert_eq!(format_source(&once), once);
    }

    #[test]
    fn tracking_line() {
        let src = "chain a {\n  track   pair :rlow,refdiv   ratio ±0.02%  tracking 2ppm/K\n}\n";
        let want = "chain a {\n    track pair: rlow, refdiv ratio ± 0.02 % tracking 2 ppm/K\n}\n";
        assert_eq!(format_source(src), want);
        assert_eq!(format_source(want), want);
    }
}
