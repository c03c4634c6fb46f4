//! Shell completions and man pages, generated from the clap definitions so
//! they can never disagree with the commands.

use std::io::Write;

use clap::{Args, CommandFactory};
use clap_complete::Shell;

use super::{Cli, EXIT_OK, EXIT_USAGE};

#[derive(Args, Debug)]
pub struct CompletionsArgs {
    /// The shell to complete for.
    #[arg(value_enum)]
    shell: Shell,
}

#[derive(Args, Debug)]
pub struct ManArgs {
    /// A command's own page (`catena-check`); without it, the page of
    /// `catena`, which lists the commands.
    command: Option<String>,
}

pub fn completions(args: CompletionsArgs) -> u8 {
    let mut cmd = Cli::command();
    let mut out = Vec::new();
    clap_complete::generate(args.shell, &mut cmd, "catena", &mut out);
    write_stdout(&out)
}

pub fn man(args: ManArgs) -> u8 {
    let root = Cli::command();
    let page = match &args.command {
        None => root,
        Some(name) => match root.find_subcommand(name) {
            Some(sub) => {
                let full = format!("catena-{}", sub.get_name());
                sub.clone().name(full).version(env!("CARGO_PKG_VERSION"))
            }
            None => {
                eprintln!("catena: no command `{name}`");
                return EXIT_USAGE;
            }
        },
    };
    let mut out = Vec::new();
    // Rendering into memory cannot fail.
    let _ = clap_mangen::Man::new(page).render(&mut out);
    write_stdout(&out)
}

fn write_stdout(bytes: &[u8]) -> u8 {
    let mut stdout = std::io::stdout().lock();
    match stdout.write_all(bytes).and_then(|_| stdout.flush()) {
        Ok(()) => EXIT_OK,
        // A closed pipe (`| head`) is the reader's choice, not an error.
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => EXIT_OK,
        Err(e) => {
            eprintln!("catena: cannot write: {}", super::files::plain_io(&e));
            EXIT_USAGE
        }
    }
}
