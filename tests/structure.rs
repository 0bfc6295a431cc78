//! The crate's module graph has no cycle between folders (DEVELOPERS.md: modules small and named
//! for what they hold; a cycle across folders means two parts cannot be understood apart). Modules
//! inside one folder may use each other. Edges are the `crate::` and `super::` paths of each
//! module's non-test code; the strongly connected components are found with Tarjan's algorithm
//! (R. Tarjan 1972, "Depth-first search and linear graph algorithms", SIAM J. Computing 1(2)).

use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// Module path (`report::markdown`) → the source of its non-test code.
fn modules() -> BTreeMap<String, String> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut found = BTreeMap::new();
    let mut pending = vec![root.clone()];
    while let Some(dir) = pending.pop() {
        for entry in std::fs::read_dir(&dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                pending.push(path);
                continue;
            }
            if path.extension().is_none_or(|e| e != "rs") {
                continue;
            }
            let relative = path.strip_prefix(&root).unwrap().with_extension("");
            let mut parts: Vec<String> = relative
                .components()
                .map(|c| c.as_os_str().to_string_lossy().into_owned())
                .collect();
            if parts.last().is_some_and(|p| p == "mod") {
                parts.pop();
            }
            let name = parts.join("::");
            if name == "lib" || name == "main" {
                continue;
            }
            let text = std::fs::read_to_string(&path).unwrap();
            let code = match text.find("#[cfg(test)]") {
                Some(at) => text[..at].to_string(),
                None => text,
            };
            found.insert(name, code);
        }
    }
    found
}

/// The modules each module uses: for every `crate::a::b::c` the longest prefix that is a module.
fn edges(modules: &BTreeMap<String, String>) -> BTreeMap<String, BTreeSet<String>> {
    let mut edges = BTreeMap::new();
    for (name, code) in modules {
        let parent: Vec<&str> = name.split("::").collect();
        let parent = parent[..parent.len() - 1].join("::");
        let mut used = BTreeSet::new();
        for (prefix, base) in [("crate::", String::new()), ("super::", parent)] {
            for (at, _) in code.match_indices(prefix) {
                let rest = &code[at + prefix.len()..];
                // `super::{a, b::C}` names several paths at once; nested groups are not used here.
                let paths: Vec<String> = match rest.strip_prefix('{') {
                    Some(group) => group[..group.find('}').unwrap_or(0)]
                        .split(',')
                        .map(|p| p.trim().to_string())
                        .collect(),
                    None => vec![rest
                        .chars()
                        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_' || *c == ':')
                        .collect()],
                };
                for path in paths {
                    let mut parts: Vec<&str> = path.split("::").filter(|p| !p.is_empty()).collect();
                    loop {
                        let candidate = match (base.as_str(), parts.is_empty()) {
                            (b, true) => b.to_string(),
                            ("", false) => parts.join("::"),
                            (b, false) => format!("{b}::{}", parts.join("::")),
                        };
                        if modules.contains_key(&candidate) {
                            if &candidate != name {
                                used.insert(candidate);
                            }
                            break;
                        }
                        if parts.pop().is_none() {
                            break;
                        }
                    }
                }
            }
        }
        edges.insert(name.clone(), used);
    }
    edges
}

/// Strongly connected components with more than one module (Tarjan 1972).
fn cycles(edges: &BTreeMap<String, BTreeSet<String>>) -> Vec<Vec<String>> {
    struct State<'a> {
        edges: &'a BTreeMap<String, BTreeSet<String>>,
        index: BTreeMap<&'a str, usize>,
        low: BTreeMap<&'a str, usize>,
        stack: Vec<&'a str>,
        on_stack: BTreeSet<&'a str>,
        found: Vec<Vec<String>>,
    }
    fn visit<'a>(s: &mut State<'a>, v: &'a str) {
        let i = s.index.len();
        s.index.insert(v, i);
        s.low.insert(v, i);
        s.stack.push(v);
        s.on_stack.insert(v);
        for w in &s.edges[v] {
            let w = w.as_str();
            if !s.index.contains_key(w) {
                visit(s, w);
                let low = s.low[v].min(s.low[w]);
                s.low.insert(v, low);
            } else if s.on_stack.contains(w) {
                let low = s.low[v].min(s.index[w]);
                s.low.insert(v, low);
            }
        }
        if s.low[v] == s.index[v] {
            let mut component = Vec::new();
            loop {
                let w = s.stack.pop().unwrap();
                s.on_stack.remove(w);
                component.push(w.to_string());
                if w == v {
                    break;
                }
            }
            if component.len() > 1 {
                component.sort();
                s.found.push(component);
            }
        }
    }
    let mut state = State {
        edges,
        index: BTreeMap::new(),
        low: BTreeMap::new(),
        stack: Vec::new(),
        on_stack: BTreeSet::new(),
        found: Vec::new(),
    };
    for v in edges.keys() {
        if !state.index.contains_key(v.as_str()) {
            visit(&mut state, v);
        }
    }
    state.found
}

fn folder(module: &str) -> &str {
    module.split("::").next().unwrap()
}

#[test]
fn the_cycle_finder_finds_a_planted_cycle() {
    let graph: BTreeMap<String, BTreeSet<String>> = [
        ("a", vec!["b"]),
        ("b", vec!["c"]),
        ("c", vec!["a"]),
        ("d", vec!["a"]),
    ]
    .into_iter()
    .map(|(k, v)| (k.to_string(), v.into_iter().map(String::from).collect()))
    .collect();
    assert_eq!(cycles(&graph), vec![vec!["a", "b", "c"]]);
}

#[test]
fn no_module_cycle_crosses_a_folder() {
    let modules = modules();
    assert!(modules.contains_key("report::markdown") && modules.contains_key("digest"));
    let graph = edges(&modules);
    assert!(
        graph["manifest"].contains("digest"),
        "the edge finder sees `crate::` paths"
    );
    let crossing: Vec<Vec<String>> = cycles(&graph)
        .into_iter()
        .filter(|c| c.iter().any(|m| folder(m) != folder(&c[0])))
        .collect();
    assert!(
        crossing.is_empty(),
        "module cycles across folders: {crossing:?}"
    );
}
