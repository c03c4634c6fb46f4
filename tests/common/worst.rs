//! Generators of worst-case inputs inside the limits, shared by
//! `tests/worst_cases.rs` and the `worst_case_*` benches.

#![allow(dead_code)]

/// One chain of `n` amplifiers in series: every edge looks its two
/// stages up by name.
pub fn many_stages(n: usize) -> String {
    let mut s = String::from("chain long {\n    measurand temperature 0 degC .. 50 degC\n");
    for i in 0..n {
        s.push_str(&format!("    amplifier a{i} {{ gain 1 }}\n"));
    }
    for i in 1..n {
        s.push_str(&format!("    a{} -> a{i}\n", i - 1));
    }
    s.push_str("}\n");
    s
}

/// `n` small chains, each with findings to render.
pub fn many_chains(n: usize) -> String {
    (0..n)
        .map(|i| format!("chain c{i} {{\n    amplifier a {{ gain 1 }}\n}}\n"))
        .collect()
}

/// `n` empty brace pairs on one line.
pub fn braces(n: usize) -> String {
    format!("chain b {{ {} }}\n", "{}".repeat(n))
}

/// A parts file of flow lists nested `n` deep.
pub fn deep_yaml(n: usize) -> String {
    format!("parts: {}1{}\n", "[".repeat(n), "]".repeat(n))
}

/// A parts file of `n` parts.
pub fn many_parts(n: usize) -> String {
    let mut s = String::from("parts:\n");
    for i in 0..n {
        s.push_str(&format!("  p{i}:\n    kind: amplifier\n    gain: 2\n"));
    }
    s
}

/// One name of `n` characters.
pub fn long_name(n: usize) -> String {
    format!(
        "chain {} {{\n    measurand temperature 0 degC .. 50 degC\n}}\n",
        "x".repeat(n)
    )
}
