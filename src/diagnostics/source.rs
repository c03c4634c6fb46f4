use std::sync::Arc;

/// A byte range in one source file.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
pub struct Span {
    pub start: usize,
    pub end: usize,
}

impl Span {
    pub fn new(start: usize, end: usize) -> Self {
        Self { start, end }
    }

    pub fn len(&self) -> usize {
        self.end.saturating_sub(self.start)
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The smallest span covering both.
    pub fn to(self, other: Span) -> Span {
        Span::new(self.start.min(other.start), self.end.max(other.end))
    }

    pub fn shifted(self, by: usize) -> Span {
        Span::new(self.start + by, self.end + by)
    }
}

impl From<Span> for miette::SourceSpan {
    fn from(span: Span) -> Self {
        (span.start, span.len()).into()
    }
}

/// A file as read: the name shown to the user and its text. Shared, because
/// every finding keeps the file it points into.
#[derive(Debug, PartialEq, Eq)]
pub struct SourceFile {
    name: String,
    text: String,
    line_starts: Vec<usize>,
    /// A `\r` not followed by `\n` ends a line for the renderer but not in
    /// `line_starts`, so excerpts of such a file are cut from the whole text.
    lone_cr: bool,
}

impl SourceFile {
    pub fn new(name: impl Into<String>, text: impl Into<String>) -> Arc<Self> {
        let text = text.into();
        let line_starts = std::iter::once(0)
            .chain(text.match_indices('\n').map(|(i, _)| i + 1))
            .collect();
        let lone_cr = text
            .as_bytes()
            .windows(2)
            .any(|w| w[0] == b'\r' && w[1] != b'\n')
            || text.ends_with('\r');
        Arc::new(Self {
            name: name.into(),
            text,
            line_starts,
            lone_cr,
        })
    }

    pub fn name(&self) -> &str {
        &self.name
    }

    pub fn text(&self) -> &str {
        &self.text
    }

    /// The zero-based line a byte offset is on.
    fn line_of(&self, offset: usize) -> usize {
        let offset = offset.min(self.text.len());
        self.line_starts.partition_point(|&s| s <= offset) - 1
    }

    /// One-based line and column (in characters) of a byte offset.
    pub fn line_column(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let line = self.line_starts.partition_point(|&s| s <= offset) - 1;
        let start = self.line_starts[line];
        let column = self
            .text
            .get(start..offset)
            .map(|s| s.chars().count())
            .unwrap_or(offset - start);
        (line + 1, column + 1)
    }

    /// `span` inside the text and on character boundaries: the start moved
    /// back and the end forward to the nearest boundary.
    pub fn snap(&self, span: Span) -> Span {
        let text = &self.text;
        let mut start = span.start.min(text.len());
        while !text.is_char_boundary(start) {
            start -= 1;
        }
        let mut end = span.end.clamp(start, text.len());
        while !text.is_char_boundary(end) {
            end += 1;
        }
        Span::new(start, end)
    }

    pub fn slice(&self, span: Span) -> &str {
        self.text.get(span.start..span.end).unwrap_or("")
    }
}

impl miette::SourceCode for SourceFile {
    fn read_span<'a>(
        &'a self,
        span: &miette::SourceSpan,
        context_lines_before: usize,
        context_lines_after: usize,
    ) -> Result<Box<dyn miette::SpanContents<'a> + 'a>, miette::MietteError> {
        // The excerpt is cut from a window of whole lines around the span,
        // found through `line_starts`: the renderer's own search walks the
        // text from its start, which made rendering every finding of a
        // large file quadratic. Offsets and lines are shifted back.
        let (window_start, first_line) = if self.lone_cr {
            (0, 0)
        } else {
            let line = self.line_of(span.offset());
            let first = line.saturating_sub(context_lines_before + 1);
            (self.line_starts[first], first)
        };
        let window_end = if self.lone_cr {
            self.text.len()
        } else {
            let end_line = self.line_of(span.offset() + span.len());
            self.line_starts
                .get(end_line + context_lines_after + 2)
                .copied()
                .unwrap_or(self.text.len())
        };
        let window = &self.text[window_start..window_end];
        let local = miette::SourceSpan::new(
            span.offset().saturating_sub(window_start).into(),
            span.len(),
        );
        let inner = window.read_span(&local, context_lines_before, context_lines_after)?;
        let at = *inner.span();
        Ok(Box::new(miette::MietteSpanContents::new_named(
            self.name.clone(),
            inner.data(),
            miette::SourceSpan::new((at.offset() + window_start).into(), at.len()),
            inner.line() + first_line,
            inner.column(),
            inner.line_count() + first_line,
        )))
    }
}
