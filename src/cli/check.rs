use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use super::files::{collect_reporting, read_spec};
use super::{terminal, Format, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::report::{DEFAULT_TRIALS, MAX_TRIALS};
use crate::analysis::CheckOptions;
use crate::check::check_bytes_with;
use crate::diagnostics::{render_human, render_json, Finding, Severity};
use crate::model::PartsCache;
use rayon::prelude::*;

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
enum Deny {
    Warnings,
}

pub fn run(args: CheckArgs) -> u8 {
    let (files, loops) = match collect_reporting(&args.paths) {
        Ok(f) => f,
        Err(e) => {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let mut inputs = Vec::with_capacity(files.len());
    for path in &files {
        match read_spec(path) {
            Ok(read) => inputs.push((path, read)),
            Err(status) => return status,
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
        .map_init(PartsCache::default, |parts, (path, read)| {
            let bytes = match read {
                Ok(bytes) => bytes,
                Err(refused) => return vec![refused.clone()],
            };
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
        .chain(std::iter::once(loops))
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
        Format::Json => out!("{}", render_json(&all)),
        Format::Human => {
            err!(
                "{}",
                render_human(&all, terminal::stderr_color(), terminal::width())
            );
            errln!(
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
