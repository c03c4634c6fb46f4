use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use super::files::{collect_reporting, plain_io, read_spec};
use super::settings::{self, describe, Configs};
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::report::MAX_TRIALS;
use crate::analysis::CheckOptions;
use crate::check::check_bytes_configured;
use crate::config::Config;
use crate::diagnostics::{
    render_github, render_human, render_json, render_sarif, render_short, Finding, Severity,
};
use crate::model::PartsCache;
use rayon::prelude::*;

#[derive(Args, Debug)]
pub struct CheckArgs {
    /// Spec files, or folders to search for `*.catena`; `-` reads a spec
    /// from standard input.
    #[arg(required = true)]
    paths: Vec<PathBuf>,
    /// The name standard input's findings show; its folder is where `use`
    /// paths start.
    #[arg(long, value_name = "PATH")]
    stdin_filename: Option<PathBuf>,
    /// Only the findings: no summary line.
    #[arg(short, long)]
    quiet: bool,
    /// How findings are written: for people, or for tools (JSON, SARIF
    /// 2.1.0, CI workflow commands, or one `file:line:col:` line each).
    #[arg(long, value_enum, default_value_t = CheckFormat::Human)]
    format: CheckFormat,
    /// Treat warnings as errors for the exit status.
    #[arg(long, value_enum)]
    deny: Vec<Deny>,
    /// Warn when a signal keeps less headroom than this, in % of the
    /// limit's span [default: catena.yaml's `margin`, else 5].
    #[arg(long, value_parser = parse_margin)]
    margin: Option<f64>,
    /// Run Monte Carlo for every chain, not only where a requirement asks.
    #[arg(long)]
    monte_carlo: bool,
    /// Monte Carlo trials per point, where it runs [default: catena.yaml's
    /// `monte_carlo.trials`, else 10000].
    #[arg(long, value_parser = clap::value_parser!(u64).range(1..=MAX_TRIALS as u64))]
    trials: Option<u64>,
    /// Let `use` read parts files outside the spec's repository.
    #[arg(long)]
    allow_outside_paths: bool,
    /// Show the settings that apply to the specs and where each comes
    /// from (flag, catena.yaml, default), then stop.
    #[arg(long)]
    print_config: bool,
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

/// One spec to check: the name findings show, the folder its `use` paths
/// start from, and its bytes.
struct Input {
    name: String,
    base: PathBuf,
    bytes: Vec<u8>,
    /// Not read: the finding that says why (not a regular file, a folder
    /// link loop).
    refused: Option<Finding>,
}

/// The folder a spec's relative paths start from.
fn folder_of(path: &Path) -> PathBuf {
    path.parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."))
        .to_path_buf()
}

/// Every spec named: `-` is standard input (named by `--stdin-filename`),
/// folders are searched. A usage problem is reported and its status given.
fn read_inputs(args: &CheckArgs) -> Result<Vec<Input>, u8> {
    let stdin_count = args.paths.iter().filter(|p| p.as_os_str() == "-").count();
    if stdin_count > 1 {
        errln!("catena: `-` (standard input) can be named only once");
        return Err(EXIT_USAGE);
    }
    if stdin_count == 0 && args.stdin_filename.is_some() {
        errln!("catena: --stdin-filename names standard input, given as `-`");
        return Err(EXIT_USAGE);
    }
    let mut inputs = Vec::new();
    for path in &args.paths {
        if path.as_os_str() == "-" {
            inputs.push(read_stdin(args.stdin_filename.as_deref())?);
            continue;
        }
        let (files, loops) = collect_reporting(std::slice::from_ref(path)).map_err(|e| {
            errln!("catena: {e}");
            EXIT_USAGE
        })?;
        for file in files {
            let (bytes, refused) = match read_spec(&file)? {
                Ok(bytes) => (bytes, None),
                Err(finding) => (Vec::new(), Some(finding)),
            };
            inputs.push(Input {
                name: file.to_string_lossy().into_owned(),
                base: folder_of(&file),
                bytes,
                refused,
            });
        }
        for finding in loops {
            inputs.push(Input {
                name: finding.file.name().to_string(),
                base: PathBuf::from("."),
                bytes: Vec::new(),
                refused: Some(finding),
            });
        }
    }
    Ok(inputs)
}

fn read_stdin(name: Option<&Path>) -> Result<Input, u8> {
    let bytes = match crate::input::read_stdin_limited(crate::syntax::MAX_SOURCE_BYTES) {
        Ok(bytes) => bytes,
        Err(e) => {
            errln!("catena: cannot read standard input: {}", plain_io(&e));
            return Err(EXIT_USAGE);
        }
    };
    Ok(match name {
        Some(path) => Input {
            name: path.to_string_lossy().into_owned(),
            base: folder_of(path),
            bytes,
            refused: None,
        },
        None => Input {
            name: "<stdin>".into(),
            base: PathBuf::from("."),
            bytes,
            refused: None,
        },
    })
}

/// The analyses' options for specs under `config`: flags first.
fn options_for(args: &CheckArgs, config: &Config) -> CheckOptions {
    let (margin, trials, _) = settings_for(args, config);
    CheckOptions {
        monte_carlo: args.monte_carlo,
        trials: trials.value,
        // Zero would mean the default; a tiny positive value means none.
        margin: margin.value.max(1e-12),
        allow_outside_paths: args.allow_outside_paths,
        seed: config.seed.as_ref().map(|s| s.value),
        ..CheckOptions::default()
    }
}

type Settings = (
    super::settings::Applied<f64>,
    super::settings::Applied<usize>,
    super::settings::Applied<u64>,
);

fn settings_for(args: &CheckArgs, config: &Config) -> Settings {
    (
        settings::margin(args.margin, config),
        settings::trials(args.trials.map(|t| t as usize), config),
        // `check` takes no seed flag.
        settings::seed(None, config),
    )
}

/// `--print-config`: each configuration that applies to the inputs, once.
fn print_config(args: &CheckArgs, inputs: &[Input], configs: &mut Configs) -> u8 {
    let mut shown: Vec<Option<String>> = Vec::new();
    for input in inputs {
        let config = configs.for_folder(&input.base);
        let name = config.file.as_ref().map(|f| f.name().to_string());
        if shown.contains(&name) {
            continue;
        }
        let (margin, trials, seed) = settings_for(args, &config);
        out!("{}", describe(&config, &margin, &trials, &seed));
        shown.push(name);
    }
    let found = configs.findings();
    if found.is_empty() {
        return EXIT_OK;
    }
    err!(
        "{}",
        render_human(&found, terminal::stderr_color(), terminal::width())
    );
    if found.iter().any(|f| f.severity() == Severity::Error) {
        EXIT_FINDINGS
    } else {
        EXIT_OK
    }
}

pub fn run(args: CheckArgs) -> u8 {
    let inputs = match read_inputs(&args) {
        Ok(i) => i,
        Err(status) => return status,
    };
    let mut configs = Configs::default();
    if args.print_config {
        return print_config(&args, &inputs, &mut configs);
    }
    let configured: Vec<_> = inputs.iter().map(|i| configs.for_folder(&i.base)).collect();
    // Files are independent: check them on every core, gather in order.
    let per_file: Vec<Vec<Finding>> = inputs
        .par_iter()
        .zip(configured.par_iter())
        .map_init(PartsCache::default, |parts, (input, config)| {
            if let Some(refused) = &input.refused {
                return vec![refused.clone()];
            }
            let options = options_for(&args, config);
            let checked = check_bytes_configured(
                &input.name,
                &input.bytes,
                &input.base,
                parts,
                &options,
                &config.defaults(),
            );
            config.apply(checked.findings.sorted())
        })
        .collect();
    // A mistake in a configuration comes first: it changes what follows.
    let all = dedup(
        std::iter::once(configs.findings())
            .chain(per_file)
            .collect(),
    );
    let errors = all
        .iter()
        .filter(|f| f.severity() == Severity::Error)
        .count();
    let warnings = all.len() - errors;
    print_findings(&args, &all);
    if args.format == CheckFormat::Human && !args.quiet {
        errln!(
            "checked {} file{}: {} error{}, {} warning{}",
            inputs.len(),
            plural(inputs.len()),
            errors,
            plural(errors),
            warnings,
            plural(warnings)
        );
    }
    let deny_warnings = args.deny.contains(&Deny::Warnings);
    if errors > 0 || (deny_warnings && warnings > 0) {
        EXIT_FINDINGS
    } else {
        EXIT_OK
    }
}

/// A parts file's findings come once, however many specs use it.
fn dedup(per_file: Vec<Vec<Finding>>) -> Vec<Finding> {
    let mut seen = std::collections::HashSet::new();
    per_file
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
        .collect()
}

fn print_findings(args: &CheckArgs, all: &[Finding]) {
    match args.format {
        CheckFormat::Json => out!("{}", render_json(all)),
        CheckFormat::Sarif => out!("{}", render_sarif(all)),
        CheckFormat::Github => out!("{}", render_github(all)),
        CheckFormat::Short => out!("{}", render_short(all)),
        CheckFormat::Human => err!(
            "{}",
            render_human(all, terminal::stderr_color(), terminal::width())
        ),
    }
}

fn plural(n: usize) -> &'static str {
    if n == 1 {
        ""
    } else {
        "s"
    }
}
