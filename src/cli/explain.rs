use clap::Args;

use super::{EXIT_OK, EXIT_USAGE};
use crate::diagnostics::unknown_word;
use crate::diagnostics::Code;

#[derive(Args, Debug)]
pub struct ExplainArgs {
    /// A code such as `U102`; without one, every code is listed.
    code: Option<String>,
}

pub fn run(args: ExplainArgs) -> u8 {
    let Some(text) = args.code else {
        for code in Code::ALL {
            let severity = match code.severity() {
                crate::diagnostics::Severity::Error => "error",
                crate::diagnostics::Severity::Warning => "warning",
            };
            outln!("{}  {:<7}  {}", code.as_str(), severity, code.title());
        }
        return EXIT_OK;
    };
    match Code::parse(&text) {
        Some(code) => {
            out!("{}", code.explain());
            EXIT_OK
        }
        None => {
            let codes = Code::ALL.iter().map(|c| c.as_str());
            let otherwise = Some("`catena explain` lists them");
            errln!(
                "catena: {}",
                unknown_word("diagnostic code", &text, codes, otherwise)
            );
            EXIT_USAGE
        }
    }
}
