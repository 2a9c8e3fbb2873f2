//! Absurd but well-formed inputs: each either runs within bounded memory
//! and time, or stops at once with a message saying why and what would
//! work; a large run announces its estimated time and memory first.
//! (Common practice: a planning tool refuses a run it cannot finish rather
//! than hang or run out of memory.)

mod common;

use std::io::{BufRead, BufReader};
use std::path::PathBuf;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::{Ran, run_wearout, scenario_text as shipped};

fn with(base: &str, from: &str, to: &str) -> String {
    let s = shipped(base);
    assert!(s.contains(from), "`{from}` not in {base}.toml");
    s.replacen(from, to, 1)
}

fn write(tag: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("wearout-absurd-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let p = dir.join(format!("{tag}.toml"));
    std::fs::write(&p, text).expect("write");
    p
}

/// Refused at once (within `secs`), exit 2, one message with `needles`.
fn refused_at_once(args: &[&str], secs: f64, needles: &[&str]) {
    let Ran {
        code,
        stderr: err,
        seconds: t,
        ..
    } = run_wearout(args);
    assert_eq!(code, Some(2), "{args:?}: {err}");
    assert!(t < secs, "{args:?}: took {t:.1} s to refuse");
    assert!(!err.contains("panicked"), "{err}");
    assert_eq!(err.trim().lines().count(), 1, "one message: {err}");
    for n in needles {
        assert!(err.contains(n), "`{n}` not in: {err}");
    }
}

#[test]
fn a_horizon_of_1e300_hours_is_refused_at_once() {
    let p = write(
        "horizon",
        &with("b1", "horizon_hours = 30000", "horizon_hours = 1e300"),
    );
    refused_at_once(
        &["evaluate", p.to_str().unwrap()],
        5.0,
        &["scenario.horizon_hours", "allowed: up to 1e9 hours"],
    );
}

#[test]
fn a_trillion_trials_are_refused_at_once_with_what_fits() {
    let b1 = common::scenario_path("b1");
    refused_at_once(
        &["evaluate", &b1, "--trials", "1000000000000"],
        5.0,
        &["would need about", "memory", "fewer trials"],
    );
    // A share of it per machine is within bounds (a shard keeps no
    // per-trial figures); merging them all would not be.
    let model = wearout::scenario::parse("b1.toml", &shipped("b1")).expect("b1");
    let p = model.policies[0].clone();
    let share =
        wearout::estimate::evaluate(&model, std::slice::from_ref(&p), 1_000_000, 2, false, true);
    assert!(
        share.check(&model, Some(8e9)).is_ok(),
        "{}",
        share.describe()
    );
    let merge = wearout::estimate::merge(&model, 1, 1_000_000_000_000);
    let e = merge.check(&model, Some(24e9)).unwrap_err().to_string();
    assert!(
        e.contains("at most about") && e.contains("fewer trials"),
        "{e}"
    );
}

#[test]
fn a_weibull_shape_of_1e_6_runs_within_bounds() {
    // With shape 1e-6 a life is 0 or astronomically long (R(t) is about
    // e^-1 over any sane range): a few renewals per position, then none.
    let p = write("shape", &with("b0", "shape = 2.5", "shape = 1e-6"));
    let Ran {
        code,
        stdout: out,
        stderr: err,
        seconds: t,
    } = run_wearout(&["evaluate", p.to_str().unwrap(), "--trials", "200", "--json"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(t < 30.0, "took {t:.1} s");
    assert!(out.contains("\"availability\""), "{out}");
}

#[test]
fn a_lead_time_far_beyond_the_horizon_runs() {
    let p = write(
        "lead",
        &with(
            "b1",
            "lead_time = { dist = \"lognormal\", median_hours = 1200, log_sd = 0.4 }",
            "lead_time = { dist = \"fixed\", hours = 1e8 }",
        ),
    );
    let Ran {
        code,
        stdout: out,
        stderr: err,
        ..
    } = run_wearout(&["evaluate", p.to_str().unwrap(), "--trials", "100", "--json"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.contains("\"orders\""), "{out}");
}

#[test]
fn lives_and_intervals_far_too_short_are_refused_at_once() {
    // A mean life of 1e-300 h with no repair time: each position would be
    // renewed without end.
    let text = shipped("b0");
    let at = text.find("[parts.belt]").expect("belt");
    let belt_end = text[at..]
        .find("\n\n")
        .map(|e| at + e)
        .expect("belt table ends");
    let belt = "[parts.belt]\nlife = { dist = \"exponential\", mean = 1e-300 }\nprice = 10\nlabour = { planned = 1, unplanned = 1 }\nduration_hours = { planned = 0, unplanned = 0 }\nlead_time = { dist = \"fixed\", hours = 0 }\nholding = { per_spare_hour = 0.001 }";
    let tiny = format!("{}{}{}", &text[..at], belt, &text[belt_end..]);
    let p = write("tiny_life", &tiny);
    refused_at_once(
        &["evaluate", p.to_str().unwrap()],
        5.0,
        &[
            "one trial of this run would handle about",
            "`belt`",
            "Shorten the horizon",
        ],
    );
    // An age interval of 1e-300 h on a part replaced in no time. (With a
    // repair time the unit is simply down for that time at each
    // replacement: a bounded, if silly, run.)
    let mut model = wearout::scenario::parse("b0.toml", &text).expect("b0");
    model.parts[0].duration_planned = 0.0;
    model.parts[0].duration_unplanned = 0.0;
    let mut p = model.policies[0].clone();
    p.parts[0].rule = wearout::model::Rule::Age(1e-300);
    let est = wearout::estimate::evaluate(&model, std::slice::from_ref(&p), 10, 2, true, false);
    let e = est.check(&model, None).unwrap_err().to_string();
    assert!(e.contains("would be replaced about"), "{e}");
}

#[test]
fn money_past_the_range_of_doubles_is_refused() {
    let p = write(
        "price",
        &with("b0", "price = 100000", "price = 1.7976931348623157e308"),
    );
    refused_at_once(
        &["frontier", p.to_str().unwrap()],
        5.0,
        &["money of one trial", "parts.engine.price", "larger unit"],
    );
}

#[test]
fn a_fleet_of_a_million_units() {
    // A million small units: runs in bounded memory and says what it will
    // take before it starts.
    let text = "[scenario]\nname = \"million\"\nhorizon_hours = 500\ndowntime_penalty_per_hour = 10\ntarget_availability = 0.9\n\n[parts.pump]\nlife = { dist = \"weibull\", shape = 1.5, scale = 8000 }\nprice = 100\nlabour = { planned = 10, unplanned = 20 }\nduration_hours = { planned = 2, unplanned = 4 }\nlead_time = { dist = \"fixed\", hours = 100 }\nholding = { per_spare_hour = 0.01 }\n\n[units.machine]\npositions = [\"pump\"]\n\n[[fleet]]\nunit = \"machine\"\ncount = 1000000\n\n[policies.p]\npump = { rule = \"run_to_failure\", stock = 50 }\n";
    let p = write("million", text);
    let Ran {
        code,
        stdout: out,
        stderr: err,
        seconds: t,
    } = run_wearout(&["evaluate", p.to_str().unwrap(), "--trials", "2", "--json"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.contains("\"units\": 1000000"), "{out}");
    assert!(t < 60.0, "took {t:.1} s");
    let model = wearout::scenario::parse("million.toml", text).expect("parses");
    let est = wearout::estimate::evaluate(&model, &model.policies, 2, 2, true, false);
    assert!(est.bytes < 2e9, "{}", est.describe());

    // B1 with a million trucks: hours of work, announced before it starts;
    // Ctrl-C stops it within a second even in the middle of a trial.
    let big = write("b1_million", &with("b1", "count = 40", "count = 1000000"));
    let mut child = common::wearout()
        .args(["evaluate", big.to_str().unwrap(), "--trials", "200"])
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn");
    let mut lines = BufReader::new(child.stderr.take().expect("stderr")).lines();
    let first = lines.next().expect("a line").expect("text");
    assert!(first.starts_with("estimate: about"), "{first}");
    assert!(first.contains("peak memory about"), "{first}");
    std::thread::sleep(Duration::from_millis(2500));
    assert!(child.try_wait().expect("status").is_none(), "still running");
    let sent = Instant::now();
    let st = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .expect("kill");
    assert!(st.success());
    let status = child.wait().expect("ends");
    let secs = sent.elapsed().as_secs_f64();
    assert!(secs < 1.0, "took {secs:.2} s to stop");
    assert_eq!(status.code(), Some(130));
}

#[test]
fn a_gamma_life_too_small_to_compute_with_is_refused() {
    // t / scale past the double range makes the incomplete gamma function
    // undefined (statrs refuses arguments outside (0, inf)); found by the
    // fuzz target with an initial age of 1e300 h.
    let p = write(
        "gamma",
        &with(
            "b0",
            "life = { dist = \"weibull\", shape = 2.5, scale = 10000 }",
            "life = { dist = \"gamma\", shape = 2, scale = 1e-9 }",
        )
        .replacen(
            "initial_age = { kind = \"uniform\", low_fraction = 0.0, high_fraction = 1.0 }",
            "initial_age = { kind = \"fixed\", hours = 1e300 }",
            1,
        ),
    );
    refused_at_once(
        &["evaluate", p.to_str().unwrap()],
        5.0,
        &["part type `engine`", "gamma life", "in hours"],
    );
}

#[test]
fn a_gamma_shape_too_large_to_compute_with_is_refused() {
    // The survival function of an aged gamma part takes about `shape`
    // steps of the incomplete gamma series; a shape of 1e12 (found by the
    // long fuzz run, with the initial ages that shape's mean gives) kept a
    // trial's set-up running for longer than the fuzz's hang limit.
    let p = write(
        "gamma-shape",
        &with(
            "b1",
            "life = { dist = \"weibull\", shape = 2.8, scale = 11000 }",
            "life = { dist = \"gamma\", shape = 1e12, scale = 1e9 }",
        ),
    );
    refused_at_once(
        &["evaluate", p.to_str().unwrap()],
        5.0,
        &["parts.final_drive.life.shape", "up to 10 000"],
    );
}
