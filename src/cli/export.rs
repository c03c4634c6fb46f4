//! `catena export SPEC --lang c|rust|json [-o PATH]`: the firmware's
//! constants for a checked chain.

use std::path::{Path, PathBuf};
use std::process::Command;

use clap::{Args, ValueEnum};

use super::files::{check_one, destination, Destination};
use super::{terminal, EXIT_FINDINGS, EXIT_OK, EXIT_USAGE};
use crate::analysis::eval_finding;
use crate::diagnostics::{backticked, render_human, unknown_word, Findings};
use crate::emit::export::{
    chain_export, render_c, render_json, render_rust, Export, ExportError, Provenance,
};
use crate::model::Chain;

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Lang {
    /// A C99 header and source.
    C,
    /// A Rust module.
    Rust,
    /// A JSON document.
    Json,
}

#[derive(Args, Debug)]
pub struct ExportArgs {
    /// The spec file.
    spec: PathBuf,
    /// The language to write.
    #[arg(long, value_enum)]
    lang: Lang,
    /// The chain to export (every chain of the file by default).
    #[arg(long)]
    chain: Option<String>,
    /// Where to write. For C, required: the header's path, the source
    /// written beside it with `.c` (`-o fw/cold_store` writes
    /// `fw/cold_store.h` and `fw/cold_store.c`). A folder (`-o fw/`,
    /// created if missing) takes files named after the spec. Otherwise
    /// standard output.
    #[arg(short, long)]
    output: Option<PathBuf>,
}

pub fn run(args: ExportArgs) -> u8 {
    let outputs = match outputs(&args) {
        Ok(o) => o,
        Err(e) => {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let checked = match check_one(&args.spec, crate::analysis::Keep::Plans) {
        Ok((c, _)) => c,
        Err(status) => return status,
    };
    if checked.findings.has_errors() {
        let errors = checked.findings.error_count();
        let status = report(checked.findings);
        errln!(
            "catena: no constants written: {} has {errors} error{} (above); the firmware's constants come from a spec that passes `catena check`",
            args.spec.display(),
            if errors == 1 { "" } else { "s" }
        );
        return status;
    }
    let chains = match pick(&checked.chains, args.chain.as_deref()) {
        Ok(c) => c,
        Err(e) => {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    };
    let mut exports = Vec::new();
    for chain in chains {
        match export_chain(&checked, chain) {
            Ok(e) => exports.push(e),
            Err(status) => return status,
        }
    }
    let export = Export {
        source: Provenance {
            path: args.spec.to_string_lossy().replace('\\', "/"),
            revision: revision(&args.spec),
        },
        chains: exports,
    };
    write(&export, args.lang, &outputs)
}

/// One chain's export, or the status its failure earns (reported), from
/// the plan the check built.
fn export_chain(
    checked: &crate::check::CheckedFile,
    chain: &Chain,
) -> Result<crate::emit::export::ChainExport, u8> {
    let plan = checked.plan(chain).map_err(|e| report_one(chain, &e))?;
    chain_export(chain, &plan).map_err(|e| match e {
        ExportError::Eval(e) => report_one(chain, &e),
        ExportError::Unsupported { stage, input } => {
            errln!(
                "catena: chain `{}`: `{stage}` converts with {input}, which `catena export` does not write yet",
                chain.name
            );
            EXIT_USAGE
        }
    })
}

/// Where each file goes: the header or only file, the source for C, and
/// the folder they go into (created if `-o` named a new one).
struct Files {
    first: PathBuf,
    second: Option<PathBuf>,
    place: Destination,
}

type Outputs = Option<Files>;

fn outputs(args: &ExportArgs) -> Result<Outputs, String> {
    let Some(path) = &args.output else {
        if args.lang == Lang::C {
            return Err("`--lang c` writes a header and a source: name them with `-o PATH` (`-o fw/chain` writes `fw/chain.h` and `fw/chain.c`)".into());
        }
        return Ok(None);
    };
    refuse_spec(path, &args.spec)?;
    let spec_stem = args
        .spec
        .file_stem()
        .map_or("export".to_string(), |s| s.to_string_lossy().into_owned());
    let ext = match args.lang {
        Lang::C => "h",
        Lang::Rust => "rs",
        Lang::Json => "json",
    };
    let place = destination(path, &spec_stem, ext)?;
    let path = &place.file;
    let (first, second) = match args.lang {
        Lang::C => {
            let stem = match path.extension().and_then(|e| e.to_str()) {
                Some("h" | "c") => path.with_extension(""),
                _ => path.clone(),
            };
            let with = |ext: &str| PathBuf::from(format!("{}.{ext}", stem.to_string_lossy()));
            (with("h"), Some(with("c")))
        }
        _ => (path.clone(), None),
    };
    for p in std::iter::once(&first).chain(second.as_ref()) {
        refuse_spec(p, &args.spec)?;
    }
    Ok(Some(Files {
        first,
        second,
        place,
    }))
}

/// A spec is never overwritten by an export: not the one exported, nor
/// any `*.catena` file.
fn refuse_spec(path: &Path, spec: &Path) -> Result<(), String> {
    let same = match (std::fs::canonicalize(path), std::fs::canonicalize(spec)) {
        (Ok(a), Ok(b)) => a == b,
        _ => path == spec,
    };
    if same || path.extension().is_some_and(|e| e == "catena") {
        return Err(format!(
            "refusing to write the export to `{}`: it is a spec; name another file with -o",
            path.display()
        ));
    }
    Ok(())
}

fn write(export: &Export, lang: Lang, outputs: &Outputs) -> u8 {
    let files: Vec<(Option<&PathBuf>, String)> = match (lang, outputs) {
        (
            Lang::C,
            Some(Files {
                first: header,
                second: Some(source),
                ..
            }),
        ) => {
            let name = header
                .file_name()
                .map(|n| n.to_string_lossy().to_string())
                .unwrap_or_default();
            let (h, s) = render_c(export, &name);
            vec![(Some(header), h), (Some(source), s)]
        }
        (Lang::Rust, o) => vec![(o.as_ref().map(|o| &o.first), render_rust(export))],
        (_, o) => vec![(o.as_ref().map(|o| &o.first), render_json(export))],
    };
    if let Some(Err(e)) = outputs.as_ref().map(|o| o.place.prepare()) {
        errln!("catena: {e}");
        return EXIT_USAGE;
    }
    // A header and a source are replaced together or not at all: what
    // would refuse one is found before either is written.
    for path in files.iter().filter_map(|f| f.0) {
        if let Err(e) = writable(path) {
            errln!("catena: {e}");
            return EXIT_USAGE;
        }
    }
    for (path, text) in files {
        match path {
            Some(p) => {
                if let Err(e) = crate::emit::write_atomic(p, text.as_bytes()) {
                    errln!("catena: {e}");
                    return EXIT_USAGE;
                }
            }
            None => out!("{text}"),
        }
    }
    EXIT_OK
}

/// Whether `path` can be written: its folder exists and, when it exists,
/// it is writable (what `write_atomic` would refuse, checked early).
fn writable(path: &Path) -> Result<(), String> {
    let folder = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    if !folder.is_dir() {
        return Err(format!(
            "cannot write `{}`: the folder `{}` does not exist",
            path.display(),
            folder.display()
        ));
    }
    match std::fs::metadata(path) {
        Ok(m) if m.permissions().readonly() => Err(format!(
            "refusing to replace `{}`: it is not writable by you",
            path.display()
        )),
        _ => Ok(()),
    }
}

/// Every chain, or the one named.
fn pick<'a>(chains: &'a [Chain], name: Option<&str>) -> Result<Vec<&'a Chain>, String> {
    let Some(name) = name else {
        return match chains {
            [] => Err("the file has no chain".into()),
            _ => Ok(chains.iter().collect()),
        };
    };
    match chains.iter().find(|c| c.name == name) {
        Some(c) => Ok(vec![c]),
        None => {
            let names = || chains.iter().map(|c| c.name.as_str());
            let otherwise = format!("the chains are {}", backticked(names()));
            Err(unknown_word("chain", name, names(), Some(&otherwise)))
        }
    }
}

/// The commit the spec's repository is at, and whether the spec differs
/// from it; None outside a repository or without `git`.
fn revision(spec: &Path) -> Option<String> {
    let dir = spec
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let git = |args: &[&str]| -> Option<String> {
        let out = Command::new("git")
            .args(args)
            .current_dir(dir)
            .output()
            .ok()?;
        out.status
            .success()
            .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
    };
    let head = git(&["rev-parse", "--short=12", "HEAD"])?;
    let name = spec.file_name()?.to_string_lossy().to_string();
    let status = git(&["status", "--porcelain", "--", &name])?;
    Some(if status.is_empty() {
        head
    } else {
        format!("{head} (with uncommitted changes)")
    })
}

fn report(findings: Findings) -> u8 {
    err!(
        "{}",
        render_human(
            &findings.sorted(),
            terminal::stderr_color(),
            terminal::width()
        )
    );
    EXIT_FINDINGS
}

fn report_one(chain: &Chain, e: &crate::eval::EvalError) -> u8 {
    let mut findings = Findings::new();
    findings.push(eval_finding(chain, e, None));
    report(findings)
}
