//! Every fault finding's help (R670–R676) suggests only what the language
//! accepts: where a help names a parameter to state on a stage ("a burnout
//! current of at least 1.58 uA on `conv` (`burnout 1.58 uA`)"), the
//! suggestion is written into the spec, which must still parse and
//! resolve, and the finding must clear or change. A help naming a form
//! this test does not know how to apply fails it, so a new suggestion
//! cannot slip past unchecked.

mod common;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use common::{catena, json, root};
use serde_json::Value;

/// Every spec the suite holds: the fixtures and the demos.
fn specs() -> Vec<PathBuf> {
    let mut found = Vec::new();
    let mut todo = vec![root().join("tests/fixtures"), root().join("specs")];
    while let Some(dir) = todo.pop() {
        for entry in std::fs::read_dir(&dir).expect("a folder") {
            let path = entry.expect("an entry").path();
            if path.is_dir() {
                todo.push(path);
            } else if path.extension().is_some_and(|e| e == "catena") {
                found.push(path);
            }
        }
    }
    found.sort();
    found
}

/// The findings of checking `path` (or, with `text`, that text read as if
/// it were `path`).
fn findings(path: &Path, text: Option<&str>) -> Vec<Value> {
    let dir = path.parent().expect("a folder");
    let name = path.file_name().unwrap().to_str().unwrap();
    let run = match text {
        Some(t) => catena(
            dir,
            &["check", "-", "--stdin-filename", name, "--format", "json"],
            Some(t.as_bytes()),
        ),
        None => catena(dir, &["check", name, "--format", "json"], None),
    };
    assert!(
        run.status != 2,
        "{}: {}{}",
        path.display(),
        run.stdout,
        run.stderr
    );
    json(&run.stdout)["findings"]
        .as_array()
        .expect("findings")
        .clone()
}

/// A suggestion a help makes: state `param value` on `stage`.
#[derive(Debug, PartialEq)]
struct Suggestion {
    stage: String,
    param: String,
    value: String,
}

/// The parameter a help suggests stating on a stage, written "on `STAGE`
/// (`PARAM VALUE`)" or "on `STAGE` (`PARAM`, more than ...)"; Err for a
/// suggestion of a parameter this test cannot give a value to.
fn suggestion(help: &str) -> Result<Option<Suggestion>, String> {
    let Some(at) = help.find("` (`") else {
        return Ok(None);
    };
    let stage = help[..at].rsplit('`').next().unwrap_or("").to_string();
    let named = |w: &str| help[..at].ends_with(&format!("{w} `{stage}"));
    if !named("on") && !named("of") {
        return Ok(None);
    }
    let rest = &help[at + 4..];
    let form = &rest[..rest.find('`').ok_or("an unclosed form")?];
    let (param, value) = match form.split_once(' ') {
        Some((p, v)) => (p.to_string(), v.to_string()),
        None => (form.to_string(), value_for(form, &rest[form.len()..])?),
    };
    Ok(Some(Suggestion {
        stage,
        param,
        value,
    }))
}

/// A value for a parameter a help names without one: a burnout current
/// ten times the bias current it must outweigh (100 nA where none is
/// stated, which outweighs a bias of nothing).
fn value_for(param: &str, after: &str) -> Result<String, String> {
    if param != "burnout" {
        return Err(format!("no value known for a suggested `{param}`"));
    }
    let Some(figure) = after.split("of up to ").nth(1) else {
        return Ok("100 nA".to_string());
    };
    let mut words = figure.split([' ', ')']);
    let number: f64 = words.next().unwrap().parse().map_err(|e| format!("{e}"))?;
    let unit = words.next().unwrap_or("A");
    Ok(format!("{} {unit}", number * 10.0))
}

/// The spec with `s` written into its stage's block, in the chain that
/// holds line `line` (1-based): its value replacing a statement of the
/// parameter there, else a new first line.
fn apply(text: &str, s: &Suggestion, line: usize) -> String {
    let start: usize = text
        .split_inclusive('\n')
        .take(line.saturating_sub(1))
        .map(str::len)
        .sum();
    let chain = text[..start].rfind("chain ").unwrap_or(0);
    let open = text
        .match_indices(&format!(" {} ", s.stage))
        .map(|(i, m)| i + m.len())
        .filter(|&i| i > chain)
        .find_map(|after| {
            let head = &text[after..];
            let brace = head.find('{')?;
            let between = &head[..brace];
            // `NAME {` or `NAME : part {`, on the stage's own line.
            (!between.contains('\n') && !between.contains("->")).then_some(after + brace + 1)
        })
        .unwrap_or_else(|| panic!("no block for `{}`", s.stage));
    let close = open + text[open..].find('}').expect("a closed block");
    let line = format!("{} {}", s.param, s.value);
    let block = &text[open..close];
    let replaced = block.find(&format!("{} ", s.param)).map(|at| {
        let end = block[at..]
            .find(['\n', ';'])
            .map_or(block.len(), |e| at + e);
        format!("{}{line}{}", &block[..at], &block[end..])
    });
    let block = replaced.unwrap_or_else(|| format!(" {line};{block}"));
    format!("{}{block}{}", &text[..open], &text[close..])
}

/// One finding in two runs: the edits keep every line where it was.
fn same(a: &Value, b: &Value) -> bool {
    ["code", "line", "message", "help"]
        .iter()
        .all(|k| a[k] == b[k])
}

/// The help of the first finding coded `code`.
fn help_of(fs: &[Value], code: &str) -> String {
    fs.iter()
        .find(|f| f["code"] == code)
        .and_then(|f| f["help"].as_str())
        .unwrap_or_else(|| panic!("no {code}: {fs:?}"))
        .to_string()
}

fn is_fault_finding(f: &Value) -> bool {
    f["code"].as_str().is_some_and(|c| c.starts_with("R67"))
}

/// Codes of the stages before the analyses: a suggestion that raises one
/// is a form the language does not accept there.
fn is_input_finding(f: &Value) -> bool {
    f["code"]
        .as_str()
        .is_some_and(|c| ["S", "U", "P", "M"].iter().any(|p| c.starts_with(p)))
}

#[test]
fn every_fault_help_suggests_a_form_the_language_accepts() {
    let mut applied = 0;
    let mut problems = Vec::new();
    for path in specs() {
        let before = findings(&path, None);
        let mut seen = BTreeMap::new();
        for f in before.iter().filter(|f| is_fault_finding(f)) {
            let help = f["help"].as_str().unwrap_or("");
            let s = match suggestion(help) {
                Ok(Some(s)) => s,
                Ok(None) => continue,
                Err(why) => {
                    problems.push(format!("{}: {why}: {help}", path.display()));
                    continue;
                }
            };
            let key = format!("{} {} {} {}", f["line"], s.stage, s.param, s.value);
            if seen.insert(key, ()).is_some() {
                continue;
            }
            let text = std::fs::read_to_string(&path).expect("the spec");
            let after = findings(
                &path,
                Some(&apply(&text, &s, f["line"].as_u64().unwrap_or(1) as usize)),
            );
            applied += 1;
            let input: Vec<_> = after
                .iter()
                .filter(|a| is_input_finding(a) && !before.iter().any(|b| same(a, b)))
                .map(|a| format!("{} {}", a["code"], a["message"]))
                .collect();
            if !input.is_empty() {
                problems.push(format!(
                    "{}: `{} {}` on `{}` is not accepted: {input:?}",
                    path.display(),
                    s.param,
                    s.value,
                    s.stage
                ));
            }
            if after.iter().any(|a| same(a, f)) {
                problems.push(format!(
                    "{}: `{} {}` on `{}` leaves the finding as it was: {}",
                    path.display(),
                    s.param,
                    s.value,
                    s.stage,
                    f["message"]
                ));
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    assert!(applied >= 10, "only {applied} suggestions applied");
}

#[test]
fn suggestions_are_read_from_the_help() {
    let s = suggestion("a burnout current of at least 1.58 uA on `conv` (`burnout 1.58 uA`) drives the open input clear of the valid window -4040 .. 52368").unwrap();
    assert_eq!(
        s,
        Some(Suggestion {
            stage: "conv".into(),
            param: "burnout".into(),
            value: "1.58 uA".into()
        })
    );
    let s = suggestion("a burnout current on `front` (`burnout`, more than its input bias current of up to 1.00 nA) drives the open pin to a rail").unwrap();
    assert_eq!(s.unwrap().value, "10 nA");
    assert!(suggestion("state the amplifier's output swing (`output`)")
        .unwrap()
        .is_none());
    let spec = "    adc conv : part {\n        bits 12\n        burnout 1 uA\n    }\n    conv -> reading\n";
    let s = Suggestion {
        stage: "conv".into(),
        param: "burnout".into(),
        value: "2 uA".into(),
    };
    assert!(
        apply(spec, &s, 1).contains("        burnout 2 uA\n"),
        "{}",
        apply(spec, &s, 1)
    );
    let spec = "    adc conv { bits 12 }\n";
    assert_eq!(
        apply(spec, &s, 1),
        "    adc conv { burnout 2 uA; bits 12 }\n"
    );
}

/// The help for a lost or shorted supply the converter does not read
/// against names the edge that makes it ratiometric; with that edge
/// written in, both faults leave the window (R670 and the alarm's R672
/// clear for the supply).
#[test]
fn the_ratiometric_help_clears_the_supply_faults() {
    let path = root().join("tests/fixtures/eval/press_transducer.catena");
    let on_supply = |fs: &[Value]| -> Vec<String> {
        fs.iter()
            .filter(|f| is_fault_finding(f) && f["line"] == 9)
            .map(|f| format!("{} {}", f["code"], f["message"]))
            .collect()
    };
    let before = findings(&path, None);
    let edge = "bridge_supply -> conv.ref";
    let helps: Vec<&str> = before
        .iter()
        .filter(|f| f["code"] == "R670" && f["line"] == 9)
        .filter_map(|f| f["help"].as_str())
        .collect();
    assert_eq!(helps.len(), 2, "{before:?}");
    assert!(helps
        .iter()
        .all(|h| h.contains(&format!("(`{edge}`, ratiometric)"))));
    let text = std::fs::read_to_string(&path).expect("the fixture");
    let wired = text.replace(
        "    bridge_supply -> cell -> front -> conv -> reading\n",
        &format!("    bridge_supply -> cell -> front -> conv -> reading\n    {edge}\n"),
    );
    assert_ne!(wired, text);
    let after = findings(&path, Some(&wired));
    assert!(!on_supply(&before).is_empty());
    assert_eq!(on_supply(&after), Vec::<String>::new(), "{after:?}");
}

/// A transducer's open excitation lead leaves its bridge unpowered, so it
/// reads its zero whatever pulls on the output: the help asks for the
/// excitation sensed at its terminals, and neither R670 nor the alarm's
/// R672 suggests a pull or driving the fault toward the trip.
#[test]
fn an_open_excitation_lead_asks_for_sensing_not_a_pull() {
    let path = root().join("tests/fixtures/eval/press_transducer.catena");
    let all = findings(&path, None);
    let on_cell: Vec<&str> = all
        .iter()
        .filter(|f| f["line"] == 14 && (f["code"] == "R670" || f["code"] == "R672"))
        .filter(|f| {
            f["message"]
                .as_str()
                .is_some_and(|m| m.contains("excitation lead open"))
        })
        .filter_map(|f| f["help"].as_str())
        .collect();
    assert_eq!(on_cell.len(), 2, "{all:?}");
    for help in on_cell {
        assert!(
            help.contains("sense the excitation at its terminals"),
            "{help}"
        );
        assert!(!help.contains("pull the node"), "{help}");
        assert!(!help.contains("up-scale"), "{help}");
    }
}

/// An amplifier input drawing up to 2 µA: through 1 MΩ its open pin
/// would sit anywhere within 2 V of the pull's voltage, inside the valid
/// window, so R671's help names the largest resistor that works, 100 kΩ
/// (0.2 V). Written in, the open pin reads below the window and R671 and
/// R672 clear.
#[test]
fn a_pin_drawing_a_large_bias_current_takes_a_smaller_pull() {
    let path = root().join("tests/fixtures/faults/open_pin_large_bias.catena");
    let help = help_of(&findings(&path, None), "R671");
    assert!(help.contains("(`pull 100 kohm to 0 V`)"), "{help}");
    let text = std::fs::read_to_string(&path).expect("the fixture");
    let pulled = text.replace(
        "        bias 2 uA max\n",
        "        bias 2 uA max\n        pull 100 kohm to 0 V\n",
    );
    assert_ne!(pulled, text);
    let after = findings(&path, Some(&pulled));
    assert!(!after.iter().any(is_fault_finding), "{after:?}");
    // The common 1 MΩ is not enough: the fault stays silent.
    let common = text.replace(
        "        bias 2 uA max\n",
        "        bias 2 uA max\n        pull 1 Mohm to 0 V\n",
    );
    let with_common = findings(&path, Some(&common));
    assert!(
        with_common.iter().any(|f| f["code"] == "R670"),
        "{with_common:?}"
    );
}

/// A converter pin that opens with nothing to drive it, under a high
/// alarm: R672's help names the pull to the converter's top rail, which
/// reads up-scale, toward the trip. Written in, the open pin sits at 5 V,
/// past the 2.5 V reference: the top code (65535), and R671 and R672
/// clear. Under a low alarm the same help names the pull to 0 V.
#[test]
fn an_alarm_asks_for_the_pull_toward_its_trip() {
    let path = root().join("tests/fixtures/faults/open_pin_high_alarm.catena");
    let help = help_of(&findings(&path, None), "R672");
    assert!(
        help.contains("up-scale (`pull 1 Mohm to 5 V` on `conv`)"),
        "{help}"
    );
    let text = std::fs::read_to_string(&path).expect("the fixture");
    let pulled = text.replace(
        "        rails 0 V .. 5 V\n",
        "        rails 0 V .. 5 V\n        pull 1 Mohm to 5 V\n",
    );
    assert_ne!(pulled, text);
    let after = findings(&path, Some(&pulled));
    assert!(!after.iter().any(is_fault_finding), "{after:?}");
    let dir = common::temp_dir("helps", "pull-up");
    std::fs::write(dir.join("kettle.catena"), &pulled).expect("written");
    let run = catena(&dir, &["checklist", "kettle.catena"], None);
    assert_eq!(run.status, 0, "{}", run.stderr);
    assert!(
        run.stdout
            .contains("`conv` input pin open: code 65535, **detectable**"),
        "{}",
        run.stdout
    );
    let low = text.replace("alarm high 80 degC", "alarm low 5 degC");
    let help = help_of(&findings(&path, Some(&low)), "R672");
    assert!(
        help.contains("down-scale (`pull 1 Mohm to 0 V` on `conv`)"),
        "{help}"
    );
}
