use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use super::files::{collect, plain_io};
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::check::check_bytes;
use crate::diagnostics::{render_human, render_json, Finding, Severity};
use crate::model::PartsCache;

#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Spec files, or folders to search for `*.catena`.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// How findings are written: for people, or JSON for tools.
    #[arg(long, value_enum, default_value_t = Format::Human)]
    format: Format,
    /// Treat warnings as errors for the exit status.
    #[arg(long, value_enum)]
    deny: Vec<Deny>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
enum Deny {
    Warnings,
}

pub fn run(args: CheckArgs) -> u8 {
    let files = match collect(&args.paths) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let mut parts = PartsCache::default();
    let mut all: Vec<Finding> = Vec::new();
    for path in &files {
        let bytes = match std::fs::read(path) {
            Ok(b) => b,
            Err(e) => {
                eprintln!("catena: cannot read `{}`: {}", path.display(), plain_io(&e));
                return EXIT_USAGE;
            }
        };
        let base = path
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        let checked = check_bytes(&path.to_string_lossy(), &bytes, base, &mut parts);
        all.extend(checked.findings.sorted());
    }
    let errors = all
        .iter()
        .filter(|f| f.severity() == Severity::Error)
        .count();
    let warnings = all.len() - errors;
    match args.format {
        Format::Json => print!("{}", render_json(&all)),
        Format::Human => {
            eprint!(
                "{}",
                render_human(&all, terminal::stderr_color(), terminal::width())
            );
            eprintln!(
                "checked {} file{}: {} error{}, {} warning{}",
                files.len(),
                plural(files.len()),
                errors,
                plural(errors),
                warnings,
                plural(warnings)
            );
        }
    }
    let deny_warnings = args.deny.contains(&Deny::Warnings);
    if errors > 0 || (deny_warnings && warnings > 0) {
        EXIT_FINDINGS
    } else {
        EXIT_OK
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}
