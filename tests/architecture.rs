//! The module map in ARCHITECTURE.md is the rule, and this test holds the
//! code to it: it reads the map's table itself, so the map and the check
//! cannot drift apart.
//!
//! - Every module of the library, and the binary's command line, has a row;
//!   every row names a module that exists.
//! - Every path into another module that a module's code writes (its
//!   `use crate::` lines, `crate::NAME::...` written out in place, and
//!   `super::` paths that climb to the crate's root) names a module its
//!   row's "may use" lists.
//! - Every dependency crate a module's code names is listed there too
//!   (`thiserror`, for error types, is allowed everywhere).
//!
//! Comments and each file's unit tests (the `#[cfg(test)]` module at its
//! end) are not read: tests may reach further than the code they check.
//! A file's rules are those of the row of its longest module path
//! (`frontier::lp` has its own row; `report::plots::life` falls under
//! `report`).
//! (Common practice: a layered design is kept by checking its imports.)

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Crates every module may use.
const EVERYWHERE: &[&str] = &["thiserror"];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The map: module path -> the words in backticks of its "may use" cell.
fn read_map() -> BTreeMap<String, BTreeSet<String>> {
    let text = std::fs::read_to_string(root().join("ARCHITECTURE.md")).expect("ARCHITECTURE.md");
    let mut rows = BTreeMap::new();
    let mut in_table = false;
    for line in text.lines() {
        let line = line.trim();
        if line.starts_with("| module |") {
            in_table = true;
            continue;
        }
        if !in_table {
            continue;
        }
        if !line.starts_with('|') {
            break;
        }
        let cells: Vec<&str> = line.trim_matches('|').split('|').map(str::trim).collect();
        if cells
            .iter()
            .all(|c| c.chars().all(|ch| ch == '-' || ch == ':'))
        {
            continue;
        }
        assert_eq!(cells.len(), 3, "a row of three cells: {line}");
        let module = cells[0].trim_matches('`').to_string();
        let may_use: BTreeSet<String> = backticked(cells[2]).into_iter().collect();
        assert!(
            rows.insert(module.clone(), may_use).is_none(),
            "two rows for `{module}`"
        );
    }
    assert!(!rows.is_empty(), "no `| module |` table in ARCHITECTURE.md");
    rows
}

/// The words between backticks.
fn backticked(cell: &str) -> Vec<String> {
    cell.split('`')
        .skip(1)
        .step_by(2)
        .map(str::to_string)
        .collect()
}

/// The package's dependency crates (their names as paths use them).
fn dependencies() -> BTreeSet<String> {
    let text = std::fs::read_to_string(root().join("Cargo.toml")).expect("Cargo.toml");
    let mut deps = BTreeSet::new();
    let mut in_deps = false;
    for line in text.lines() {
        let line = line.trim();
        if line.starts_with('[') {
            in_deps = line == "[dependencies]";
            continue;
        }
        if in_deps && let Some((name, _)) = line.split_once('=') {
            deps.insert(name.trim().replace('-', "_"));
        }
    }
    deps
}

/// Every Rust file under `dir`.
fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).expect("src") {
        let p = e.expect("entry").path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// The module path of a source file: `frontier` for `src/frontier/mod.rs`,
/// `frontier::lp` for `src/frontier/lp.rs`, `cli` for the binary's files;
/// `None` for the crate roots.
fn module_of(file: &Path) -> Option<String> {
    let rel = file.strip_prefix(root().join("src")).expect("under src");
    let mut parts: Vec<String> = rel
        .iter()
        .map(|s| s.to_string_lossy().trim_end_matches(".rs").to_string())
        .collect();
    if parts.last().is_some_and(|l| l == "mod") {
        parts.pop();
    }
    match parts.as_slice() {
        [one] if one == "lib" || one == "main" => None,
        _ => Some(parts.join("::")),
    }
}

/// The row that rules `module`: the longest module path in the map that
/// is `module` or holds it.
fn row_of<'m>(map: &'m BTreeMap<String, BTreeSet<String>>, module: &str) -> Option<&'m str> {
    map.keys()
        .filter(|k| module == k.as_str() || module.starts_with(&format!("{k}::")))
        .max_by_key(|k| k.len())
        .map(String::as_str)
}

/// The code of a file without its comments and without its unit-test
/// module (which must come last).
fn code_of(file: &Path) -> String {
    let text = std::fs::read_to_string(file).expect("source");
    let text = match text.find("#[cfg(test)]\nmod ") {
        Some(i) => {
            // Nothing but the test module may follow: after its first line,
            // the only line at the left margin is its closing brace, last.
            let rest = &text[i..];
            let flush: Vec<&str> = rest
                .lines()
                .skip(2)
                .filter(|l| !l.is_empty() && !l.starts_with(char::is_whitespace))
                .collect();
            assert!(
                flush == ["}"] && rest.trim_end().ends_with('}'),
                "{}: the #[cfg(test)] module must come last",
                file.display()
            );
            &text[..i]
        }
        None => &text[..],
    };
    strip_comments(text)
}

/// Rust text without `//` and `/* */` comments, and with every string
/// literal emptied (`""`), so that neither can name a path.
fn strip_comments(text: &str) -> String {
    let b = text.as_bytes();
    let mut out = String::with_capacity(text.len());
    let mut i = 0;
    while i < b.len() {
        let rest = &text[i..];
        if rest.starts_with("//") {
            i += rest.find('\n').unwrap_or(rest.len());
        } else if rest.starts_with("/*") {
            i += rest.find("*/").map_or(rest.len(), |k| k + 2);
        } else if let Some(raw) = rest.strip_prefix("r#\"") {
            out.push_str("\"\"");
            i += raw.find("\"#").map_or(rest.len(), |k| k + 5);
        } else if rest.starts_with('"') {
            let mut k = 1;
            while k < b.len() - i && b[i + k] != b'"' {
                k += if b[i + k] == b'\\' { 2 } else { 1 };
            }
            out.push_str("\"\"");
            i += (k + 1).min(rest.len());
        } else if rest.starts_with("'\"'") {
            out.push_str("'\"'");
            i += 3;
        } else {
            let ch = rest.chars().next().expect("a character");
            out.push(ch);
            i += ch.len_utf8();
        }
    }
    out
}

fn is_ident(c: char) -> bool {
    c.is_ascii_alphanumeric() || c == '_'
}

/// The identifier at the start of `s`.
fn ident(s: &str) -> &str {
    let end = s.find(|c: char| !is_ident(c)).unwrap_or(s.len());
    &s[..end]
}

/// The top-level modules a module's code reaches: `crate::NAME`, grouped
/// `crate::{A, B::C}`, and `super::` chains that climb to the root.
fn modules_used(code: &str, module: &str) -> BTreeSet<String> {
    let mut used = BTreeSet::new();
    for (i, _) in code.match_indices("crate::") {
        if code[..i].ends_with(|c: char| is_ident(c) || c == ':') {
            continue;
        }
        let rest = &code[i + "crate::".len()..];
        if let Some(group) = rest.strip_prefix('{') {
            let mut depth = 0;
            let mut item_start = true;
            for (k, c) in group.char_indices() {
                match c {
                    '{' => depth += 1,
                    '}' if depth == 0 => break,
                    '}' => depth -= 1,
                    ',' if depth == 0 => item_start = true,
                    c if item_start && is_ident(c) => {
                        used.insert(ident(&group[k..]).to_string());
                        item_start = false;
                    }
                    _ => {}
                }
            }
        } else {
            used.insert(ident(rest).to_string());
        }
    }
    // `super::` from a module `depth` levels down reaches the crate's root
    // after `depth` steps.
    let depth = module.split("::").count();
    for (i, _) in code.match_indices("super::") {
        if code[..i].ends_with(|c: char| is_ident(c) || c == ':') {
            continue;
        }
        let mut rest = &code[i..];
        let mut steps = 0;
        while let Some(r) = rest.strip_prefix("super::") {
            steps += 1;
            rest = r;
        }
        if steps >= depth {
            used.insert(ident(rest).to_string());
        }
    }
    used.retain(|m| !m.is_empty());
    used
}

/// The dependency crates a module's code names (`C::...` or `use C`).
fn crates_used(code: &str, deps: &BTreeSet<String>) -> BTreeSet<String> {
    deps.iter()
        .filter(|c| {
            code.match_indices(&format!("{c}::"))
                .chain(code.match_indices(&format!("use {c};")))
                .any(|(i, _)| !code[..i].ends_with(|ch: char| is_ident(ch) || ch == ':'))
        })
        .cloned()
        .collect()
}

/// Every library module (and the binary's `cli`) with its files.
fn modules() -> BTreeMap<String, Vec<PathBuf>> {
    let mut files = Vec::new();
    rust_files(&root().join("src"), &mut files);
    let mut out: BTreeMap<String, Vec<PathBuf>> = BTreeMap::new();
    for f in files {
        if let Some(m) = module_of(&f) {
            out.entry(m).or_default().push(f);
        }
    }
    out
}

/// What a module breaks of its row, one line per breach.
fn breaches(map: &BTreeMap<String, BTreeSet<String>>, deps: &BTreeSet<String>) -> Vec<String> {
    let mut out = Vec::new();
    for (module, files) in modules() {
        let Some(row) = row_of(map, &module) else {
            out.push(format!("`{module}` has no row in the map"));
            continue;
        };
        let allowed = &map[row];
        let own = module.split("::").next().unwrap_or_default();
        for file in files {
            let code = code_of(&file);
            let shown = file.strip_prefix(root()).unwrap_or(&file).display();
            for m in modules_used(&code, &module) {
                if m != own && !allowed.contains(&m) {
                    out.push(format!(
                        "{shown} uses `crate::{m}`, which the row `{row}` does not allow"
                    ));
                }
            }
            for c in crates_used(&code, deps) {
                if !EVERYWHERE.contains(&c.as_str()) && !allowed.contains(&c) {
                    out.push(format!(
                        "{shown} uses the crate `{c}`, which the row `{row}` does not allow"
                    ));
                }
            }
        }
    }
    out
}

#[test]
fn every_module_keeps_to_the_map() {
    let map = read_map();
    let deps = dependencies();
    let found = breaches(&map, &deps);
    assert!(
        found.is_empty(),
        "ARCHITECTURE.md's table and the code disagree; fix the code or the map:\n{}",
        found.join("\n")
    );
}

#[test]
fn the_map_names_only_real_modules_and_crates() {
    let map = read_map();
    let deps = dependencies();
    let modules = modules();
    let tops: BTreeSet<&str> = modules
        .keys()
        .map(|m| m.split("::").next().unwrap_or_default())
        .collect();
    for (row, may_use) in &map {
        assert!(
            modules.contains_key(row),
            "the map's row `{row}` is no module"
        );
        for w in may_use {
            assert!(
                tops.contains(w.as_str()) || deps.contains(w),
                "the row `{row}` may use `{w}`, which is neither a module nor a dependency"
            );
        }
    }
}

#[test]
fn the_checks_see_what_they_look_for() {
    // The scanner itself, on made-up code: paths in comments and strings
    // do not count; grouped imports and `super::` chains to the root do.
    let code = strip_comments(
        "use crate::{model::Model, run::{BLOCK, Quiet}};\n\
         // use crate::report;\n\
         let s = \"crate::shard // not a comment\"; let t = crate::sim::run;\n\
         /* crate::fit */ use super::super::files::TempFile;\n\
         #[derive(serde::Serialize)] struct X;",
    );
    assert_eq!(
        modules_used(&code, "a::b"),
        ["files", "model", "run", "sim"]
            .into_iter()
            .map(String::from)
            .collect()
    );
    let deps: BTreeSet<String> = ["serde", "rand", "rand_distr"]
        .into_iter()
        .map(String::from)
        .collect();
    assert_eq!(
        crates_used(&code, &deps),
        ["serde".to_string()].into_iter().collect()
    );
}
