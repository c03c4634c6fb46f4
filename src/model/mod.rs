//! Name resolution and checking: settings, stages against the schema,
//! parts libraries, and the graph of typed ports.

mod chain;
pub(crate) mod channels;
mod graph;
mod interpret;
pub mod parts;
mod parts_positions;
pub mod ports;
pub mod requirement;
mod scan;
pub mod schema;
mod settings;
mod stage;
pub mod track;
pub mod typed;
pub mod value;

use std::collections::HashMap;
use std::path::Path;
use std::sync::Arc;

pub use chain::{
    Alarm, Bill, Chain, Connection, Measurand, Protects, Requirement, Stage, TrackGroup,
    TrackMember,
};
pub use graph::output_signals;
pub use parts::PartsCache;
pub use requirement::{AccuracyMethod, RequirementKind};
pub use settings::DEFAULT_REFERENCE_K;
pub use typed::Side;

use crate::diagnostics::{backticked, did_you_mean_or, Code, Finding, Findings, SourceFile};
use crate::syntax::ast::{ChainDecl, Ident, StageDecl, UseDecl};
use crate::syntax::Ast;

/// What a spec leaves unsaid and a configuration file supplies: the
/// ambient and reference of a chain that states none, and parts files
/// every spec uses besides its own `use` lines.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Defaults {
    /// Kelvin.
    pub ambient: Option<(f64, f64)>,
    /// Kelvin.
    pub reference: Option<f64>,
    /// Each file's path and the name its findings show.
    pub parts: Vec<(std::path::PathBuf, String)>,
}

/// Resolves every chain of a parsed file. `base` is the spec's folder,
/// against which `use` paths resolve.
///
/// `root`, when given, confines `use` paths: a parts file must lie inside
/// it (the spec's repository, or its folder outside one).
pub fn resolve(
    file: &Arc<SourceFile>,
    ast: &Ast,
    base: &Path,
    root: Option<&Path>,
    parts: &mut PartsCache,
) -> (Vec<Chain>, Findings) {
    resolve_with(file, ast, base, root, parts, &Defaults::default())
}

/// [`resolve`] with what a configuration supplies.
pub fn resolve_with(
    file: &Arc<SourceFile>,
    ast: &Ast,
    base: &Path,
    root: Option<&Path>,
    parts: &mut PartsCache,
    defaults: &Defaults,
) -> (Vec<Chain>, Findings) {
    let mut findings = Findings::new();
    let library = Library::load(file, ast, base, root, parts, defaults, &mut findings);
    let mut chains: Vec<Chain> = Vec::new();
    // Names seen so far, to their index: one lookup each, not a rescan.
    let mut chain_names: HashMap<String, usize> = Default::default();
    for decl in &ast.chains {
        if let Some(first) = chain_names.get(&decl.name.name).map(|&k| &chains[k]) {
            findings.push(
                Finding::new(
                    Code::M209,
                    file,
                    format!("two chains are named `{}`", decl.name.name),
                )
                .label(decl.name.span, "second chain")
                .label(first.name_span, "first chain")
                .help("give each chain of a file its own name"),
            );
        }
        let chain = resolve_chain(file, ast, decl, &library, defaults, &mut findings);
        chain_names
            .entry(decl.name.name.clone())
            .or_insert(chains.len());
        chains.push(chain);
    }
    (chains, findings)
}

/// The parts every chain of a file may name: its `use` files', then the
/// configured ones.
struct Library {
    parts: Vec<parts::Part>,
    /// Parts by name (the first of a repeated name, as a scan finds it).
    index: HashMap<String, usize>,
    /// A part missing from a library that failed to load is not a
    /// finding of its own: the library's finding says why.
    broken: bool,
}

impl Library {
    fn load(
        file: &Arc<SourceFile>,
        ast: &Ast,
        base: &Path,
        root: Option<&Path>,
        cache: &mut PartsCache,
        defaults: &Defaults,
        findings: &mut Findings,
    ) -> Library {
        let mut library = Library {
            parts: Vec::new(),
            index: HashMap::new(),
            broken: false,
        };
        for u in &ast.uses {
            library.load_used(file, u, base, root, cache, findings);
        }
        // The configured libraries come after the spec's own, so a part the
        // spec's `use` names first wins.
        for (path, shown) in &defaults.parts {
            let loaded = cache.load(path, shown);
            for f in loaded.findings.iter() {
                findings.push(f.clone());
            }
            library.add(&loaded);
        }
        for (k, part) in library.parts.iter().enumerate() {
            library.index.entry(part.name.clone()).or_insert(k);
        }
        library
    }

    /// One `use` line's file, confined to `root` when given.
    fn load_used(
        &mut self,
        file: &Arc<SourceFile>,
        u: &UseDecl,
        base: &Path,
        root: Option<&Path>,
        cache: &mut PartsCache,
        findings: &mut Findings,
    ) {
        let path = base.join(&u.path.value);
        if root.is_some_and(|root| !confined(&path, root)) {
            findings.push(
                Finding::new(Code::L407, file, format!("`{}` is outside the spec's repository", u.path.value))
                    .label(u.path.span, "outside")
                    // No absolute path in the message: findings must read
                    // the same in every checkout.
                    .help("keep parts files inside the spec's repository (the folder that holds `.git`, or the spec's own folder outside one), or run with `--allow-outside-paths` if this file is meant"),
            );
            self.broken = true;
            return;
        }
        let shown = shown_path(file.name(), &u.path.value);
        let loaded = cache.load(&path, &shown);
        // Every spec that uses a broken library reports it; the run
        // keeps one copy of each finding in a parts file.
        for f in loaded.findings.iter() {
            let mut f = f.clone();
            if f.labels.is_empty() {
                // A file that could not be read has nothing to point at:
                // point at the `use` line instead.
                f = Finding {
                    file: Arc::clone(file),
                    ..f
                }
                .label(u.path.span, "used here");
            }
            findings.push(f);
        }
        self.add(&loaded);
    }

    fn add(&mut self, loaded: &parts::Loaded) {
        self.broken |= loaded.findings.has_errors();
        self.parts.extend(loaded.parts.iter().cloned());
    }

    fn get(&self, name: &str) -> Option<&parts::Part> {
        self.index.get(name).map(|&k| &self.parts[k])
    }
}

fn resolve_chain(
    file: &Arc<SourceFile>,
    ast: &Ast,
    decl: &ChainDecl,
    library: &Library,
    defaults: &Defaults,
    findings: &mut Findings,
) -> Chain {
    let settings = settings::resolve(file, decl, findings);
    let mut stages = resolve_stages(
        file,
        ast,
        decl,
        library,
        settings.measurand.as_ref(),
        findings,
    );
    graph::check_references(&stages, findings);
    let connections = graph::connect(file, &mut stages, &decl.edges, findings);
    channels::resolve(file, &mut stages, &connections, findings);
    channels::check_combinations(file, &stages, &connections, findings);
    let reference = settings
        .reference
        .or(defaults.reference)
        .unwrap_or(DEFAULT_REFERENCE_K);
    let groups = track::resolve(file, &decl.tracks, &stages, findings);
    Chain {
        name: decl.name.name.clone(),
        name_span: decl.name.span,
        label: decl.label.as_ref().map(|l| l.value.clone()),
        title: settings.title,
        file: Arc::clone(file),
        measurand: settings.measurand,
        ambient: settings
            .ambient
            .or(defaults.ambient)
            .unwrap_or((reference, reference)),
        reference,
        requirements: settings.requirements,
        alarms: settings.alarms,
        protects: settings.protects,
        stages,
        connections,
        groups,
    }
}

/// Each stage of a chain with its part; a repeated name is M201 and
/// keeps only the first.
fn resolve_stages(
    file: &Arc<SourceFile>,
    ast: &Ast,
    decl: &ChainDecl,
    library: &Library,
    measurand: Option<&Measurand>,
    findings: &mut Findings,
) -> Vec<Stage> {
    let mut stages: Vec<Stage> = Vec::new();
    let mut stage_names: HashMap<String, usize> = Default::default();
    for s in &decl.stages {
        if let Some(first) = stage_names.get(&s.name.name).map(|&k| &stages[k]) {
            findings.push(
                Finding::new(
                    Code::M201,
                    file,
                    format!("two stages are named `{}`", s.name.name),
                )
                .label(s.name.span, "second stage")
                .label(first.name_span, "first stage")
                .help("stage names are unique within a chain; rename one"),
            );
            continue;
        }
        let (part, part_failed) = stage_part(file, ast, library, s, findings);
        stage_names.insert(s.name.name.clone(), stages.len());
        stages.push(stage::resolve(
            file,
            s,
            part,
            part_failed,
            measurand,
            findings,
        ));
    }
    stages
}

/// The part a stage names, and whether naming it failed (unknown, of
/// another kind, or rejected itself).
fn stage_part<'a>(
    file: &Arc<SourceFile>,
    ast: &Ast,
    library: &'a Library,
    s: &StageDecl,
    findings: &mut Findings,
) -> (Option<&'a parts::Part>, bool) {
    let Some(p) = s.part.as_ref() else {
        return (None, false);
    };
    match library.get(p.name.as_str()) {
        None => {
            if !library.broken {
                findings.push(unknown_part(file, ast, &library.parts, p));
            }
            (None, true)
        }
        Some(part) if part.kind != s.kind => {
            findings.push(wrong_kind(file, p, part, s));
            (None, true)
        }
        Some(part) => (Some(part), part.rejected),
    }
}

/// L404: a part of another kind than the stage naming it.
fn wrong_kind(file: &Arc<SourceFile>, p: &Ident, part: &parts::Part, s: &StageDecl) -> Finding {
    let (theirs, ours) = (part.kind.keyword(), s.kind.keyword());
    Finding::new(
        Code::L404,
        file,
        format!(
            "part `{}` is {} {theirs}, not {} {ours}",
            p.name,
            article(theirs),
            article(ours),
        ),
    )
    .label(p.span, format!("{} {theirs} part", article(theirs)))
    .label(s.kind_span, format!("{} {ours} stage", article(ours)))
    .help(format!(
        "use {} {ours} part here, or change the part's `kind`",
        article(ours)
    ))
}

/// Whether `path` (resolved through symbolic links where it exists) lies
/// inside `root`.
pub fn confined(path: &Path, root: &Path) -> bool {
    let root = std::fs::canonicalize(root).unwrap_or_else(|_| root.to_path_buf());
    let resolved = match std::fs::canonicalize(path) {
        Ok(p) => p,
        // A missing file is reported as unreadable; judge its lexical path.
        Err(_) => lexical(path),
    };
    resolved.starts_with(&root)
}

fn lexical(path: &Path) -> std::path::PathBuf {
    let absolute = if path.is_absolute() {
        path.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(path)
    };
    let mut out = std::path::PathBuf::new();
    for part in absolute.components() {
        match part {
            std::path::Component::ParentDir => {
                out.pop();
            }
            std::path::Component::CurDir => {}
            other => out.push(other),
        }
    }
    out
}

/// The folder `use` paths are confined to: the nearest enclosing git
/// repository of the spec's folder, or that folder outside one.
pub fn confinement_root(base: &Path) -> std::path::PathBuf {
    let start = std::fs::canonicalize(base).unwrap_or_else(|_| lexical(base));
    start
        .ancestors()
        .find(|a| a.join(".git").exists())
        .map(Path::to_path_buf)
        .unwrap_or(start)
}

pub(crate) fn article(word: &str) -> &'static str {
    if word.starts_with(['a', 'e', 'i', 'o', 'u']) {
        "an"
    } else {
        "a"
    }
}

fn unknown_part(
    file: &Arc<SourceFile>,
    ast: &Ast,
    library: &[parts::Part],
    p: &crate::syntax::ast::Ident,
) -> Finding {
    // Configured libraries count as loaded parts files too.
    if ast.uses.is_empty() && library.is_empty() {
        return Finding::new(
            Code::L406,
            file,
            format!("part `{}` is used but no parts file is loaded", p.name),
        )
        .label(p.span, "from which library?")
        .help("add `use \"parts.yaml\"` at the top of the file");
    }
    let names = || library.iter().map(|l| l.name.as_str());
    Finding::new(Code::L403, file, format!("no part is named `{}`", p.name))
        .label(p.span, "unknown part")
        .help(did_you_mean_or(&p.name, names(), || {
            format!("the loaded parts are {}", backticked(names()))
        }))
}

/// A parts file's name as shown in findings: beside the spec's own name.
fn shown_path(spec: &str, used: &str) -> String {
    match Path::new(spec).parent() {
        Some(dir) if !dir.as_os_str().is_empty() => dir.join(used).to_string_lossy().into_owned(),
        _ => used.to_string(),
    }
}
