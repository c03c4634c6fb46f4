//! The layers of `src/` depend downwards only: the graph of `crate::`
//! references between the top-level modules has no circle, so a change
//! low in the pipeline never needs one above it to build.

mod common;

use std::collections::{BTreeMap, BTreeSet};
use std::fs;
use std::path::Path;

/// Module → modules it names, each with a place that names it.
type Graph = BTreeMap<String, BTreeMap<String, String>>;

#[test]
fn the_top_level_modules_have_no_circle() {
    let graph = module_graph(&common::root().join("src"));
    assert!(graph.len() >= 8, "read only {} modules", graph.len());
    if let Some(circle) = find_circle(&graph) {
        let steps: Vec<String> = circle
            .windows(2)
            .map(|w| format!("{} -> {} ({})", w[0], w[1], graph[&w[0]][&w[1]]))
            .collect();
        panic!("an import circle:\n  {}", steps.join("\n  "));
    }
}

/// The finder sees a circle when there is one.
#[test]
fn a_circle_is_found() {
    let mut graph = Graph::new();
    for (from, to) in [("a", "b"), ("b", "c"), ("c", "a"), ("c", "d")] {
        graph
            .entry(from.into())
            .or_default()
            .insert(to.into(), "here".into());
    }
    let circle = find_circle(&graph).expect("a -> b -> c -> a");
    assert_eq!(circle.first(), circle.last());
    assert_eq!(circle.len(), 4);
    graph.get_mut("c").expect("c").remove("a");
    assert_eq!(find_circle(&graph), None);
}

#[test]
fn references_are_read_from_use_lines_and_paths() {
    let text = "use crate::{model::Chain, units};\n// crate::cli in a comment\nlet x = crate::physics::rtd::r(1.0);\nuse crate::syntax;";
    let found: BTreeSet<String> = references(text).into_iter().map(|(m, _)| m).collect();
    let expected: BTreeSet<String> = ["model", "units", "physics", "syntax"]
        .into_iter()
        .map(String::from)
        .collect();
    assert_eq!(found, expected);
}

fn module_graph(src: &Path) -> Graph {
    let mut graph = Graph::new();
    let mut files = Vec::new();
    rust_files(src, &mut files);
    for file in files {
        let relative = file.strip_prefix(src).expect("under src/");
        let first = relative.components().next().expect("a path");
        let module = first.as_os_str().to_string_lossy();
        let module = module.trim_end_matches(".rs").to_string();
        let text = fs::read_to_string(&file).expect("a source file reads");
        let text = product_code(&text);
        let edges = graph.entry(module.clone()).or_default();
        for (target, line) in references(text) {
            if target != module {
                let place = format!("{}:{line}", relative.display());
                edges.entry(target).or_insert(place);
            }
        }
    }
    graph
}

/// The file without its unit tests: a test may build its input with the
/// checker above it; the product code may not reach up.
fn product_code(text: &str) -> &str {
    match text.find("#[cfg(test)]\nmod tests") {
        Some(end) => &text[..end],
        None => text,
    }
}

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    let mut entries: Vec<_> = fs::read_dir(dir)
        .expect("a source folder reads")
        .map(|e| e.expect("an entry").path())
        .collect();
    entries.sort();
    for path in entries {
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The top-level modules a text names after `crate::` (outside comments),
/// with the 1-based line of each mention.
fn references(text: &str) -> Vec<(String, usize)> {
    let mut found = Vec::new();
    for (index, line) in text.lines().enumerate() {
        let code = line.split("//").next().unwrap_or("");
        let mut rest = code;
        while let Some(at) = rest.find("crate::") {
            rest = &rest[at + "crate::".len()..];
            let names: Vec<&str> = match rest.strip_prefix('{') {
                Some(group) => group
                    .split('}')
                    .next()
                    .unwrap_or("")
                    .split(',')
                    .map(|item| item.trim().split("::").next().unwrap_or(""))
                    .collect(),
                None => vec![rest
                    .split(|c: char| !(c.is_alphanumeric() || c == '_'))
                    .next()
                    .unwrap_or("")],
            };
            for name in names {
                if !name.is_empty() && name != "self" {
                    found.push((name.to_string(), index + 1));
                }
            }
        }
    }
    found
}

/// A circle as its modules, the first repeated at the end; None when the
/// graph has none. Depth first, colouring modules in progress.
fn find_circle(graph: &Graph) -> Option<Vec<String>> {
    let mut done = BTreeSet::new();
    for start in graph.keys() {
        let mut path = Vec::new();
        if let Some(circle) = visit(graph, start, &mut path, &mut done) {
            return Some(circle);
        }
    }
    None
}

fn visit(
    graph: &Graph,
    node: &str,
    path: &mut Vec<String>,
    done: &mut BTreeSet<String>,
) -> Option<Vec<String>> {
    if let Some(at) = path.iter().position(|p| p == node) {
        let mut circle = path[at..].to_vec();
        circle.push(node.to_string());
        return Some(circle);
    }
    if done.contains(node) {
        return None;
    }
    path.push(node.to_string());
    for next in graph.get(node).into_iter().flat_map(|e| e.keys()) {
        if let Some(circle) = visit(graph, next, path, done) {
            return Some(circle);
        }
    }
    path.pop();
    done.insert(node.to_string());
    None
}
