//! A part's life fitted in a scenario from the new kinds of records: a
//! removal log with its meter readings, and the Weibull with an assumed
//! shape (which works with no failures), with its parameter uncertainty
//! carried into the trials.
//!
//! Sources: the assumed-shape bound and its chi-square form (Nelson,
//! Applied Life Data Analysis, 1982, ch. 6; Epstein 1960 for the
//! time-censored exponential bound; from memory), worked by hand in
//! tests/fit_records.rs; the coverage of a one-sided bound is its
//! definition. Tolerances are binomial standard errors, fixed seeds.

mod common;

use std::path::{Path, PathBuf};

use wearout::dist::Life;
use wearout::fit::{
    Family, Sample, fit_assumed_shape, fit_mle, read_records_or_log, samples_by_part,
};
use wearout::scenario::{self, LoadError};
use wearout::sim::Simulator;
use wearout::stream::{StreamKey, TrialSeed};
use wearout::uncertainty::LifeUncertainty;

fn folder(tag: &str) -> PathBuf {
    common::temp_dir(&format!("fit-scenario-{tag}"))
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// One part type `pad` on 4 one-position units, run to failure.
fn scenario_text(life: &str) -> String {
    format!(
        r#"
[scenario]
name = "records-life"
horizon_hours = 8000
downtime_penalty_per_hour = 0
target_availability = 0.9
seed = 5

[parts.pad]
life = {life}
price = 1
labour = {{ planned = 0, unplanned = 0 }}
duration_hours = {{ planned = 0, unplanned = 10 }}
lead_time = {{ dist = "fixed", hours = 0 }}
holding = {{ per_spare_hour = 0 }}

[units.u]
positions = ["pad"]

[[fleet]]
unit = "u"
count = 4

[policies.x]
pad = {{ rule = "run_to_failure", stock = 1 }}
"#
    )
}

const LOG: &str = "unit,position,part,fitted_at,removed_at,reason\n\
    T01,left,pad,0,1800,planned\nT01,left,pad,1800,3050,failure\nT01,left,pad,3050,,\n\
    T02,left,pad,0,1400,breakdown\nT02,left,pad,1400,2600,failure\nT02,left,pad,2600,,\n\
    T03,left,pad,300,2500,failure\nT03,left,pad,2500,,\n";
const METERS: &str = "unit,meter,log_start\nT01,6000,0\nT02,4500,0\nT03,5200,1000\n";

#[test]
fn a_removal_log_in_a_scenario_gives_the_direct_fit() {
    let dir = folder("log");
    let log = write(&dir, "removals.csv", LOG);
    let meters = write(&dir, "meters.csv", METERS);
    let p = write(
        &dir,
        "s.toml",
        &scenario_text(r#"{ records = "removals.csv", meters = "meters.csv", dist = "weibull" }"#),
    );
    let m = scenario::load(&p).unwrap().model;
    let (records, _) = read_records_or_log(&log, Some(&meters)).unwrap();
    let sample = samples_by_part(&records).remove(0);
    // By hand: failures 3050 - 1800 = 1250, 1400, 2600 - 1400 = 1200 and
    // 2500 - 300 = 2200 (entered at 1000 - 300 = 700 h: the log of T03
    // began at 1000 h); suspensions 1800, 6000 - 3050 = 2950,
    // 4500 - 2600 = 1900, 5200 - 2500 = 2700.
    assert_eq!(sample.failures(), vec![1200.0, 1250.0, 1400.0, 2200.0]);
    assert_eq!(sample.suspensions(), vec![1800.0, 1900.0, 2700.0, 2950.0]);
    assert_eq!(sample.counts().truncated, 1);
    let fit = fit_mle(&sample, Family::Weibull).unwrap();
    assert_eq!(m.parts[0].life, fit.life());
    let u = m.parts[0].life_uncertainty.as_ref().unwrap();
    assert_eq!(u.covariance(), fit.log_param_covariance());
    // Without the meters, the parts still fitted cannot be aged.
    let p = write(
        &dir,
        "no-meters.toml",
        &scenario_text(r#"{ records = "removals.csv", dist = "weibull" }"#),
    );
    match scenario::load(&p) {
        Err(LoadError::Invalid(e)) => {
            assert_eq!(e.path, "parts.pad.life.records", "{e}");
            assert!(
                e.message.contains("line 4") && e.message.contains("meter"),
                "{e}"
            );
        }
        other => panic!("{other:?}"),
    }
    let p = write(
        &dir,
        "missing-meters.toml",
        &scenario_text(r#"{ records = "removals.csv", meters = "nowhere.csv", dist = "weibull" }"#),
    );
    match scenario::load(&p) {
        Err(LoadError::Invalid(e)) => {
            assert_eq!(e.path, "parts.pad.life.meters", "{e}");
            assert!(e.message.contains("nowhere.csv"), "{e}");
        }
        other => panic!("{other:?}"),
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// No failures at all: the assumed shape gives the scale with one failure
/// assumed, and each trial draws a scale whose 5% quantile is the 95%
/// lower bound (chi-square, 2 d.f.).
#[test]
fn assumed_shape_without_failures_in_a_scenario() {
    let dir = folder("shape");
    write(
        &dir,
        "pads.csv",
        "part,life,kind\npad,1000,S\npad,1500,S\npad,2000,S\npad,2500,S\n",
    );
    let p = write(
        &dir,
        "s.toml",
        &scenario_text(r#"{ records = "pads.csv", dist = "weibull", assumed_shape = 2.0 }"#),
    );
    let m = scenario::load(&p).unwrap().model;
    // By hand (tests/fit_records.rs): scale sqrt(13 500 000) = 3674.2346 h.
    match m.parts[0].life {
        Life::Weibull { shape, scale, .. } => {
            assert_eq!(shape, 2.0);
            assert!((scale - 3674.2346142).abs() < 1e-6, "{scale}");
        }
        other => panic!("{other:?}"),
    }
    let u = m.parts[0].life_uncertainty.as_ref().unwrap();
    assert!(u.is_uncertain());
    let lower = 2122.8308245;
    let mut rng = TrialSeed::new(3, 0).stream(StreamKey::Parameters { part: 0 });
    let n = 20_000;
    let below = (0..n)
        .filter(|_| match u.draw(&mut rng) {
            Life::Weibull { shape, scale, .. } => {
                assert_eq!(shape, 2.0);
                scale < lower
            }
            other => panic!("{other:?}"),
        })
        .count();
    let share = below as f64 / n as f64;
    let se = (0.05f64 * 0.95 / n as f64).sqrt();
    assert!((share - 0.05).abs() < 4.0 * se, "{share}");
    // With uncertainty on, the trials draw their own lives, reproducibly.
    let mut on = m.clone();
    on.parameter_uncertainty = true;
    let sim = Simulator::new(&on, on.policy("x").unwrap());
    assert!(sim.draws_lives());
    let (mut a, mut b) = (Vec::new(), Vec::new());
    sim.trial_lives(&TrialSeed::new(on.seed, 9), &mut a);
    sim.trial_lives(&TrialSeed::new(on.seed, 9), &mut b);
    assert_eq!(a, b);
    assert_ne!(a[0], m.parts[0].life);

    // `assumed_shape` fixes a Weibull shape: other families are refused at `dist`.
    let p = write(
        &dir,
        "lognormal.toml",
        &scenario_text(r#"{ records = "pads.csv", dist = "lognormal", assumed_shape = 2.0 }"#),
    );
    match scenario::load(&p) {
        Err(LoadError::Invalid(e)) => {
            assert_eq!(e.path, "parts.pad.life.dist", "{e}");
            assert!(e.message.contains("weibull"), "{e}");
        }
        other => panic!("{other:?}"),
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// The one-sided 95% lower bound covers the true scale in at least 95% of
/// samples (time-censored data make the 2r + 2 form conservative; the
/// definition of a confidence bound): 2000 samples of 10 parts from a
/// Weibull(2, 1000) watched to 600 h, few failures each.
#[test]
fn assumed_shape_bound_covers_the_truth() {
    let life = Life::weibull(2.0, 1000.0).unwrap();
    let m = 2000;
    let mut covered = 0;
    for k in 0..m {
        let mut rng = TrialSeed::new(77, k).stream(StreamKey::Lives {
            unit: 0,
            position: 0,
        });
        let (mut f, mut s) = (Vec::new(), Vec::new());
        for _ in 0..10 {
            let t = life.sample_residual(0.0, &mut rng);
            if t <= 600.0 {
                f.push(t);
            } else {
                s.push(600.0);
            }
        }
        let fit = fit_assumed_shape(&Sample::new("p", f, s).unwrap(), 2.0, 0.95).unwrap();
        covered += (fit.assumed.unwrap().scale_lower <= 1000.0) as usize;
    }
    let c = covered as f64 / m as f64;
    let se = (0.95f64 * 0.05 / m as f64).sqrt();
    eprintln!("coverage of the 95% lower bound: {c:.4}");
    assert!(c >= 0.95 - 4.0 * se, "{c}");
    assert!(c < 1.0, "a bound that always covers says nothing");
    // The draw of an assumed-shape fit is a pure function of the stream.
    let s = Sample::new("p", vec![500.0], vec![600.0; 9]).unwrap();
    let fit = fit_assumed_shape(&s, 2.0, 0.95).unwrap();
    let u = LifeUncertainty::from_fit(&fit, &s).unwrap();
    let mut r1 = TrialSeed::new(1, 1).stream(StreamKey::Parameters { part: 0 });
    let mut r2 = TrialSeed::new(1, 1).stream(StreamKey::Parameters { part: 0 });
    assert_eq!(u.draw(&mut r1), u.draw(&mut r2));
    assert_eq!(fit.sample_life(&mut r1), fit.sample_life(&mut r2));
}
