use clap::Args;

use super::{EXIT_OK, EXIT_USAGE};
use crate::diagnostics::did_you_mean;
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
            let near = did_you_mean(&text, Code::ALL.iter().map(|c| c.as_str()));
            match near {
                Some(n) => errln!("catena: no diagnostic code `{text}`; did you mean `{n}`?"),
                None => {
                    errln!("catena: no diagnostic code `{text}`; `catena explain` lists them")
                }
            }
            EXIT_USAGE
        }
    }
}
