//! The whole front end for one file: decode, parse, resolve.

use std::borrow::Cow;
use std::path::Path;
use std::sync::Arc;

use crate::analysis::{self, report::Analysis};
use crate::diagnostics::{Category, Code, Findings, Severity, SourceFile};
use crate::eval::{self, EvalError, Plan};
use crate::model::{self, Chain, PartsCache};
use crate::syntax;

/// A checked spec: its chains (possibly partial when it has errors) and
/// every finding, in report order.
#[derive(Debug, Default)]
pub struct CheckedFile {
    pub file: Option<Arc<SourceFile>>,
    pub chains: Vec<Chain>,
    pub findings: Findings,
    /// The chains resolved without errors, so the analyses ran on them:
    /// any error is theirs (a stage beyond a limit, a sensor outside its
    /// range, a requirement missed) and the chains still evaluate.
    pub resolved: bool,
    /// Per chain, in order, when the check was made for a report
    /// ([`analysis::CheckOptions::keep`]): what it computed, for the
    /// report to reuse instead of lowering and analysing again.
    pub analysed: Vec<Analysed>,
}

/// What the check computed for one chain.
#[derive(Debug, Default)]
pub struct Analysed {
    /// Its evaluation plan, when it lowered with a conversion.
    pub plan: Option<Plan>,
    /// The analysis its requirements were judged on.
    pub analysis: Option<Analysis>,
    /// The fault verdicts and maskings its fault findings came from.
    pub faults: Option<analysis::faults::FaultCheck>,
    /// The range envelopes its limit findings came from, at the check's
    /// points.
    pub envelopes: Option<Vec<analysis::ranges::Envelope>>,
}

impl CheckedFile {
    /// What the check computed for `chain`, one of [`CheckedFile::chains`].
    pub fn analysed(&self, chain: &Chain) -> Option<&Analysed> {
        let index = self.chains.iter().position(|c| std::ptr::eq(c, chain))?;
        self.analysed.get(index)
    }

    /// `chain`'s plan: the check's, or lowered now where it kept none.
    pub fn plan(&self, chain: &Chain) -> Result<Cow<'_, Plan>, EvalError> {
        match self.analysed(chain).and_then(|a| a.plan.as_ref()) {
            Some(plan) => Ok(Cow::Borrowed(plan)),
            None => eval::lower(chain).map(Cow::Owned),
        }
    }

    /// The fault verdicts the check judged `chain`'s faults on.
    pub fn faults(&self, chain: &Chain) -> Option<&analysis::faults::FaultCheck> {
        self.analysed(chain)?.faults.as_ref()
    }

    /// The range envelopes the check followed for `chain`'s limits, at
    /// the check's points.
    pub fn envelopes(&self, chain: &Chain) -> Option<&[analysis::ranges::Envelope]> {
        self.analysed(chain)?.envelopes.as_deref()
    }

    /// The analysis `chain`'s requirements were judged on, for a report to
    /// start from.
    pub fn analysis(&self, chain: &Chain) -> Option<Analysis> {
        self.analysed(chain)?.analysis.clone()
    }
}

/// Checks a spec given as bytes. `name` is how findings show the file;
/// `base` is the folder `use` paths resolve against.
pub fn check_bytes(name: &str, bytes: &[u8], base: &Path, parts: &mut PartsCache) -> CheckedFile {
    check_bytes_with(name, bytes, base, parts, &analysis::CheckOptions::default())
}

/// [`check_bytes`] with the analyses' options.
pub fn check_bytes_with(
    name: &str,
    bytes: &[u8],
    base: &Path,
    parts: &mut PartsCache,
    options: &analysis::CheckOptions,
) -> CheckedFile {
    let defaults = model::Defaults::default();
    check_bytes_configured(name, bytes, base, parts, options, &defaults)
}

/// [`check_bytes_with`] with what a configuration file supplies.
pub fn check_bytes_configured(
    name: &str,
    bytes: &[u8],
    base: &Path,
    parts: &mut PartsCache,
    options: &analysis::CheckOptions,
    defaults: &model::Defaults,
) -> CheckedFile {
    let file = match syntax::decode(name, bytes) {
        Ok(f) => f,
        Err(finding) => {
            let mut findings = Findings::new();
            findings.push(finding);
            return unresolved(None, findings);
        }
    };
    let (ast, mut findings) = syntax::parse(&file);
    if ast.chains.is_empty() && !findings.has_errors() {
        findings.push(no_chain(&file));
    }
    if findings.has_errors() && ast.chains.is_empty() {
        return unresolved(Some(file), findings);
    }
    let root = (!options.allow_outside_paths).then(|| model::confinement_root(base));
    let (chains, more) = model::resolve_with(&file, &ast, base, root.as_deref(), parts, defaults);
    add_unechoed(&file, &mut findings, more);
    let resolved = !findings.has_errors();
    let analysed = if resolved {
        analyse_chains(&chains, options, &mut findings)
    } else {
        Vec::new()
    };
    CheckedFile {
        file: Some(file),
        chains,
        findings,
        resolved,
        analysed,
    }
}

/// A file that stopped before its chains were resolved.
fn unresolved(file: Option<Arc<SourceFile>>, findings: Findings) -> CheckedFile {
    CheckedFile {
        file,
        chains: Vec::new(),
        findings,
        resolved: false,
        analysed: Vec::new(),
    }
}

/// Adds the model's findings (`more`) to the parser's, but for echoes of
/// a syntax error.
fn add_unechoed(file: &Arc<SourceFile>, findings: &mut Findings, more: Findings) {
    let syntax_failed = findings.has_errors();
    // A line with a syntax finding gets only that finding: what the later
    // stages say about the same line (a number read as 0, a value missing)
    // would echo it.
    let syntax_lines: Vec<usize> = findings
        .iter()
        .filter(|f| f.severity() == Severity::Error)
        .map(|f| file.line_column(f.primary_offset()).0)
        .collect();
    for f in more {
        // A line the parser swallowed is missing from the graph, so graph
        // findings would be echoes of the syntax error; the other checks
        // are local to their line and still stand.
        let echo =
            f.code.category() == Category::Graph || matches!(f.code, Code::P302 | Code::P307);
        let same_line = Arc::ptr_eq(&f.file, file)
            && syntax_lines.contains(&file.line_column(f.primary_offset()).0);
        let suppressed = same_line || (syntax_failed && echo);
        if !suppressed {
            findings.push(f);
        }
    }
}

/// Checks each chain, keeping what `options.keep` asks for.
fn analyse_chains(
    chains: &[model::Chain],
    options: &analysis::CheckOptions,
    findings: &mut Findings,
) -> Vec<Analysed> {
    let mut analysed = Vec::new();
    for chain in chains {
        let checked = analysis::check_chain(chain, options);
        findings.extend(checked.findings);
        if options.keep != analysis::Keep::Nothing {
            analysed.push(Analysed {
                plan: checked.plan,
                analysis: checked.analysis,
                faults: checked.faults,
                envelopes: checked.envelopes,
            });
        }
    }
    analysed
}

/// Checks spec text (tests, stdin).
pub fn check_str(name: &str, text: &str) -> CheckedFile {
    check_bytes(
        name,
        text.as_bytes(),
        Path::new("."),
        &mut PartsCache::default(),
    )
}

/// S014: a spec without a chain checks nothing, so passing it would tell
/// CI that something was verified when nothing was (an emptied file, a
/// merge that kept only comments).
fn no_chain(file: &Arc<SourceFile>) -> crate::diagnostics::Finding {
    let text = file.text();
    let message = if text.trim().is_empty() {
        "the file is empty: it declares no chain"
    } else {
        "the file declares no chain: there is nothing to check"
    };
    let end = text.find('\n').unwrap_or(text.len());
    crate::diagnostics::Finding::new(Code::S014, file, message)
        .label(
            crate::diagnostics::Span::new(0, end),
            "no `chain` in this file",
        )
        .help(
            "write the chain (`chain name { ... }`), or delete the file if it is no longer a spec",
        )
}
