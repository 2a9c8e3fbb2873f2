//! Shared helpers for the integration tests (and the benches, which
//! include this file by path): the shipped scenarios, a model from
//! scenario text, trials run, figures compared within their standard
//! errors, the `wearout` binary run (and `check` refusing a scenario), and
//! a fresh temporary folder.
#![allow(dead_code)]

use std::path::PathBuf;
use std::process::Command;
use std::time::Instant;

use wearout::model::Model;
use wearout::run::{Quiet, evaluate};
use wearout::summary::Summary;

/// The path of a shipped scenario: `scenarios/NAME.toml`.
pub fn scenario_path(name: &str) -> String {
    format!("{}/scenarios/{name}.toml", env!("CARGO_MANIFEST_DIR"))
}

/// The text of a shipped scenario.
pub fn scenario_text(name: &str) -> String {
    std::fs::read_to_string(scenario_path(name)).expect("shipped scenario")
}

/// A shipped scenario, loaded from its file as the command line does.
pub fn load(name: &str) -> Model {
    match wearout::scenario::load(std::path::Path::new(&scenario_path(name))) {
        Ok(loaded) => loaded.model,
        Err(e) => panic!("scenario {name} does not load: {e}"),
    }
}

/// The text of the embedded demo as it stood before sites and rotables
/// (`tests/data/demo-2026.toml`): one store, an availability target, a
/// frontier the search covers.
pub fn demo_2026_text() -> String {
    std::fs::read_to_string(demo_2026_path()).expect("fixture")
}

/// The path of the 2026 demo fixture.
pub fn demo_2026_path() -> String {
    format!("{}/tests/data/demo-2026.toml", env!("CARGO_MANIFEST_DIR"))
}

/// The 2026 demo fixture, loaded.
pub fn demo_2026() -> Model {
    model(&demo_2026_text())
}

/// Parse scenario text, panicking with the error (tests only).
pub fn model(text: &str) -> Model {
    match wearout::scenario::parse("test.toml", text) {
        Ok(m) => m,
        Err(e) => panic!("test scenario invalid: {e}"),
    }
}

/// Evaluate the named policy on trials `0..n`.
pub fn run(model: &Model, policy: &str, n: u64) -> Summary {
    let p = model
        .policy(policy)
        .expect("policy in test scenario")
        .clone();
    evaluate(model, &p, 0..n, model.target, &Quiet).expect("not cancelled")
}

/// Assert `|x - expected| <= k * se`, with a readable message.
pub fn within(what: &str, x: f64, expected: f64, se: f64, k: f64) {
    let gap = (x - expected).abs();
    assert!(
        gap <= k * se,
        "{what}: got {x}, expected {expected}; gap {gap} is more than {k} x se {se}"
    );
}

/// A one-part scenario: `positions` positions of one part type on `units`
/// units. Fields are the scenario's, in its units (hours, money).
pub struct OnePart<'a> {
    pub life: &'a str,
    pub units: usize,
    pub positions: usize,
    pub horizon: f64,
    pub price: f64,
    pub labour_planned: f64,
    pub labour_unplanned: f64,
    pub duration_planned: f64,
    pub duration_unplanned: f64,
    pub lead: &'a str,
    pub policy: &'a str,
}

impl OnePart<'_> {
    /// The scenario text, with the policy named `x`.
    pub fn text(&self) -> String {
        let pos = vec!["\"p\""; self.positions].join(", ");
        format!(
            r#"
[scenario]
name = "t"
horizon_hours = {horizon}
downtime_penalty_per_hour = 0
target_availability = 0.9
seed = 99

[parts.p]
life = {life}
price = {price}
labour = {{ planned = {lp}, unplanned = {lu} }}
duration_hours = {{ planned = {dp}, unplanned = {du} }}
lead_time = {lead}
holding = {{ per_spare_hour = 0 }}

[units.u]
positions = [{pos}]

[[fleet]]
unit = "u"
count = {units}

[policies.x]
p = {policy}
"#,
            horizon = self.horizon,
            life = self.life,
            price = self.price,
            lp = self.labour_planned,
            lu = self.labour_unplanned,
            dp = self.duration_planned,
            du = self.duration_unplanned,
            lead = self.lead,
            units = self.units,
            policy = self.policy,
        )
    }
}

/// The `wearout` binary as a command: no backtraces, and no progress bar
/// (`CI` set).
pub fn wearout() -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_wearout"));
    c.env_remove("RUST_BACKTRACE").env("CI", "1");
    c
}

/// What a finished run of the binary gave.
pub struct Ran {
    /// The exit status (`None` when a signal ended the process).
    pub code: Option<i32>,
    pub stdout: String,
    pub stderr: String,
    /// Wall time of the run.
    pub seconds: f64,
}

/// Run the binary with `args` to its end.
pub fn run_wearout(args: &[&str]) -> Ran {
    let t = Instant::now();
    let out = wearout().args(args).output().expect("wearout runs");
    Ran {
        code: out.status.code(),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        seconds: t.elapsed().as_secs_f64(),
    }
}

/// A fresh, empty temporary folder named after the test and this process.
pub fn temp_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("wearout-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

/// Write scenario text to `TAG.toml` in this process's temporary folder.
pub fn temp_scenario(tag: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("wearout-scenarios-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let p = dir.join(format!("{tag}.toml"));
    std::fs::write(&p, text).expect("write temp scenario");
    p
}

/// `wearout check` on scenario text, written to `TAG.toml`: its exit
/// status and what it printed on stderr.
pub fn check_text(tag: &str, text: &str) -> (Option<i32>, String) {
    let p = temp_scenario(tag, text);
    let ran = run_wearout(&["check", p.to_str().expect("a UTF-8 path")]);
    (ran.code, ran.stderr)
}

/// `wearout check` refuses scenario text as it must refuse a user's
/// mistake: exit status 2, no panic, one message naming the file `TAG.toml`
/// and holding every needle. Returns the message.
pub fn check_refuses(tag: &str, text: &str, needles: &[&str]) -> String {
    let (code, err) = check_text(tag, text);
    assert_eq!(code, Some(2), "{tag}: exit code {code:?}, stderr: {err}");
    assert!(
        !err.contains("panicked") && !err.contains("backtrace"),
        "{tag}: {err}"
    );
    assert!(
        err.contains(&format!("{tag}.toml")),
        "{tag}: no file name in {err}"
    );
    for n in needles {
        assert!(err.contains(n), "{tag}: `{n}` not in: {err}");
    }
    assert_eq!(
        err.trim().lines().count(),
        1,
        "{tag}: one message, got {err}"
    );
    err
}

/// The peak resident memory of this process so far, in MB (Linux
/// `VmHWM`), if known.
pub fn peak_rss_mb() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}
