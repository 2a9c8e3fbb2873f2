//! The scenario-format page cannot rot: every complete example in
//! `docs/scenario-format.md` must parse, and every key the shipped
//! scenarios use must be documented there.
//!
//! The source checked against is the code's own reader
//! (`wearout::scenario::parse`) and the shipped files under `scenarios/`;
//! these are consistency checks between documentation and code, not
//! figures of the trade.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

fn crate_file(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

fn doc_text() -> String {
    let path = crate_file("docs/scenario-format.md");
    match std::fs::read_to_string(&path) {
        Ok(t) => t,
        Err(e) => panic!("cannot read {}: {e}", path.display()),
    }
}

/// The ```toml fenced blocks of a Markdown text whose first line is exactly
/// `# complete`, with the (1-based) line of the opening fence.
fn complete_blocks(markdown: &str) -> Vec<(usize, String)> {
    let mut out = Vec::new();
    let mut open: Option<(usize, Vec<&str>)> = None;
    for (i, line) in markdown.lines().enumerate() {
        let fence = line.trim_start();
        match open.take() {
            None => {
                if fence.starts_with("```toml") {
                    open = Some((i + 1, Vec::new()));
                }
            }
            Some((start, body)) => {
                if fence.starts_with("```") {
                    if body.first().map(|l| l.trim_end()) == Some("# complete") {
                        let mut text = body.join("\n");
                        text.push('\n');
                        out.push((start, text));
                    }
                } else {
                    let mut body = body;
                    body.push(line);
                    open = Some((start, body));
                }
            }
        }
    }
    assert!(
        open.is_none(),
        "a ```toml block in the docs is never closed"
    );
    out
}

#[test]
fn block_extraction_finds_only_complete_toml_blocks() {
    let md = "text\n```toml\n# complete\na = 1\n```\n```toml\nb = 2\n```\n```text\n# complete\n```\n```toml\n# complete\nc = 3\n```\n";
    let blocks = complete_blocks(md);
    assert_eq!(
        blocks,
        vec![
            (2, "# complete\na = 1\n".to_string()),
            (12, "# complete\nc = 3\n".to_string())
        ]
    );
}

#[test]
fn every_complete_example_in_the_docs_parses() {
    let doc = doc_text();
    let blocks = complete_blocks(&doc);
    // The page promises a minimal example, the annotated demo and an
    // example of the other spellings; losing them all would pass vacuously.
    assert!(
        blocks.len() >= 3,
        "expected at least 3 `# complete` examples in docs/scenario-format.md, found {}",
        blocks.len()
    );
    for (line, text) in &blocks {
        if let Err(e) = wearout::scenario::parse("docs", text) {
            panic!(
                "the `# complete` example at docs/scenario-format.md line {line} does not parse: {e}"
            );
        }
    }
}

/// Keys whose names the user chooses (part, unit, policy and site names),
/// rather than field names of the format: the children of these tables.
/// (The per-site tables also hold `every_site` and `depot`, documented
/// with them.)
fn is_name_table(path: &[String]) -> bool {
    let p: Vec<&str> = path.iter().map(String::as_str).collect();
    matches!(
        p.as_slice(),
        ["parts"]
            | ["units"]
            | ["policies"]
            | ["policies", _]
            | ["search", "parts"]
            | ["fleet", "initial_age_by_part"]
            | ["sites"]
            | ["depot", "transport"]
            | ["ready_units", "at_least"]
            | ["policies", _, _, "stock"]
            | ["search", "parts", _, "stock"]
            | ["search", "every_part", "stock"]
    )
}

/// Collect field names (and the string values of the fields whose values
/// are chosen from a fixed set) from a parsed TOML value.
fn collect(
    value: &toml::Value,
    path: &mut Vec<String>,
    keys: &mut BTreeSet<String>,
    words: &mut BTreeSet<String>,
) {
    const ENUM_FIELDS: &[&str] = &["dist", "kind", "rule", "rules", "cost", "statistic"];
    match value {
        toml::Value::Table(t) => {
            let names = is_name_table(path);
            for (k, v) in t {
                if !names {
                    keys.insert(k.clone());
                    if ENUM_FIELDS.contains(&k.as_str()) {
                        match v {
                            toml::Value::String(s) => {
                                words.insert(s.clone());
                            }
                            toml::Value::Array(a) => {
                                for s in a.iter().filter_map(toml::Value::as_str) {
                                    words.insert(s.to_string());
                                }
                            }
                            _ => {}
                        }
                    }
                }
                // `initial_age = "new"` is the one string-valued spec.
                if k == "initial_age"
                    && let toml::Value::String(s) = v
                {
                    words.insert(s.clone());
                }
                path.push(k.clone());
                collect(v, path, keys, words);
                path.pop();
            }
        }
        // Array elements share their parent's path (`[[fleet]]` entries are
        // all under `fleet`).
        toml::Value::Array(a) => {
            for v in a {
                collect(v, path, keys, words);
            }
        }
        _ => {}
    }
}

#[test]
fn every_key_of_the_shipped_scenarios_is_documented() {
    let doc = doc_text();
    let dir = crate_file("scenarios");
    let entries = match std::fs::read_dir(&dir) {
        Ok(e) => e,
        Err(e) => panic!("cannot list {}: {e}", dir.display()),
    };
    let mut files: Vec<PathBuf> = entries
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    files.sort();
    assert!(!files.is_empty(), "no scenarios/*.toml files found");
    let mut missing = Vec::new();
    for file in &files {
        let text = match std::fs::read_to_string(file) {
            Ok(t) => t,
            Err(e) => panic!("cannot read {}: {e}", file.display()),
        };
        let table: toml::Table = match text.parse() {
            Ok(t) => t,
            Err(e) => panic!("{} is not TOML: {e}", file.display()),
        };
        let root = toml::Value::Table(table);
        let (mut keys, mut words) = (BTreeSet::new(), BTreeSet::new());
        collect(&root, &mut Vec::new(), &mut keys, &mut words);
        // Sanity: the walk found the format's fields and skipped the names
        // the user chose (here: the part types' names).
        assert!(keys.contains("horizon_hours") && keys.contains("positions"));
        let part_names = match root.get("parts") {
            Some(toml::Value::Table(p)) => p.keys().cloned().collect::<Vec<_>>(),
            _ => panic!("{} has no [parts] table", file.display()),
        };
        for name in &part_names {
            assert!(!keys.contains(name), "part name `{name}` taken for a field");
        }
        for k in &keys {
            // Field names are documented in backticks, alone or as a
            // table header such as `[scenario]` or `[[fleet]]`.
            let documented = [
                format!("`{k}`"),
                format!("`[{k}]`"),
                format!("`[[{k}]]`"),
                format!("`[{k}."),
            ]
            .iter()
            .any(|s| doc.contains(s.as_str()));
            if !documented {
                missing.push(format!("key `{k}` (used in {})", file.display()));
            }
        }
        for w in &words {
            if !doc.contains(&format!("\"{w}\"")) {
                missing.push(format!("value \"{w}\" (used in {})", file.display()));
            }
        }
    }
    assert!(
        missing.is_empty(),
        "docs/scenario-format.md does not document: {}",
        missing.join("; ")
    );
}

/// Every field the reader accepts in `[scenario]` has its own row in the
/// page's `[scenario]` table. The accepted list is the reader's own: the
/// "allowed here" list of the error for an unknown field.
#[test]
fn every_scenario_field_the_reader_accepts_has_a_row() {
    let text = "[scenario]\nname = \"x\"\nhorizon_hours = 100\ndowntime_penalty_per_hour = 1\ntarget_availability = 0.9\nno_such_field = 1\n";
    let err = match wearout::scenario::parse("probe", text) {
        Ok(_) => panic!("an unknown [scenario] field was accepted"),
        Err(e) => e.to_string(),
    };
    let allowed = match err.split("allowed here: ").nth(1) {
        Some(a) => a.lines().next().unwrap_or_default().to_string(),
        None => panic!("no list of allowed fields in: {err}"),
    };
    let fields: Vec<&str> = allowed.split(", ").map(str::trim).collect();
    assert!(fields.contains(&"horizon_hours"), "{fields:?}");
    let doc = doc_text();
    let section = match doc.split("\n## `[scenario]`").nth(1) {
        Some(s) => s.split("\n## ").next().unwrap_or_default(),
        None => panic!("docs/scenario-format.md has no `[scenario]` section"),
    };
    let missing: Vec<&&str> = fields
        .iter()
        .filter(|f| !section.contains(&format!("\n| `{f}` |")))
        .collect();
    assert!(
        missing.is_empty(),
        "[scenario] fields without a row in docs/scenario-format.md: {missing:?}"
    );
}
