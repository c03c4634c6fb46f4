use std::fmt;
use std::sync::Arc;

use super::code::{Code, Severity};
use super::source::{SourceFile, Span};

/// A labelled place in the file a finding points into.
#[derive(Clone, Debug, PartialEq)]
pub struct Label {
    pub span: Span,
    pub text: String,
}

/// One diagnostic: a stable code, a lowercase one-line message, labelled
/// spans for every place involved and a help line that says what fixes it.
#[derive(Clone, Debug)]
pub struct Finding {
    pub code: Code,
    pub message: String,
    pub file: Arc<SourceFile>,
    /// The first label is the primary place.
    pub labels: Vec<Label>,
    pub help: Option<String>,
    /// The finding this one follows from, if it is a consequence: it is
    /// reported right after its cause, and says so.
    /// Boxed: most findings have none, and a `Finding` travels in `Err`.
    pub cause: Option<Box<Cause>>,
    /// A configuration's severity for this code, when it sets one.
    pub severity_override: Option<Severity>,
}

/// Which finding caused another: its code and primary place.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Cause {
    pub code: Code,
    pub file: String,
    pub offset: usize,
    /// 1-based, for messages.
    pub line: usize,
}

impl Cause {
    pub fn of(f: &Finding) -> Cause {
        let offset = f.primary_offset();
        Cause {
            code: f.code,
            file: f.file.name().to_string(),
            offset,
            line: f.file.line_column(offset).0,
        }
    }

    /// Whether `f` is the finding this cause names.
    pub fn is(&self, f: &Finding) -> bool {
        f.code == self.code && f.primary_offset() == self.offset && f.file.name() == self.file
    }
}

impl Finding {
    pub fn new(code: Code, file: &Arc<SourceFile>, message: impl Into<String>) -> Self {
        Self {
            code,
            message: message.into(),
            file: Arc::clone(file),
            labels: Vec::new(),
            help: None,
            cause: None,
            severity_override: None,
        }
    }

    /// Marks this finding as a consequence of `cause`, when there is one.
    pub fn caused_by(mut self, cause: Option<Cause>) -> Self {
        self.cause = cause.map(Box::new);
        self
    }

    pub fn label(mut self, span: Span, text: impl Into<String>) -> Self {
        self.labels.push(Label {
            span,
            text: text.into(),
        });
        self
    }

    pub fn help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    pub fn severity(&self) -> Severity {
        self.severity_override.unwrap_or(self.code.severity())
    }

    pub fn primary_span(&self) -> Option<Span> {
        self.labels.first().map(|l| l.span)
    }

    pub fn primary_offset(&self) -> usize {
        self.primary_span().map(|s| s.start).unwrap_or(0)
    }
}

impl fmt::Display for Finding {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for Finding {}

impl miette::Diagnostic for Finding {
    fn code<'a>(&'a self) -> Option<Box<dyn fmt::Display + 'a>> {
        Some(Box::new(self.code.as_str()))
    }

    fn severity(&self) -> Option<miette::Severity> {
        Some(match Finding::severity(self) {
            Severity::Error => miette::Severity::Error,
            Severity::Warning => miette::Severity::Warning,
        })
    }

    fn help<'a>(&'a self) -> Option<Box<dyn fmt::Display + 'a>> {
        let help = self.help.as_deref();
        let mut explain = format!("run `catena explain {}` for more", self.code.as_str());
        if let Some(c) = &self.cause {
            explain = format!(
                "this follows from {} on line {}: fix that first\n{explain}",
                c.code.as_str(),
                c.line
            );
        }
        Some(Box::new(match help {
            Some(h) => format!("{h}\n{explain}"),
            None => explain,
        }))
    }

    fn source_code(&self) -> Option<&dyn miette::SourceCode> {
        Some(&*self.file)
    }

    fn labels(&self) -> Option<Box<dyn Iterator<Item = miette::LabeledSpan> + '_>> {
        if self.labels.is_empty() {
            return None;
        }
        Some(Box::new(self.labels.iter().enumerate().map(|(i, l)| {
            let text = (!l.text.is_empty()).then(|| l.text.clone());
            if i == 0 {
                miette::LabeledSpan::new_primary_with_span(text, l.span)
            } else {
                miette::LabeledSpan::new_with_span(text, l.span)
            }
        })))
    }
}
