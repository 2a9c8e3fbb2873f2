//! Writing a report is atomic per run: a run that fails half-way (a file
//! that cannot be written, something in the way of a file) leaves the
//! previous report byte for byte as it was, with no temporary files; a
//! later report removes only the files an earlier report wrote; and the
//! command line writes reports where `--report-dir` says (the default
//! folder with `--report`, one for evaluations and one for the frontier),
//! only into a new or empty folder or an earlier report, and never takes a
//! scenario file for the folder. Agreement checks with the
//! crate's own earlier output; no outside figures are involved.

mod common;

use std::collections::BTreeMap;
use std::path::Path;

use common::{temp_dir, wearout};

use wearout::mean_life::mean_life_plan;
use wearout::model::Model;
use wearout::report::{MANIFEST, Report, evaluate_report};
use wearout::result::EvaluateJson;
use wearout::run::{Quiet, evaluate};

/// An evaluate report of the demo's first policy with `seed` and `n` trials.
fn report(seed: u64, n: u64) -> Report {
    let mut model: Model = wearout::scenario::load_or_demo(None)
        .expect("demo loads")
        .model;
    model.seed = seed;
    let policy = model.policies[0].clone();
    let summary = evaluate(&model, &policy, 0..n, model.target, &Quiet).expect("runs");
    let plan = mean_life_plan(&model, &policy);
    let json = EvaluateJson::new(&model, &summary, &plan);
    evaluate_report(&model, &summary, &json, &Quiet).expect("renders")
}

/// Every file in `dir` (names starting with a dot included) with its bytes.
fn snapshot(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    std::fs::read_dir(dir)
        .expect("dir")
        .map(|e| {
            let e = e.expect("entry");
            let name = e.file_name().to_string_lossy().into_owned();
            let bytes = if e.path().is_file() {
                std::fs::read(e.path()).expect("read")
            } else {
                b"<dir>".to_vec()
            };
            (name, bytes)
        })
        .collect()
}

#[test]
fn a_failed_write_leaves_the_previous_report_intact() {
    let dir = temp_dir("report-atomic");
    let first = report(7, 300);
    first.write_to(&dir).expect("first report writes");
    let before = snapshot(&dir);
    assert!(before.contains_key("index.html") && before.contains_key(MANIFEST));

    // A second, different report whose last file cannot be created (its
    // name is longer than any file system allows), so the run fails after
    // every other file has been written out in full.
    let mut second = report(8, 300);
    assert_ne!(second.file("trials.csv"), first.file("trials.csv"));
    second.push(format!("{}.txt", "x".repeat(300)), b"never".to_vec());
    let err = second.write_to(&dir).expect_err("the long name must fail");
    assert!(
        err.to_string().contains(&dir.display().to_string()),
        "{err}"
    );
    assert_eq!(
        snapshot(&dir),
        before,
        "previous report changed or temp files left"
    );
}

#[test]
fn something_in_the_way_stops_the_write_before_any_rename() {
    let dir = temp_dir("report-in-the-way");
    let first = report(7, 300);
    first.write_to(&dir).expect("first report writes");
    // Put a folder where summary.md goes.
    std::fs::remove_file(dir.join("summary.md")).expect("remove");
    std::fs::create_dir(dir.join("summary.md")).expect("mkdir");
    let before = snapshot(&dir);
    let err = report(9, 300)
        .write_to(&dir)
        .expect_err("a folder is in the way");
    assert!(err.to_string().contains("summary.md"), "{err}");
    assert_eq!(snapshot(&dir), before);
}

#[test]
fn a_new_report_removes_only_the_old_reports_files() {
    let dir = temp_dir("report-stale");
    let mut first = report(7, 300);
    first.push("old-figure.svg", b"<svg/>".to_vec());
    first.write_to(&dir).expect("writes");
    std::fs::write(dir.join("notes.txt"), "mine").expect("user file");
    report(7, 300).write_to(&dir).expect("writes again");
    assert!(
        !dir.join("old-figure.svg").exists(),
        "stale report file kept"
    );
    assert_eq!(
        std::fs::read_to_string(dir.join("notes.txt"))
            .ok()
            .as_deref(),
        Some("mine")
    );
    assert!(dir.join("index.html").is_file());
    // The same run renders the same bytes (no clock in an evaluate report).
    assert_eq!(
        std::fs::read(dir.join("index.html")).expect("read"),
        report(7, 300).file("index.html").expect("index").to_vec()
    );
}

#[test]
fn the_command_line_writes_where_report_says() {
    let dir = temp_dir("report-cli");
    // No folder given: reports/<scenario-name>/ under the working folder.
    let out = wearout()
        .args(["evaluate", "--trials", "200", "--json", "--report"])
        .current_dir(&dir)
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // An evaluation's default folder names the policy, apart from the
    // frontier's reports/demo/.
    let default = dir.join("reports").join("demo-evaluate-current");
    assert!(default.join("index.html").is_file());
    assert!(!dir.join("reports").join("demo").exists());
    // stdout is still exactly the JSON, and result.json holds the same bytes.
    let _: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json on stdout");
    assert_eq!(
        out.stdout,
        std::fs::read(default.join("result.json")).expect("result.json")
    );
    assert!(String::from_utf8_lossy(&out.stderr).contains("index.html"));
    // A folder given.
    let there = dir.join("elsewhere");
    // The frontier search does not cover the demo's sites yet: the 2026 demo.
    let out = wearout()
        .args([
            "frontier",
            &common::demo_2026_path(),
            "--trials",
            "100",
            "--validate-trials",
            "100",
            "--report-dir",
        ])
        .arg(&there)
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    for f in [
        "index.html",
        "summary.md",
        "frontier.csv",
        "policies.csv",
        "trials.csv",
        "result.json",
        "frontier.svg",
    ] {
        assert!(there.join(f).is_file(), "{f} missing");
    }
    // A folder that cannot be made: a user error naming it, exit status 2.
    let blocker = dir.join("a-file");
    std::fs::write(&blocker, "x").expect("file");
    let out = wearout()
        .args(["evaluate", "--trials", "50", "--report-dir"])
        .arg(blocker.join("sub"))
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("a-file"));
}

/// `--report` takes no folder after a space, so the scenario file after it
/// is the scenario (`evaluate --report water.toml` does what was meant);
/// `--report=DIR` is still read as a folder; a folder after `--report` is
/// refused with a message naming `--report-dir`.
#[test]
fn report_never_swallows_the_scenario_file() {
    let dir = temp_dir("report-swallow");
    let water = dir.join("water.toml");
    std::fs::copy(common::scenario_path("b0"), &water).expect("copy b0");
    let out = wearout()
        .args(["evaluate", "--trials", "50", "--json", "--report"])
        .arg(&water)
        .current_dir(&dir)
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let name = j["scenario"].as_str().expect("scenario name").to_string();
    assert_ne!(name, "demo", "the scenario file was not the one run");
    let policy = j["policy"].as_str().expect("policy").to_string();
    let default = dir
        .join("reports")
        .join(format!("{name}-evaluate-{policy}"));
    assert!(
        default.join("index.html").is_file(),
        "{}",
        default.display()
    );

    // The older spelling with an equals sign still names the folder.
    let eq = dir.join("with-equals");
    let out = wearout()
        .args(["evaluate", "--trials", "50"])
        .arg(&water)
        .arg(format!("--report={}", eq.display()))
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(eq.join("index.html").is_file());

    // A folder where the scenario should be: exit 2, and the words say
    // what to write instead; nothing is run or written.
    let folder = dir.join("out");
    std::fs::create_dir_all(&folder).expect("mkdir");
    let out = wearout()
        .args(["evaluate", "--trials", "50", "--report"])
        .arg(&folder)
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("is a folder") && err.contains("--report-dir"),
        "{err}"
    );
    assert!(std::fs::read_dir(&folder).expect("list").next().is_none());
    let _ = std::fs::remove_dir_all(&dir);
}

/// A folder of someone's own files (no manifest) is refused before the run,
/// exit 2, with every file as it was; an empty folder and an earlier
/// report's folder are written.
#[test]
fn a_folder_of_other_files_is_refused() {
    let dir = temp_dir("report-occupied");
    let theirs = dir.join("theirs");
    std::fs::create_dir_all(&theirs).expect("mkdir");
    std::fs::write(theirs.join("index.html"), "my own page").expect("write");
    let before = snapshot(&theirs);
    let out = wearout()
        .args(["evaluate", "--trials", "50", "--json", "--report-dir"])
        .arg(&theirs)
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty(), "refused before the run");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("theirs") && err.contains("index.html") && err.contains(MANIFEST),
        "{err}"
    );
    assert_eq!(snapshot(&theirs), before);
    // The library refuses it too.
    assert!(report(7, 50).write_to(&theirs).is_err());
    assert_eq!(snapshot(&theirs), before);

    let empty = dir.join("empty");
    std::fs::create_dir_all(&empty).expect("mkdir");
    report(7, 50)
        .write_to(&empty)
        .expect("an empty folder is fine");
    assert!(empty.join(MANIFEST).is_file());
    // And again over its own earlier report.
    report(8, 50)
        .write_to(&empty)
        .expect("an earlier report is fine");
    let _ = std::fs::remove_dir_all(&dir);
}
