//! Bad input never panics: every mistake a user can make in a scenario file
//! or on the command line gives one clear message naming the file, the field
//! path and what is allowed, and exit status 2.

mod common;

use std::process::Stdio;

// Check one broken scenario: exit 2, one message with all the needles.
use common::check_refuses as refuses;
use common::{Ran, run_wearout, scenario_text as scenario, temp_dir, temp_scenario};

fn b0_with(from: &str, to: &str) -> String {
    let s = scenario("b0");
    assert!(s.contains(from), "fixture text `{from}` not in b0.toml");
    s.replacen(from, to, 1)
}

#[test]
fn missing_file() {
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["check", "/nonexistent/fleet.toml"]);
    assert_eq!(code, Some(2));
    assert!(
        err.contains("/nonexistent/fleet.toml") && err.contains("cannot read"),
        "{err}"
    );
}

#[test]
fn toml_syntax_error_gives_line_and_column() {
    refuses(
        "syntax",
        "[scenario]\nname = \"x\"\nhorizon_hours = = 5\n",
        &["syntax.toml:3:", "TOML syntax error"],
    );
}

#[test]
fn unknown_key_with_suggestion() {
    refuses(
        "unknown",
        &b0_with("seed = 20261202", "sead = 20261202"),
        &["scenario.sead", "did you mean `seed`?"],
    );
    refuses(
        "misspelt",
        &b0_with("horizon_hours = 20000", "horizon_hour = 20000"),
        &[
            "scenario.horizon_hour",
            "did you mean `horizon_hours`?",
            ":7:1:",
        ],
    );
    refuses(
        "unknown_part_key",
        &b0_with("price = 6000", "price = 6000\ncolour = \"red\""),
        &["parts.pump.colour", "allowed here"],
    );
}

#[test]
fn wrong_types() {
    refuses(
        "wrongtype",
        &b0_with("price = 6000", "price = \"six thousand\""),
        &["parts.pump.price", "expected a number, found a string"],
    );
    refuses(
        "wrongtype2",
        &b0_with("count = 6", "count = 6.5"),
        &["fleet[0].count", "whole number"],
    );
}

#[test]
fn bad_numbers() {
    refuses(
        "negative",
        &b0_with("price = 6000", "price = -1"),
        &["parts.pump.price", "at least 0"],
    );
    refuses(
        "zero_shape",
        &b0_with("shape = 2.5", "shape = 0"),
        &["parts.engine.life.shape", "greater than 0"],
    );
    refuses(
        "nan_scale",
        &b0_with("scale = 10000", "scale = nan"),
        &["parts.engine.life.scale", "NaN"],
    );
    refuses(
        "inf_lead",
        &b0_with("median_hours = 800", "median_hours = inf"),
        &["parts.engine.lead_time.median_hours", "finite"],
    );
    refuses(
        "zero_horizon",
        &b0_with("horizon_hours = 20000", "horizon_hours = 0"),
        &["scenario.horizon_hours", "greater than 0"],
    );
    refuses(
        "zero_trials",
        &b0_with("trials = 2000", "trials = 0"),
        &["scenario.trials", "from 1 to"],
    );
}

#[test]
fn target_outside_unit_interval() {
    refuses(
        "target_hi",
        &b0_with("target_availability = 0.97", "target_availability = 1.2"),
        &["scenario.target_availability", "(0, 1]"],
    );
    refuses(
        "target_zero",
        &b0_with("target_availability = 0.97", "target_availability = 0"),
        &["scenario.target_availability", "(0, 1]"],
    );
    let b0 = common::scenario_path("b0");
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["evaluate", &b0, "--target=-0.5", "--trials", "10"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("--target") && err.contains("(0, 1]"), "{err}");
}

#[test]
fn zero_trials_on_the_command_line() {
    let b0 = common::scenario_path("b0");
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["evaluate", &b0, "--trials", "0"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("--trials"), "{err}");
}

#[test]
fn position_names_a_missing_part_type() {
    refuses(
        "position",
        &b0_with(
            "positions = [\"engine\", \"pump\", \"belt\"]",
            "positions = [\"engine\", \"pmup\", \"belt\"]",
        ),
        &[
            "units.loader.positions[1]",
            "`pmup`",
            "did you mean `pump`?",
        ],
    );
}

#[test]
fn policy_names_a_missing_part_or_leaves_one_out() {
    refuses(
        "policy_extra",
        &b0_with(
            "belt = { rule = \"age\", interval_fraction = 0.9, stock = 2 }",
            "belt = { rule = \"age\", interval_fraction = 0.9, stock = 2 }\nbelts = { rule = \"run_to_failure\", stock = 1 }",
        ),
        &[
            "policies.reference.belts",
            "does not define",
            "did you mean `belt`?",
        ],
    );
    refuses(
        "policy_missing",
        &b0_with(
            "belt = { rule = \"age\", interval_fraction = 0.9, stock = 2 }",
            "",
        ),
        &["policies.reference", "leaves out part type `belt`"],
    );
    let b0 = common::scenario_path("b0");
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["evaluate", &b0, "--policy", "referense", "--trials", "10"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("did you mean `reference`?"), "{err}");
}

#[test]
fn safety_critical_part_run_to_failure_or_past_its_limit() {
    let demo = common::demo_2026_text();
    let line = "brake_actuator = { rule = \"age\", interval_hours = 8000, stock = 2 }";
    assert!(demo.contains(line));
    refuses(
        "safety_rtf",
        &demo.replacen(
            line,
            "brake_actuator = { rule = \"run_to_failure\", stock = 2 }",
            1,
        ),
        &[
            "policies.current",
            "safety-critical",
            "may not be run to failure",
        ],
    );
    refuses(
        "safety_limit",
        &demo.replacen(
            line,
            "brake_actuator = { rule = \"block\", interval_hours = 9000, stock = 2 }",
            1,
        ),
        &[
            "policies.current",
            "past its hard life limit",
            "at most 8000 h",
        ],
    );
    refuses(
        "safety_nolimit",
        &demo.replacen("hard_limit_hours = 8000\n", "", 1),
        &["parts.brake_actuator", "hard_limit_hours"],
    );
}

#[test]
fn rule_and_interval_mismatch() {
    refuses(
        "rule_noint",
        &b0_with(
            "engine = { rule = \"age\", interval_fraction = 0.7, stock = 1 }",
            "engine = { rule = \"age\", stock = 1 }",
        ),
        &["policies.reference.engine", "needs `interval_hours`"],
    );
    refuses(
        "rule_bad",
        &b0_with(
            "engine = { rule = \"age\", interval_fraction = 0.7, stock = 1 }",
            "engine = { rule = \"aeg\", interval_fraction = 0.7, stock = 1 }",
        ),
        &["policies.reference.engine.rule", "did you mean `age`?"],
    );
}

#[test]
fn not_utf8_and_empty() {
    let dir = temp_dir("cli-bin");
    let p = dir.join("binary.toml");
    std::fs::write(&p, [0xff, 0xfe, 0x00, 0x41]).unwrap();
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["check", p.to_str().unwrap()]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("UTF-8"), "{err}");
    refuses("empty", "", &["missing field `scenario`"]);
}

#[test]
fn contradictory_or_empty_fields() {
    refuses(
        "holding_both",
        &b0_with(
            "holding = { fraction_of_price = 0.2, per_hours = 6000 }",
            "holding = { fraction_of_price = 0.2, per_hours = 6000, per_spare_hour = 1 }",
        ),
        &["defaults.holding", "not both"],
    );
    refuses(
        "empty_intervals",
        &b0_with(
            "interval_fractions = [0.5, 0.7, 0.9, 1.1]",
            "interval_fractions = []",
        ),
        &["search.every_part.interval_fractions", "empty"],
    );
    refuses(
        "duplicate_positions",
        &b0_with(
            "positions = [\"engine\", \"pump\", \"belt\"]",
            "positions = [{ name = \"pump#2\", part = \"pump\" }, \"pump\", \"pump\", \"engine\", \"belt\"]",
        ),
        &["units.loader.positions", "`pump#2`"],
    );
    let demo = common::demo_2026_text();
    refuses(
        "safety_false",
        &demo.replacen("safety_critical = true", "safety_critical = false", 1),
        &["parts.brake_actuator", "safety_critical = false"],
    );
}

#[test]
fn frontier_refusals() {
    // --exhaustive on a space far beyond the limit is refused at once.
    let b1 = common::scenario_path("b1");
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["frontier", &b1, "--exhaustive"]);
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("117649000000 policies") && err.contains("--exhaustive"),
        "{err}"
    );
    // A scenario without a search space says what to add.
    let text = scenario("b0");
    let cut = text.find("[search]").expect("b0 has a search table");
    let p = temp_scenario("nosearch", &text[..cut]);
    let Ran {
        code, stderr: err, ..
    } = run_wearout(&["frontier", p.to_str().unwrap()]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("no [search] table"), "{err}");
}

/// A reader that goes away before the output comes (`wearout ... | head`)
/// is no failure: exit status 0 and nothing on stderr (common practice of
/// command-line tools).
#[test]
fn a_closed_output_pipe_is_no_failure() {
    let fans = format!(
        "{}/tests/data/generator_fans.csv",
        env!("CARGO_MANIFEST_DIR")
    );
    let runs: [&[&str]; 3] = [
        &["evaluate", "--trials", "300", "--json"],
        &["evaluate", "--trials", "300"],
        &["fit", &fans],
    ];
    for args in runs {
        let mut child = common::wearout()
            .args(args)
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("wearout starts");
        drop(child.stdout.take());
        let out = child.wait_with_output().expect("wearout ends");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(0), "{args:?}: {err}");
        assert!(err.is_empty(), "{args:?}: {err}");
    }
}
