use std::io::{Read, Write};
use std::path::PathBuf;

use clap::Args;

use super::files::{collect, plain_io};
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::diagnostics::{render_human, Findings};
use crate::emit::write_atomic;
use crate::syntax::{self, format::format_source};

#[derive(Args, Debug)]
pub struct FmtArgs {
    /// Spec files or folders; `-` formats standard input to standard output.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// Change nothing: list the files that would change, exit 1 if any.
    #[arg(long)]
    check: bool,
    /// Change nothing: show each change as a unified diff (implies
    /// `--check`).
    #[arg(long)]
    diff: bool,
    /// With `--check`, list nothing: only the exit status tells.
    #[arg(short, long)]
    quiet: bool,
}

/// The change formatting makes, as a unified diff with three lines of
/// context, `a/` and `b/` naming the file before and after.
fn unified_diff(name: &str, old: &str, new: &str) -> String {
    similar::TextDiff::from_lines(old, new)
        .unified_diff()
        .context_radius(3)
        .header(&format!("a/{name}"), &format!("b/{name}"))
        .to_string()
}

/// What `--check` and `--diff` say about a file that would change.
fn tell_change(args: &FmtArgs, name: &str, old: &[u8], new: &str) {
    if args.diff {
        let old = String::from_utf8_lossy(old);
        print!("{}", unified_diff(name, &old, new));
    } else if !args.quiet {
        println!("{name}");
    }
}

/// Formats text that parses; syntax findings are returned instead.
fn format_checked(name: &str, bytes: &[u8]) -> Result<String, Findings> {
    let file = syntax::decode(name, bytes).map_err(|f| {
        let mut fs = Findings::new();
        fs.push(f);
        fs
    })?;
    let (_, findings) = syntax::parse(&file);
    if findings.has_errors() {
        return Err(findings);
    }
    Ok(format_source(file.text()))
}

pub fn run(mut args: FmtArgs) -> u8 {
    args.check |= args.diff;
    if args.paths.iter().any(|p| p.as_os_str() == "-") {
        if args.paths.len() > 1 {
            eprintln!("catena: `-` (standard input) cannot be combined with other paths");
            return EXIT_USAGE;
        }
        let mut input = Vec::new();
        if let Err(e) = std::io::stdin().read_to_end(&mut input) {
            eprintln!("catena: cannot read standard input: {}", plain_io(&e));
            return EXIT_USAGE;
        }
        return match format_checked("<stdin>", &input) {
            Ok(text) if args.check => {
                let changed = text.as_bytes() != input.as_slice();
                if changed && args.diff {
                    tell_change(&args, "<stdin>", &input, &text);
                }
                u8::from(changed)
            }
            Ok(text) => {
                let _ = std::io::stdout().write_all(text.as_bytes());
                EXIT_OK
            }
            Err(findings) => report(findings),
        };
    }
    let files = match collect(&args.paths) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let mut status = EXIT_OK;
    for path in files {
        let bytes = match std::fs::read(&path) {
            Ok(b) => b,
            Err(e) => {
                eprintln!("catena: cannot read `{}`: {}", path.display(), plain_io(&e));
                return EXIT_USAGE;
            }
        };
        let text = match format_checked(&path.to_string_lossy(), &bytes) {
            Ok(t) => t,
            Err(findings) => {
                status = status.max(report(findings));
                continue;
            }
        };
        if text.as_bytes() == bytes.as_slice() {
            continue;
        }
        if args.check {
            tell_change(&args, &path.to_string_lossy(), &bytes, &text);
            status = EXIT_FINDINGS;
        } else if let Err(e) = write_atomic(&path, text.as_bytes()) {
            eprintln!("catena: {e}");
            return EXIT_USAGE;
        }
    }
    status
}

fn report(findings: Findings) -> u8 {
    let all = findings.sorted();
    eprint!(
        "{}",
        render_human(&all, terminal::stderr_color(), terminal::width())
    );
    eprintln!("catena: not formatted: the file has syntax errors");
    EXIT_FINDINGS
}

#[cfg(test)]
mod tests {
    use super::unified_diff;

    #[test]
    fn a_diff_shows_the_changed_line_with_context() {
        let diff = unified_diff("a.catena", "x\ny  {\nz\n", "x\ny {\nz\n");
        assert_eq!(
            diff,
            "--- a/a.catena\n+++ b/a.catena\n@@ -1,3 +1,3 @@\n x\n-y  {\n+y {\n z\n"
        );
    }
}
