//! The map of the house (DEVELOPERS.md, "Architecture"), checked on the
//! source: `report` renders what it is handed, so no file under
//! `src/report/` names `bench`, `index`, `search`, `diagnose`, `gate`, `pool`
//! or `judge`; the report model (`src/report/model/`) names nothing but ids
//! and plain data; file writing (`src/output/`) names no renderer; and no
//! two top-level modules of the library depend on each other, directly or
//! through others.
//!
//! The rule is the project's own (issue 16), no outside source. A
//! dependency is a `crate::NAME` path in code; comment lines (`//`, `///`,
//! `//!`) are skipped, so a doc link does not count.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

use crate::util::root;

/// Every `.rs` file under `dir`, sorted.
fn rust_files(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for entry in std::fs::read_dir(&d).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
            } else if path.extension().is_some_and(|e| e == "rs") {
                out.push(path);
            }
        }
    }
    out.sort();
    out
}

/// The top-level modules a source text names as `crate::NAME`, outside comments.
fn named_modules(text: &str) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    for line in text.lines().filter(|l| !l.trim_start().starts_with("//")) {
        for (at, _) in line.match_indices("crate::") {
            let name: String = line[at + "crate::".len()..]
                .chars()
                .take_while(|c| c.is_ascii_lowercase() || *c == '_')
                .collect();
            if !name.is_empty() {
                out.insert(name);
            }
        }
    }
    out
}

/// Modules named by the files under `src/DIR` (a directory or `DIR.rs`),
/// with the file naming each.
fn dependencies(dir: &str) -> BTreeMap<String, Vec<String>> {
    let src = root().join("src");
    let files = if src.join(dir).is_dir() {
        rust_files(&src.join(dir))
    } else {
        vec![src.join(format!("{dir}.rs"))]
    };
    let mut out: BTreeMap<String, Vec<String>> = BTreeMap::new();
    for file in files {
        let text = std::fs::read_to_string(&file).unwrap();
        let rel = file.strip_prefix(&src).unwrap().display().to_string();
        for name in named_modules(&text) {
            out.entry(name).or_default().push(rel.clone());
        }
    }
    out
}

#[test]
fn report_imports_nothing_above_it() {
    let deps = dependencies("report");
    assert!(deps.contains_key("plural"), "the scan finds report's imports: {deps:?}");
    for above in ["bench", "index", "search", "diagnose", "gate", "pool", "judge"] {
        assert!(
            !deps.contains_key(above),
            "report renders what it is handed, but names `{above}` in {:?}",
            deps.get(above)
        );
    }
}

#[test]
fn report_model_is_plain_data() {
    let deps = dependencies("report/model");
    let allowed = ["ids", "input", "analysis", "report"];
    let other: Vec<&String> = deps.keys().filter(|k| !allowed.contains(&k.as_str())).collect();
    assert!(other.is_empty(), "the report model names {other:?}: {deps:?}");
    // Within report, the model names only itself (`report::model`).
    for file in ["report/model/mod.rs", "report/model/scores.rs", "report/model/gate.rs"] {
        let text = std::fs::read_to_string(root().join("src").join(file)).unwrap();
        for line in text.lines().filter(|l| !l.trim_start().starts_with("//")) {
            assert!(
                !line.contains("crate::report::") || line.contains("crate::report::model"),
                "{file}: {line}"
            );
        }
    }
}

/// File writing names only the bottom: errors, and the kill tests' pause
/// points (`pause`, which names nothing).
#[test]
fn file_writing_names_no_renderer() {
    let deps = dependencies("output");
    assert_eq!(deps.keys().collect::<Vec<_>>(), ["error", "pause"], "{deps:?}");
    assert!(dependencies("pause").is_empty(), "{:?}", dependencies("pause"));
}

#[test]
fn no_circle_between_modules() {
    let lib = std::fs::read_to_string(root().join("src/lib.rs")).unwrap();
    let modules: Vec<String> = lib
        .lines()
        .filter_map(|l| l.strip_prefix("pub mod "))
        .map(|l| l.trim_end_matches(';').to_string())
        .collect();
    assert!(modules.len() >= 15, "modules of lib.rs: {modules:?}");
    let graph: BTreeMap<&str, BTreeSet<String>> = modules
        .iter()
        .map(|m| {
            let names = dependencies(m).into_keys().filter(|n| n != m && modules.contains(n));
            (m.as_str(), names.collect())
        })
        .collect();
    assert!(graph["bench"].contains("report"), "the scan finds bench → report: {graph:?}");
    // Every module reachable from `start`.
    let reach = |start: &str| {
        let mut seen: BTreeSet<String> = BTreeSet::new();
        let mut todo: Vec<String> = graph[start].iter().cloned().collect();
        while let Some(m) = todo.pop() {
            if seen.insert(m.clone()) {
                todo.extend(graph.get(m.as_str()).into_iter().flatten().cloned());
            }
        }
        seen
    };
    for m in graph.keys() {
        assert!(!reach(m).contains(*m), "`{m}` depends on itself through {:?}", graph[m]);
    }
}
