//! Warnings for inputs that are legal but suspicious: the run goes ahead
//! (exit status 0) and each shows as a `warning:` line on stderr, in the
//! JSON's `warnings` and in the report. The thresholds (a repair or lead
//! time longer than the mean life, lognormal sigma above 3, a mean life
//! shorter than a replacement or under 10 hours) are common practice, not
//! figures from a published source. The fit checks use the rule that a
//! fit's standard errors cannot be trusted with no more failures than
//! parameters (common practice; the fit module's own `judge`).

mod common;

use common::{temp_dir, wearout};

/// A one-part scenario with the given life, lead time, durations and
/// optional extra part keys.
fn scenario(life: &str, lead: &str, durations: &str, extra: &str) -> String {
    format!(
        r#"[scenario]
name = "odd"
horizon_hours = 20000
downtime_penalty_per_hour = 50
target_availability = 0.9
seed = 3

[parts.seal]
life = {life}
price = 300
labour = {{ planned = 20, unplanned = 60 }}
duration_hours = {durations}
lead_time = {lead}
holding = {{ fraction_of_price = 0.2, per_hours = 8760 }}
{extra}

[units.pump]
positions = ["seal"]

[[fleet]]
unit = "pump"
count = 4

[policies.now]
seal = {{ rule = "run_to_failure", stock = 1 }}
"#
    )
}

fn warnings_of(text: &str) -> Vec<String> {
    common::model(text).warnings()
}

#[test]
fn each_suspicious_value_gives_one_warning() {
    let plain = scenario(
        r#"{ dist = "weibull", shape = 2, scale = 5000 }"#,
        r#"{ dist = "fixed", hours = 200 }"#,
        "{ planned = 2, unplanned = 5 }",
        "",
    );
    assert!(warnings_of(&plain).is_empty(), "{:?}", warnings_of(&plain));

    // Lead time 6000 h against a mean life of 5000 x Gamma(1.5) = 4431 h.
    let w = warnings_of(&scenario(
        r#"{ dist = "weibull", shape = 2, scale = 5000 }"#,
        r#"{ dist = "fixed", hours = 6000 }"#,
        "{ planned = 2, unplanned = 5 }",
        "",
    ));
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].contains("lead time") && w[0].contains("4431 h"),
        "{w:?}"
    );

    // A rotable whose repair (fixed 9000 h) outlasts its mean life.
    let w = warnings_of(&scenario(
        r#"{ dist = "exponential", mean = 8000 }"#,
        r#"{ dist = "fixed", hours = 200 }"#,
        "{ planned = 2, unplanned = 5 }",
        r#"repair = { time = { dist = "fixed", hours = 9000 }, cost = { planned = 10, failed = 20 } }"#,
    ));
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].contains("repair") && w[0].contains("8000 h"), "{w:?}");

    // Lognormal sigma 3.5: the 99th percentile is exp(2.3263 x 3.5) =
    // 3437 times the median (2.3263: the standard normal 99 % quantile, from tables).
    let w = warnings_of(&scenario(
        r#"{ dist = "lognormal", median_hours = 500, sigma = 3.5 }"#,
        r#"{ dist = "fixed", hours = 200 }"#,
        "{ planned = 2, unplanned = 5 }",
        "",
    ));
    assert!(w.len() == 1 && w[0].contains("sigma 3.5"), "{w:?}");
    assert!(w[0].contains("3437"), "{w:?}");
    // Sigma 3 exactly is not above 3.
    let w = warnings_of(&scenario(
        r#"{ dist = "lognormal", median_hours = 500, sigma = 3 }"#,
        r#"{ dist = "fixed", hours = 200 }"#,
        "{ planned = 2, unplanned = 5 }",
        "",
    ));
    assert!(w.iter().all(|x| !x.contains("sigma")), "{w:?}");

    // Mean life 40 h, shorter than a 48 h unplanned replacement.
    let w = warnings_of(&scenario(
        r#"{ dist = "exponential", mean = 40 }"#,
        r#"{ dist = "fixed", hours = 20 }"#,
        "{ planned = 2, unplanned = 48 }",
        "",
    ));
    assert!(
        w.len() == 1 && w[0].contains("shorter than a replacement"),
        "{w:?}"
    );

    // Mean life 6 h (shape 1, scale 6): under 10 h; its 2 h replacement
    // and 1 h lead time are shorter, so this is the only warning.
    let w = warnings_of(&scenario(
        r#"{ dist = "weibull", shape = 1, scale = 6 }"#,
        r#"{ dist = "fixed", hours = 1 }"#,
        "{ planned = 1, unplanned = 2 }",
        "",
    ));
    assert!(w.len() == 1 && w[0].contains("under 10 hours"), "{w:?}");
}

/// The command line: exit 0, a `warning:` line on stderr for `check` and
/// `evaluate`, the JSON's `warnings`, the report's box; the demo has none
/// and its JSON has no `warnings` key (unchanged output).
#[test]
fn warnings_reach_stderr_json_and_report() {
    let dir = temp_dir("warnings-cli");
    let file = dir.join("odd.toml");
    std::fs::write(
        &file,
        scenario(
            r#"{ dist = "lognormal", median_hours = 500, sigma = 3.5 }"#,
            r#"{ dist = "fixed", hours = 200 }"#,
            "{ planned = 2, unplanned = 5 }",
            "",
        ),
    )
    .expect("write");
    let out = wearout().arg("check").arg(&file).output().expect("runs");
    assert_eq!(out.status.code(), Some(0));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.lines()
            .any(|l| l.starts_with("warning: part type `seal`")),
        "{err}"
    );

    let report = dir.join("report");
    let out = wearout()
        .args(["evaluate", "--trials", "30", "--json", "--report-dir"])
        .arg(&report)
        .arg(&file)
        .output()
        .expect("runs");
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stderr).contains("warning: part type `seal`"));
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let w = j["warnings"].as_array().expect("warnings array");
    assert!(w.len() == 1 && w[0].as_str().unwrap_or("").contains("sigma 3.5"));
    let html = std::fs::read_to_string(report.join("index.html")).expect("index.html");
    assert!(html.contains("Inputs to check") && html.contains("sigma 3.5"));

    let out = wearout()
        .args(["evaluate", "--trials", "30", "--json"])
        .output()
        .expect("runs");
    assert!(out.status.success());
    assert!(!String::from_utf8_lossy(&out.stderr).contains("warning:"));
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert!(j.get("warnings").is_none());
    let _ = std::fs::remove_dir_all(&dir);
}

/// `--parameter-uncertainty` with no life fitted to records: a warning,
/// and the terminal does not claim that parameters were drawn.
#[test]
fn parameter_uncertainty_with_nothing_fitted_says_so() {
    let out = wearout()
        .args(["evaluate", "--trials", "30", "--parameter-uncertainty"])
        .output()
        .expect("runs");
    assert!(out.status.success());
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        !stdout.contains("life parameters drawn per trial"),
        "{stdout}"
    );
    assert!(
        stdout.contains("no part type's life is fitted to records"),
        "{stdout}"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("warning: parameter uncertainty is on"),
        "{err}"
    );
}

/// `dist = "best"` passes over a lowest-AIC fit whose standard errors
/// cannot be trusted. Two failures at 1000 and 1010 h (three suspensions
/// earlier) give a Weibull of shape about 240 with the lowest AIC, but two
/// failures for two parameters; the exponential (one parameter) is the
/// best fit that can be trusted: its MLE mean is total time on test over
/// failures, (1000 + 1010 + 500 + 600 + 700) / 2 = 1905 h (Lawless,
/// Statistical Models and Methods for Lifetime Data, 2nd ed., sec. 2.2;
/// from memory). `check` says where the life came from and why.
#[test]
fn best_fit_passes_over_an_untrusted_family_and_says_so() {
    let dir = temp_dir("warnings-best");
    std::fs::write(
        dir.join("seals.csv"),
        "part,hours,failed\nseal,1000,1\nseal,1010,1\nseal,500,0\nseal,600,0\nseal,700,0\n",
    )
    .expect("csv");
    let file = dir.join("fitted.toml");
    std::fs::write(
        &file,
        scenario(
            r#"{ records = "seals.csv", dist = "best" }"#,
            r#"{ dist = "fixed", hours = 200 }"#,
            "{ planned = 2, unplanned = 5 }",
            "",
        ),
    )
    .expect("write");
    let m = match wearout::scenario::load(&file) {
        Ok(l) => l.model,
        Err(e) => panic!("{e}"),
    };
    match m.parts[0].life {
        wearout::dist::Life::Exponential { mean } => {
            assert!((mean - 1905.0).abs() < 1e-6, "{mean}")
        }
        ref other => panic!("expected the exponential, got {other:?}"),
    }
    let src = m.parts[0].life_source.as_ref().expect("life source");
    assert_eq!((src.failures, src.suspensions), (2, 3));
    let w = m.warnings();
    assert!(
        w.len() == 1 && w[0].contains("weibull, was passed over"),
        "{w:?}"
    );

    let out = wearout().arg("check").arg(&file).output().expect("runs");
    assert_eq!(out.status.code(), Some(0));
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        stdout.contains("seal: fitted to seals.csv (2 failures, 3 suspensions): exponential"),
        "{stdout}"
    );
    assert!(
        String::from_utf8_lossy(&out.stderr)
            .contains("warning: part type `seal`: life fitted to seals.csv")
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// `space_size` in the frontier's JSON is a whole number (B0's space:
/// (1 run-to-failure + 4 intervals) x 4 stock levels per part, cubed =
/// 8000, as its scenario file says).
#[test]
fn space_size_is_a_whole_number() {
    let b0 = common::scenario_path("b0");
    let out = wearout()
        .args([
            "frontier",
            &b0,
            "--trials",
            "40",
            "--validate-trials",
            "40",
            "--max-full",
            "8",
            "--json",
        ])
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("\"space_size\": 8000,"), "{text}");
}
