//! The `catena` command line.

#[macro_use]
mod output;
mod budget;
mod budget_json;
mod budget_table;
mod check;
mod checklist;
mod compare;
mod diff;
mod diff_render;
mod eval;
mod explain;
mod export;
mod files;
mod fmt;
mod generate;
mod report;
mod report_index;
mod revision;
mod settings;
mod terminal;

use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};

/// Exit statuses: findings and usage problems are told apart so CI can
/// tell a bad spec from a bad invocation.
pub const EXIT_OK: u8 = 0;
pub const EXIT_FINDINGS: u8 = 1;
pub const EXIT_USAGE: u8 = 2;

#[derive(Parser, Debug)]
#[command(name = "catena", version, about = "Checks measurement-chain specifications", long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    /// When to colour human output.
    #[arg(long, global = true, value_enum, default_value_t = terminal::ColorChoice::Auto)]
    color: terminal::ColorChoice,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Check specs: syntax, units, parameters, parts and the chain graph.
    Check(check::CheckArgs),
    /// Rewrite specs in the canonical layout.
    Fmt(fmt::FmtArgs),
    /// The error budget: every source, the totals by method, per point.
    Budget(budget::BudgetArgs),
    /// Evaluate a chain at one measurand value: every stage's output.
    Eval(eval::EvalArgs),
    /// What a change did to a chain: spec, verdicts, margins, headroom.
    Diff(diff::DiffArgs),
    /// Candidate chains side by side: a trade table.
    Compare(compare::CompareArgs),
    /// The fault-and-alarm checklist: codes, verdicts, thresholds, trips.
    Checklist(checklist::ChecklistArgs),
    /// Firmware constants: the conversion, the valid code window, trips, calibration.
    Export(export::ExportArgs),
    /// The review report: verdict, stages, budget, plots (HTML, Markdown, JSON).
    Report(report::ReportArgs),
    /// Explain a diagnostic code, or list them all.
    Explain(explain::ExplainArgs),
    /// Print a shell's completion script for catena.
    Completions(generate::CompletionsArgs),
    /// Print catena's man page (roff), or one command's.
    Man(generate::ManArgs),
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Human,
    Json,
}

pub fn run() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return ExitCode::from(if e.use_stderr() { EXIT_USAGE } else { EXIT_OK });
        }
    };
    terminal::set_color_choice(cli.color);
    let status = match cli.command {
        Command::Check(args) => check::run(args),
        Command::Fmt(args) => fmt::run(args),
        Command::Budget(args) => budget::run(args),
        Command::Eval(args) => eval::run(args),
        Command::Diff(args) => diff::run(args),
        Command::Compare(args) => compare::run(args),
        Command::Checklist(args) => checklist::run(args),
        Command::Export(args) => export::run(args),
        Command::Report(args) => report::run(args),
        Command::Explain(args) => explain::run(args),
        Command::Completions(args) => generate::completions(args),
        Command::Man(args) => generate::man(args),
    };
    ExitCode::from(output::finish(status))
}
