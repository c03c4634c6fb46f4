use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use super::files::{collect, plain_io};
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::report::{DEFAULT_TRIALS, MAX_TRIALS};
use crate::analysis::CheckOptions;
use crate::check::check_bytes_with;
use crate::diagnostics::{
    render_github, render_human, render_json, render_sarif, render_short, Finding, Severity,
};
use crate::model::PartsCache;
use rayon::prelude::*;

#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Spec files, or folders to search for `*.catena`.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// How findings are written: for people, or for tools (JSON, SARIF
    /// 2.1.0, CI workflow commands, or one `file:line:col:` line each).
    #[arg(long, value_enum, default_value_t = CheckFormat::Human)]
    format: CheckFormat,
    /// Treat warnings as errors for the exit status.
    #[arg(long, value_enum)]
    deny: Vec<Deny>,
    /// Warn when a signal keeps less headroom than this, in % of the
    /// limit's span.
    #[arg(long, default_value_t = 5.0, value_parser = parse_margin)]
    margin: f64,
    /// Run Monte Carlo for every chain, not only where a requirement asks.
    #[arg(long)]
    monte_carlo: bool,
    /// Monte Carlo trials per point, where it runs.
    #[arg(long, default_value_t = DEFAULT_TRIALS as u64, value_parser = clap::value_parser!(u64).range(1..=MAX_TRIALS as u64))]
    trials: u64,
    /// Let `use` read parts files outside the spec's repository.
    #[arg(long)]
    allow_outside_paths: bool,
}

fn parse_margin(text: &str) -> Result<f64, String> {
    let value: f64 = text
        .trim()
        .trim_end_matches('%')
        .trim()
        .parse()
        .map_err(|_| format!("`{text}` is not a percentage"))?;
    if (0.0..50.0).contains(&value) {
        Ok(value)
    } else {
        Err("the margin is a percentage from 0 to 50".into())
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
enum CheckFormat {
    Human,
    Json,
    Sarif,
    Github,
    Short,
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
    let mut inputs = Vec::with_capacity(files.len());
    for path in &files {
        match std::fs::read(path) {
            Ok(b) => inputs.push((path, b)),
            Err(e) => {
                eprintln!("catena: cannot read `{}`: {}", path.display(), plain_io(&e));
                return EXIT_USAGE;
            }
        }
    }
    let options = CheckOptions {
        monte_carlo: args.monte_carlo,
        trials: args.trials as usize,
        // Zero would mean the default; a tiny positive value means none.
        margin: (args.margin / 100.0).max(1e-12),
        allow_outside_paths: args.allow_outside_paths,
    };
    // Files are independent: check them on every core, gather in order.
    let per_file: Vec<Vec<Finding>> = inputs
        .par_iter()
        .map_init(PartsCache::default, |parts, (path, bytes)| {
            let base = path
                .parent()
                .filter(|p| !p.as_os_str().is_empty())
                .unwrap_or(Path::new("."));
            check_bytes_with(&path.to_string_lossy(), bytes, base, parts, &options)
                .findings
                .sorted()
        })
        .collect();
    let mut seen = std::collections::HashSet::new();
    let all: Vec<Finding> = per_file
        .into_iter()
        .flatten()
        .filter(|f| {
            seen.insert((
                f.file.name().to_string(),
                f.primary_offset(),
                f.code,
                f.message.clone(),
            ))
        })
        .collect();
    let errors = all
        .iter()
        .filter(|f| f.severity() == Severity::Error)
        .count();
    let warnings = all.len() - errors;
    match args.format {
        CheckFormat::Json => print!("{}", render_json(&all)),
        CheckFormat::Sarif => print!("{}", render_sarif(&all)),
        CheckFormat::Github => print!("{}", render_github(&all)),
        CheckFormat::Short => print!("{}", render_short(&all)),
        CheckFormat::Human => {
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
