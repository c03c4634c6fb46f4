//! The registry of finding codes. A code is stable once released: its
//! meaning never changes and it is never reused. Each has an explain page in
//! `explain/CODE.md` (a missing page fails the build) and at least one
//! fixture under `tests/fixtures/invalid/`, or for a configuration code a
//! folder under `tests/fixtures/config/` (a missing fixture fails a test).
//!
//! Letters by pipeline stage: S syntax, U units, P parameters and settings,
//! M the chain graph (names, ports, cycles), L parts libraries, E evaluation
//! of the chain (sensor validity, conversion, numerics), R requirements and
//! limits, C the configuration file (`catena.yaml`).

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Severity {
    Error,
    Warning,
}

/// What a finding is about, by the pipeline stage that finds it: the
/// code's letter.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Category {
    /// S: the file's syntax.
    Syntax,
    /// U: units and dimensions.
    Units,
    /// P: parameters and settings.
    Parameters,
    /// M: the chain graph (names, ports, cycles).
    Graph,
    /// L: parts libraries.
    Parts,
    /// E: evaluation of the chain (validity, conversion, numerics).
    Evaluation,
    /// R: the design against its requirements and limits.
    Design,
    /// C: the configuration file.
    Configuration,
}

impl Category {
    /// The category a code's letter names.
    const fn of_letter(letter: u8) -> Option<Category> {
        Some(match letter {
            b'S' => Category::Syntax,
            b'U' => Category::Units,
            b'P' => Category::Parameters,
            b'M' => Category::Graph,
            b'L' => Category::Parts,
            b'E' => Category::Evaluation,
            b'R' => Category::Design,
            b'C' => Category::Configuration,
            _ => return None,
        })
    }
}

macro_rules! codes {
    ($( $id:ident => $severity:ident, $title:literal; )*) => {
        /// A stable diagnostic code.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
        pub enum Code { $( $id, )* }

        impl Code {
            pub const ALL: &'static [Code] = &[ $( Code::$id, )* ];

            pub fn as_str(self) -> &'static str {
                match self { $( Code::$id => stringify!($id), )* }
            }

            pub fn severity(self) -> Severity {
                match self { $( Code::$id => Severity::$severity, )* }
            }

            /// What the finding is about (its letter).
            pub fn category(self) -> Category {
                match self {
                    $( Code::$id => const {
                        match Category::of_letter(stringify!($id).as_bytes()[0]) {
                            Some(c) => c,
                            None => panic!("a code's first letter names its category"),
                        }
                    }, )*
                }
            }

            /// A short title for listings.
            pub fn title(self) -> &'static str {
                match self { $( Code::$id => $title, )* }
            }

            /// The page `catena explain CODE` prints.
            pub fn explain(self) -> &'static str {
                match self { $( Code::$id => include_str!(concat!("explain/", stringify!($id), ".md")), )* }
            }

            /// Looks a code up by its text, case-insensitively.
            pub fn parse(text: &str) -> Option<Code> {
                let text = text.trim();
                Code::ALL.iter().copied().find(|c| c.as_str().eq_ignore_ascii_case(text))
            }
        }
    };
}

codes! {
    S001 => Error, "syntax error";
    S002 => Error, "unbalanced braces";
    S003 => Error, "not a text file";
    S004 => Error, "file too large";
    S005 => Error, "wrong arrow";
    S006 => Error, "misspelt plus-minus";
    S007 => Error, "unterminated string";
    S008 => Error, "blocks nested too deeply";
    S009 => Error, "too many findings";
    S010 => Error, "number out of range";
    S011 => Error, "statement outside a chain";
    S012 => Error, "not a regular file";
    S013 => Error, "negative tolerance";
    S014 => Error, "no chain in the file";
    S015 => Error, "folder link loop";
    S016 => Error, "bidirectional control character";
    S017 => Error, "name too long";

    U101 => Error, "unknown unit";
    U102 => Error, "wrong dimension";
    U103 => Error, "missing unit";
    U104 => Error, "unit not allowed here";
    U105 => Error, "unit powers out of range";

    P301 => Error, "unknown parameter";
    P302 => Error, "missing parameter";
    P303 => Error, "parameter given twice";
    P304 => Error, "value not one of the allowed words";
    P305 => Error, "implausible value";
    P306 => Error, "malformed value";
    P307 => Error, "missing sensor or stage model";
    P308 => Error, "conflicting parameters";
    P309 => Error, "unknown measurand quantity";
    P310 => Error, "unknown requirement or alarm";
    P311 => Error, "missing measurand";
    P312 => Error, "setting given twice";
    P313 => Error, "percentage without a basis";
    P350 => Error, "unknown protected kind";
    P375 => Error, "unit on a plain number";
    P335 => Error, "coefficients for a standard curve";

    M201 => Error, "duplicate stage name";
    M202 => Error, "unknown stage";
    M203 => Error, "unknown port";
    M204 => Error, "port type mismatch";
    M205 => Error, "input driven twice";
    M206 => Error, "required input not connected";
    M207 => Error, "cycle";
    M208 => Warning, "unused stage";
    M209 => Error, "duplicate chain name";
    M210 => Error, "no single reading";
    M211 => Error, "edge into an output or out of an input";
    M212 => Error, "wrong number of bridge arms";
    M213 => Warning, "output not used";
    M227 => Error, "amplifier reference that is not a voltage";
    M228 => Error, "amplifier reference given twice";
    M229 => Error, "bias on a sensor that has no use for one";
    M240 => Error, "stage tracked twice";
    M241 => Error, "tracking group of one";
    M242 => Error, "tracking group of mixed quantities";
    M243 => Error, "tracked stage without a tolerance";
    M244 => Error, "ratio tolerance wider than the parts' own";
    M245 => Error, "malformed tracking group";
    M246 => Error, "duplicate tracking group name";
    M247 => Warning, "half bridge whose gauges cancel";
    M260 => Error, "channel of something that is not a converter";
    M261 => Error, "reference wired to a channel";
    M262 => Warning, "one signal read by two channels";
    M263 => Error, "converter reference that is not a voltage";
    M264 => Error, "sum of channels of different quantities";
    M265 => Error, "channel used twice";
    M266 => Error, "combination of a stage that is not a channel";
    M270 => Warning, "summed shares that do not make a whole";
    M271 => Error, "channel its converter's scan never reads";
    M272 => Error, "unknown name in a scan";
    M273 => Warning, "scan on a converter without channels";

    L401 => Error, "parts file not readable";
    L402 => Error, "malformed parts file";
    L403 => Error, "unknown part";
    L404 => Error, "part of another kind";
    L405 => Error, "part value not a scalar";
    L406 => Error, "part used without a parts file";
    L407 => Error, "parts file outside the repository";
    L408 => Error, "parts file not a regular file";
    L409 => Error, "part or parameter name not a word";
    L410 => Error, "YAML tag in a parts file";
    L411 => Error, "YAML-only number form";

    E501 => Error, "sensor outside its valid range";
    E502 => Error, "no firmware conversion";
    E503 => Error, "no finite value";
    E504 => Error, "code does not follow the measurand";
    E505 => Error, "number beyond any finite value";

    R601 => Error, "signal beyond a limit";
    R602 => Warning, "little headroom to a limit";
    R611 => Error, "accuracy requirement not met";
    R612 => Error, "resolution requirement not met";
    R613 => Error, "response requirement not met";
    R614 => Error, "rejection requirement not met";
    R615 => Warning, "Monte Carlo verdict inside its numerical width";
    R616 => Warning, "source beyond the GUM linearisation";
    R625 => Warning, "point outside the measurand range";
    R626 => Error, "reading clamped outside the range";
    R630 => Error, "converter input not settled";
    R670 => Warning, "silent fault";
    R671 => Warning, "undetermined fault";
    R672 => Error, "trip masked by a fault";
    R673 => Error, "trip outside the measurand range";
    R674 => Warning, "faults or trips not judged";
    R675 => Warning, "configuration rule not applied to a safety finding";
    R676 => Warning, "calibration point outside the measurand range";

    C801 => Error, "malformed configuration file";
    C802 => Error, "unknown configuration key";
    C803 => Error, "bad configuration value";
    C804 => Error, "unknown code in a rule";
    C805 => Error, "rule relaxes an error that cannot be relaxed";
}

#[cfg(test)]
mod tests {
    use super::{Category, Code};

    /// The category is the letter the registry's header gives it.
    #[test]
    fn categories_follow_the_letters() {
        assert_eq!(Code::S001.category(), Category::Syntax);
        assert_eq!(Code::E501.category(), Category::Evaluation);
        assert_eq!(Code::R601.category(), Category::Design);
        assert_eq!(Code::C801.category(), Category::Configuration);
        for code in Code::ALL {
            let letter = code.as_str().as_bytes()[0];
            assert_eq!(Category::of_letter(letter), Some(code.category()));
        }
    }
}
