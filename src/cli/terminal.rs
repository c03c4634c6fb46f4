use std::io::IsTerminal;

/// Colour only for a terminal, and never when `NO_COLOR` is set
/// (no-color.org: any non-empty value).
pub fn use_color(stream_is_terminal: bool) -> bool {
    let no_color = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
    stream_is_terminal && !no_color
}

pub fn stderr_color() -> bool {
    use_color(std::io::stderr().is_terminal())
}

/// Wrap width for rendered findings: the terminal's `COLUMNS` if set, else
/// a fixed width so output is the same everywhere.
pub fn width() -> usize {
    std::env::var("COLUMNS")
        .ok()
        .and_then(|c| c.parse().ok())
        .filter(|&w: &usize| (40..=400).contains(&w))
        .unwrap_or(100)
}
