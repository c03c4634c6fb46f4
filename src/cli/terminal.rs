use std::io::IsTerminal;
use std::sync::OnceLock;

use clap::ValueEnum;

/// When human output is coloured.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, ValueEnum)]
pub enum ColorChoice {
    /// On a terminal, unless `NO_COLOR` is set; `CLICOLOR_FORCE` forces it.
    #[default]
    Auto,
    Always,
    Never,
}

static CHOICE: OnceLock<ColorChoice> = OnceLock::new();

/// Set once, from `--color`, before any output.
pub fn set_color_choice(choice: ColorChoice) {
    let _ = CHOICE.set(choice);
}

fn env_set(name: &str) -> bool {
    std::env::var_os(name).is_some_and(|v| !v.is_empty() && v != "0")
}

/// The flag wins; then `CLICOLOR_FORCE` (bixense.com/clicolors: any value
/// but `0` forces colour), then `NO_COLOR` (no-color.org: any non-empty
/// value turns it off), then whether the stream is a terminal.
pub fn use_color(stream_is_terminal: bool) -> bool {
    match CHOICE.get().copied().unwrap_or_default() {
        ColorChoice::Always => true,
        ColorChoice::Never => false,
        ColorChoice::Auto if env_set("CLICOLOR_FORCE") => true,
        ColorChoice::Auto => {
            let no_color = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
            stream_is_terminal && !no_color
        }
    }
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
