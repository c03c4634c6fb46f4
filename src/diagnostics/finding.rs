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
}

impl Finding {
    pub fn new(code: Code, file: &Arc<SourceFile>, message: impl Into<String>) -> Self {
        Self {
            code,
            message: message.into(),
            file: Arc::clone(file),
            labels: Vec::new(),
            help: None,
        }
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
        self.code.severity()
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
        Some(match self.code.severity() {
            Severity::Error => miette::Severity::Error,
            Severity::Warning => miette::Severity::Warning,
        })
    }

    fn help<'a>(&'a self) -> Option<Box<dyn fmt::Display + 'a>> {
        let help = self.help.as_deref();
        let explain = format!("run `catena explain {}` for more", self.code.as_str());
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
