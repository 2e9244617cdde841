//! The shape of the code, checked: no import circles between the top-level modules of
//! `src/`, and every citation of the project's theory document resolves to a section of
//! it. Run alone with `cargo test --test architecture`.
//!
//! The module graph is read from the source text: a file belongs to the top-level module
//! of its first path component under `src/` (`src/adversary/halving.rs` is `adversary`),
//! and it uses every top-level module it names as `crate::<module>` outside comments and
//! outside its unit tests (a `#[cfg(test)] mod tests { ... }` block, or a file declared
//! with `#[cfg(test)] mod <name>;`, which the library never builds). A module may use only
//! modules below it; the test names a circle when it finds one.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The source without comments and without the unit-test module.
fn code_of(text: &str) -> String {
    let text = match text.find("#[cfg(test)]\nmod tests {") {
        Some(i) => &text[..i],
        None => text,
    };
    text.lines()
        .map(|line| match line.find("//") {
            Some(i) if !line[..i].contains('"') => &line[..i],
            _ => line,
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// The files declared as unit-test modules (`#[cfg(test)]` then `mod <name>;`).
fn unit_test_files(files: &[PathBuf]) -> BTreeSet<PathBuf> {
    let mut tests = BTreeSet::new();
    for file in files {
        let text = std::fs::read_to_string(file).unwrap();
        let lines: Vec<&str> = text.lines().map(str::trim).collect();
        for pair in lines.windows(2) {
            if pair[0] == "#[cfg(test)]" {
                if let Some(name) = pair[1]
                    .strip_prefix("mod ")
                    .and_then(|rest| rest.strip_suffix(';'))
                {
                    let dir = file.parent().unwrap();
                    let dir = if file.ends_with("mod.rs") || file.ends_with("lib.rs") {
                        dir.to_path_buf()
                    } else {
                        dir.join(file.file_stem().unwrap())
                    };
                    tests.insert(dir.join(format!("{name}.rs")));
                    tests.insert(dir.join(name).join("mod.rs"));
                }
            }
        }
    }
    tests
}

/// The top-level module graph: module -> modules it uses.
fn module_graph() -> BTreeMap<String, BTreeSet<String>> {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let tests = unit_test_files(&files);
    assert!(
        tests.iter().any(|t| t.exists()),
        "the unit-test files were not found"
    );
    let mut graph: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for file in files {
        if tests.contains(&file) {
            continue;
        }
        let relative = file.strip_prefix(&src).unwrap();
        let first = relative.components().next().unwrap().as_os_str();
        let module = first.to_string_lossy().trim_end_matches(".rs").to_string();
        if module == "lib" || module == "main" {
            continue;
        }
        let code = code_of(&std::fs::read_to_string(&file).unwrap());
        let uses = graph.entry(module.clone()).or_default();
        for (i, _) in code.match_indices("crate::") {
            let name: String = code[i + 7..]
                .chars()
                .take_while(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || *c == '_')
                .collect();
            if !name.is_empty() && name != module {
                uses.insert(name);
            }
        }
    }
    graph
}

/// A circle in `graph`, if there is one (depth-first search).
fn find_circle(graph: &BTreeMap<String, BTreeSet<String>>) -> Option<Vec<String>> {
    fn visit(
        node: &str,
        graph: &BTreeMap<String, BTreeSet<String>>,
        state: &mut BTreeMap<String, u8>,
        path: &mut Vec<String>,
    ) -> Option<Vec<String>> {
        state.insert(node.to_string(), 1);
        path.push(node.to_string());
        for next in graph.get(node).into_iter().flatten() {
            match state.get(next.as_str()) {
                Some(1) => {
                    let start = path.iter().position(|n| n == next).unwrap();
                    let mut circle = path[start..].to_vec();
                    circle.push(next.clone());
                    return Some(circle);
                }
                Some(_) => {}
                None => {
                    if let Some(c) = visit(next, graph, state, path) {
                        return Some(c);
                    }
                }
            }
        }
        path.pop();
        state.insert(node.to_string(), 2);
        None
    }
    let mut state = BTreeMap::new();
    for node in graph.keys() {
        if !state.contains_key(node.as_str()) {
            if let Some(c) = visit(node, graph, &mut state, &mut Vec::new()) {
                return Some(c);
            }
        }
    }
    None
}

#[test]
fn the_top_level_modules_form_no_circle() {
    let graph = module_graph();
    // The graph is not trivially empty: the game loop uses the adversaries and methods.
    assert!(graph["game"].contains("adversary") && graph["game"].contains("method"));
    if let Some(circle) = find_circle(&graph) {
        panic!("import circle between modules: {}", circle.join(" -> "));
    }
}

#[test]
fn the_circle_finder_finds_a_circle() {
    // Guards the check above: a graph with a circle is reported.
    let mut graph: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    graph.entry("a".into()).or_default().insert("b".into());
    graph.entry("b".into()).or_default().insert("c".into());
    graph.entry("c".into()).or_default().insert("a".into());
    graph.entry("d".into()).or_default().insert("a".into());
    let circle = find_circle(&graph).expect("a -> b -> c -> a");
    assert_eq!(circle.first(), circle.last());
    assert_eq!(circle.len(), 4);
}

#[test]
fn the_records_and_the_verifier_do_not_reach_the_game_loop() {
    // The transcript records sit low: the verifier reads files without the game loop,
    // and an adversary may use the certificate search but not the other way round.
    let graph = module_graph();
    for low in [
        "transcript",
        "certificate",
        "instance",
        "class",
        "oracle",
        "exact",
    ] {
        for high in [
            "game",
            "adversary",
            "method",
            "runner",
            "family",
            "sweep",
            "cli",
        ] {
            assert!(
                !graph[low].contains(high),
                "{low} uses {high}, which sits above it"
            );
        }
    }
}

/// The section numbers of docs/theory.md (headings `## §N ...` and `### §N.M ...`).
fn theory_sections() -> BTreeSet<String> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("docs/theory.md")).expect("docs/theory.md");
    text.lines()
        .filter(|l| l.starts_with('#'))
        .filter_map(|l| {
            let rest = l.trim_start_matches('#').trim_start();
            let number = rest.strip_prefix('§')?;
            Some(
                number
                    .chars()
                    .take_while(|c| c.is_ascii_digit() || *c == '.')
                    .collect::<String>()
                    .trim_end_matches('.')
                    .to_string(),
            )
        })
        .collect()
}

/// Every `docs/theory.md §X` citation (and the `§Y` that follow it in a list such as
/// "docs/theory.md §2.1, §2.2" or "§0 and §3") in the project's files.
fn citations() -> Vec<(String, String)> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files = Vec::new();
    for dir in [
        "src",
        "tests",
        "benches",
        "examples",
        "tools",
        "adversaries",
    ] {
        let path = root.join(dir);
        if path.is_dir() {
            let mut all = Vec::new();
            collect(&path, &mut all);
            files.extend(all);
        }
    }
    files.push(root.join("README.md"));
    files.push(root.join("DEVELOPERS.md"));
    let mut found = Vec::new();
    for file in files {
        if file.ends_with("tests/architecture.rs") {
            continue; // this file describes the citation form
        }
        let Ok(text) = std::fs::read_to_string(&file) else {
            continue;
        };
        let name = file.strip_prefix(root).unwrap().display().to_string();
        for (i, _) in text.match_indices("docs/theory.md") {
            let after = &text[i + "docs/theory.md".len()..];
            // The citation list: section signs separated by ", ", " and ", line breaks
            // with comment markers, and spaces.
            let mut rest = after;
            loop {
                let trimmed = rest.trim_start_matches(|c: char| {
                    c.is_whitespace() || c == ',' || c == '/' || c == '!' || c == '#'
                });
                let trimmed = trimmed.strip_prefix("and ").unwrap_or(trimmed);
                let Some(number) = trimmed.strip_prefix('§') else {
                    break;
                };
                let digits: String = number
                    .chars()
                    .take_while(|c| c.is_ascii_digit() || *c == '.')
                    .collect();
                let digits = digits.trim_end_matches('.').to_string();
                if digits.is_empty() {
                    break; // a placeholder such as `§N` in prose about citations
                }
                found.push((name.clone(), digits.clone()));
                rest = &number[digits.len()..];
            }
        }
    }
    found
}

fn collect(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            collect(&path, out);
        } else {
            out.push(path);
        }
    }
}

#[test]
fn every_cited_theory_section_exists() {
    let sections = theory_sections();
    // The document has its top-level sections §0 to §8.
    for n in 0..=8 {
        assert!(
            sections.contains(&n.to_string()),
            "docs/theory.md has no §{n}"
        );
    }
    let cited = citations();
    assert!(
        cited.len() > 50,
        "the citations were not found ({})",
        cited.len()
    );
    let missing: Vec<String> = cited
        .iter()
        .filter(|(_, s)| !sections.contains(s))
        .map(|(file, s)| format!("{file}: §{s}"))
        .collect();
    assert!(
        missing.is_empty(),
        "citations of sections docs/theory.md does not have: {missing:?}"
    );
}

#[test]
fn no_one_cites_a_document_the_repository_lacks() {
    // The product cites its own theory document, never outside material.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut files = Vec::new();
    for dir in [
        "src",
        "tests",
        "benches",
        "examples",
        "tools",
        "adversaries",
        "docs",
        "python",
        ".ci",
    ] {
        let path = root.join(dir);
        if path.is_dir() {
            collect(&path, &mut files);
        }
    }
    files.push(root.join("README.md"));
    files.push(root.join("DEVELOPERS.md"));
    for file in files {
        let Ok(text) = std::fs::read_to_string(&file) else {
            continue;
        };
        // Spelled in pieces so that this file does not name them itself.
        for word in [
            concat!("THEORY", ".md"),
            concat!("DESIGN", ".md"),
            concat!("STYLE", ".md"),
            concat!("..", "/shared"),
        ] {
            assert!(!text.contains(word), "{} mentions {word}", file.display());
        }
    }
}

#[test]
fn no_source_file_holds_more_than_800_lines() {
    // A file holds one idea; past a few hundred lines it usually holds several.
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let long: Vec<String> = files
        .iter()
        .filter_map(|f| {
            let lines = std::fs::read_to_string(f).unwrap().lines().count();
            (lines > 800).then(|| format!("{} ({lines} lines)", f.display()))
        })
        .collect();
    assert!(long.is_empty(), "split these files by idea: {long:?}");
}
