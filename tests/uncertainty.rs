//! Life parameters fitted to few failures, and their estimation uncertainty
//! carried into the trials.
//!
//! The records are six failure times drawn (fixed seed) from a Weibull of
//! shape 3 and scale 1000 h and written to a temporary folder next to the
//! scenario that references them. With six failures the shape's standard
//! error is about a third of the shape (for a complete sample of n the
//! asymptotic variance of the shape estimate is 6 beta^2 / (pi^2 n), so
//! se(ln beta) is about 0.78 / sqrt(n); Cohen, Technometrics 7, 1965,
//! 579-588, quoted from memory), so trials that draw their own parameters
//! must spread wider than trials that use the point estimate.
//!
//! Tolerances are multiples of standard errors, on fixed seeds.

mod common;

use std::path::{Path, PathBuf};

use wearout::dist::Life;
use wearout::fit::{Family, Sample, fit_mle};
use wearout::model::Model;
use wearout::run::{Quiet, evaluate};
use wearout::scenario::{self, LoadError, ScenarioError};
use wearout::sim::{Simulator, Workspace};
use wearout::stream::{StreamKey, TrialSeed};
use wearout::summary::Summary;

/// Six failure hours from Weibull(shape 3, scale 1000 h), rounded to 0.1 h,
/// from a fixed stream.
fn six_failures() -> Vec<f64> {
    let truth = Life::weibull(3.0, 1000.0).unwrap();
    let mut rng = TrialSeed::new(0, 0).stream(StreamKey::InitialAges);
    (0..6)
        .map(|_| (truth.sample_residual(0.0, &mut rng) * 10.0).round() / 10.0)
        .collect()
}

/// A fresh folder for one test.
fn folder(tag: &str) -> PathBuf {
    common::temp_dir(&format!("uncertainty-{tag}"))
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    if let Some(parent) = p.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    std::fs::write(&p, text).unwrap();
    p
}

fn records_csv(failures: &[f64]) -> String {
    let mut s =
        String::from("# invented test records: six failures, no suspensions\nhours,failed\n");
    for f in failures {
        s.push_str(&format!("{f},1\n"));
    }
    s
}

/// One part type `bearing` on `units` one-position units; `life` and the
/// policy as given. Unplanned work takes `down` hours, planned work none;
/// spares arrive at once.
fn scenario_text(life: &str, units: usize, horizon: f64, down: f64, policy: &str) -> String {
    format!(
        r#"
[scenario]
name = "few-failures"
horizon_hours = {horizon}
downtime_penalty_per_hour = 0
target_availability = 0.999
seed = 17

[parts.bearing]
life = {life}
price = 1
labour = {{ planned = 0, unplanned = 0 }}
duration_hours = {{ planned = 0, unplanned = {down} }}
lead_time = {{ dist = "fixed", hours = 0 }}
holding = {{ per_spare_hour = 0 }}

[units.u]
positions = ["bearing"]

[[fleet]]
unit = "u"
count = {units}

[policies.x]
bearing = {policy}
"#
    )
}

/// Load a scenario written to `dir` that references `records.csv` there.
fn load_with_records(dir: &Path, units: usize, horizon: f64, down: f64, policy: &str) -> Model {
    write(dir, "records.csv", &records_csv(&six_failures()));
    let life = r#"{ records = "records.csv", dist = "weibull" }"#;
    let p = write(
        dir,
        "scenario.toml",
        &scenario_text(life, units, horizon, down, policy),
    );
    match scenario::load(&p) {
        Ok(loaded) => loaded.model,
        Err(e) => panic!("{e}"),
    }
}

fn with_uncertainty(m: &Model, on: bool) -> Model {
    let mut m = m.clone();
    m.parameter_uncertainty = on;
    m
}

fn run(m: &Model, n: u64) -> Summary {
    let p = m.policy("x").unwrap().clone();
    evaluate(m, &p, 0..n, m.target, &Quiet).unwrap()
}

/// Sample variance and the standard error of the sample variance,
/// sqrt((m4 - s^4) / n) (Kendall & Stuart, *The Advanced Theory of
/// Statistics* vol. 1, sec. 10.5: var(s^2) = (mu4 - sigma^4) / n + O(1/n^2)).
fn variance_and_se(xs: &[f64]) -> (f64, f64) {
    let n = xs.len() as f64;
    let mean = xs.iter().sum::<f64>() / n;
    let m2 = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n;
    let m4 = xs.iter().map(|x| (x - mean).powi(4)).sum::<f64>() / n;
    (m2 * n / (n - 1.0), ((m4 - m2 * m2) / n).sqrt())
}

/// The scenario reads the records, fits them, and keeps the fit's point
/// estimate and covariance: the same as fitting the records directly.
#[test]
fn records_reference_gives_the_direct_fit() {
    let dir = folder("direct");
    let m = load_with_records(
        &dir,
        1,
        1000.0,
        1.0,
        r#"{ rule = "run_to_failure", stock = 1 }"#,
    );
    let sample = Sample::new("all", six_failures(), vec![]).unwrap();
    let fit = fit_mle(&sample, Family::Weibull).unwrap();
    let part = &m.parts[0];
    assert_eq!(part.life, fit.life());
    let u = part.life_uncertainty.as_ref().unwrap();
    assert_eq!(u.point(), fit.life());
    assert_eq!(u.covariance(), fit.log_param_covariance());
    assert_eq!(u.family(), Family::Weibull);
    assert!(!m.parameter_uncertainty, "off unless asked for");

    // A records file in a subfolder, several parts, one chosen by name; and
    // `best` picks the lowest AIC among the MLE fits that can be trusted.
    let mut csv = String::from("part,hours,failed\n");
    for f in six_failures() {
        csv.push_str(&format!("bearing,{f},1\nseal,{},1\n", f / 2.0));
    }
    write(&dir, "data/two.csv", &csv);
    let life = r#"{ records = "data/two.csv", dist = "best", part = "seal" }"#;
    let p = write(
        &dir,
        "two.toml",
        &scenario_text(
            life,
            1,
            1000.0,
            1.0,
            r#"{ rule = "run_to_failure", stock = 1 }"#,
        ),
    );
    let m = scenario::load(&p).unwrap().model;
    let halves: Vec<f64> = six_failures().iter().map(|f| f / 2.0).collect();
    let seal = Sample::new("seal", halves, vec![]).unwrap();
    let best = wearout::fit::fit_part(&seal).unwrap();
    assert_eq!(m.parts[0].life, best.best_reliable().unwrap().life());
    // Without `part`, the scenario's part name picks the rows.
    let life = r#"{ records = "data/two.csv", dist = "weibull" }"#;
    let p = write(
        &dir,
        "by-name.toml",
        &scenario_text(
            life,
            1,
            1000.0,
            1.0,
            r#"{ rule = "run_to_failure", stock = 1 }"#,
        ),
    );
    let m = scenario::load(&p).unwrap().model;
    assert_eq!(m.parts[0].life, fit.life());
    let _ = std::fs::remove_dir_all(&dir);
}

/// (a) Availability spreads wider across trials when each trial draws its
/// own parameters. By the law of total variance,
/// `Var(A) = E[Var(A | theta)] + Var(E[A | theta])`; the second term is the parameter uncertainty, and
/// with six failures it dominates: a fleet of 10 units run to failure over
/// 20 000 h sees about 230 renewals, so the renewal noise is small next to
/// a mean life uncertain by about 14 %.
#[test]
fn spread_of_availability_is_wider_with_uncertainty() {
    let dir = folder("spread");
    let m = load_with_records(
        &dir,
        10,
        20_000.0,
        50.0,
        r#"{ rule = "run_to_failure", stock = 10 }"#,
    );
    let n = 4000;
    let off = run(&with_uncertainty(&m, false), n);
    let on = run(&with_uncertainty(&m, true), n);
    let (v_off, se_off) = variance_and_se(&off.acc.trial_availability);
    let (v_on, se_on) = variance_and_se(&on.acc.trial_availability);
    let (sd_off, sd_on) = (v_off.sqrt(), v_on.sqrt());
    println!(
        "availability sd across {n} trials: off {sd_off:.5}, on {sd_on:.5}; mean off {:.5}, on {:.5}",
        off.acc.availability.mean(),
        on.acc.availability.mean()
    );
    // Independent-sample standard error of the difference; the two runs
    // share their streams, which only makes the difference less noisy.
    let se = (se_off * se_off + se_on * se_on).sqrt();
    assert!(
        v_on - v_off > 4.0 * se,
        "variance on {v_on:.3e} not above off {v_off:.3e} by 4 se ({se:.3e})"
    );
    // The parameter term, estimated from the very draws the trials used:
    // by the renewal-reward theorem (Ross, *Stochastic Processes*, 2nd ed.,
    // 1996, sec. 3.6) a unit run to failure with repairs of d hours is up a
    // long-run fraction mu / (mu + d) of the time, mu the mean life.
    let u = m.parts[0].life_uncertainty.as_ref().unwrap();
    let long_run: Vec<f64> = (0..n)
        .map(|t| {
            let mut rng = TrialSeed::new(m.seed, t).stream(StreamKey::Parameters { part: 0 });
            let mu = u.draw(&mut rng).mean();
            mu / (mu + 50.0)
        })
        .collect();
    let (v_param, se_param) = variance_and_se(&long_run);
    println!(
        "sd of mu/(mu+d) over the trials' draws: {:.5}; on minus off variance {:.3e}, parameter term {v_param:.3e}",
        v_param.sqrt(),
        v_on - v_off
    );
    // On minus off should be the parameter term; the renewal term E[Var(A |
    // theta)] differs from Var(A | theta-hat) only by its dependence on
    // theta, which is of the order of the (small) off variance itself.
    let gap = (v_on - v_off - v_param).abs();
    let tol = 4.0 * (se * se + se_param * se_param).sqrt() + v_off;
    assert!(gap < tol, "gap {gap:.3e} over {tol:.3e}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// (b) The chance of meeting a target near 1 falls. One unit, its part
/// replaced at age 150 h (about 0.16 of the characteristic life) over
/// 1500 h, repairs of 50 h: the target 0.999 is met exactly when the unit
/// never fails, which with the point estimate happens with probability
/// R(150)^10, about 0.97 (age replacement renews the part every 150 h;
/// Barlow & Proschan, *Mathematical Theory of Reliability*, 1965, ch. 4).
/// Early failures are ruled by the lower tail of the shape, and six
/// failures leave shapes from about 1.7 to 6 plausible: a low shape makes
/// failures before 150 h several times likelier, a high one cannot raise a
/// chance already near 1 by much, so averaged over the plausible
/// parameters the chance drops.
#[test]
fn chance_near_one_drops_with_uncertainty() {
    let dir = folder("chance");
    let (t, k) = (150.0, 10u64);
    let m = load_with_records(
        &dir,
        1,
        t * k as f64,
        50.0,
        r#"{ rule = "age", interval_hours = 150, stock = 1 }"#,
    );
    let n = 20_000u64;
    let off = run(&with_uncertainty(&m, false), n);
    let on = run(&with_uncertainty(&m, true), n);
    let c_off = off.chance().value;
    let c_on = on.chance().value;

    // Off: the renewal argument's exact chance.
    let p_hat = m.parts[0].life.sf(t).powi(k as i32);
    let se_off = (p_hat * (1.0 - p_hat) / n as f64).sqrt();
    assert!(
        (c_off - p_hat).abs() < 4.0 * se_off,
        "off: {c_off} vs R(T)^k = {p_hat}"
    );

    // On: given each trial's drawn parameters theta_t the chance is
    // R_t(T)^k, so the count of trials meeting the target has mean
    // sum p_t and variance sum p_t (1 - p_t) (a sum of independent
    // Bernoulli trials).
    let u = m.parts[0].life_uncertainty.as_ref().unwrap();
    let p: Vec<f64> = (0..n)
        .map(|i| {
            let mut rng = TrialSeed::new(m.seed, i).stream(StreamKey::Parameters { part: 0 });
            u.draw(&mut rng).sf(t).powi(k as i32)
        })
        .collect();
    let mean_p = p.iter().sum::<f64>() / n as f64;
    let var_count: f64 = p.iter().map(|q| q * (1.0 - q)).sum();
    let se_on = var_count.sqrt() / n as f64;
    assert!(
        (c_on - mean_p).abs() < 4.0 * se_on,
        "on: {c_on} vs mean R_t(T)^k = {mean_p}"
    );
    println!(
        "chance of A >= 0.999: off {c_off:.4} (R(T)^k = {p_hat:.4}), on {c_on:.4} (mean of R_t(T)^k = {mean_p:.4}), n = {n}"
    );
    // Trial by trial, not just on average: the quarter of trials whose
    // drawn parameters give the lowest chance meet the target at the rate
    // those parameters give (so the trials ran on their own draws).
    let mut order: Vec<usize> = (0..n as usize).collect();
    order.sort_by(|&a, &b| p[a].total_cmp(&p[b]));
    let low = &order[..n as usize / 4];
    let met = low
        .iter()
        .filter(|&&i| on.acc.trial_availability[i] >= m.target)
        .count() as f64;
    let expect: f64 = low.iter().map(|&i| p[i]).sum();
    let sd: f64 = low.iter().map(|&i| p[i] * (1.0 - p[i])).sum::<f64>().sqrt();
    assert!(
        (met - expect).abs() < 4.0 * sd,
        "lowest quarter: {met} met, expected {expect:.1} +- {sd:.1}"
    );
    println!(
        "lowest quarter of draws: {:.4} met vs {:.4} expected",
        met / low.len() as f64,
        expect / low.len() as f64
    );
    // The drop itself, beyond both runs' noise.
    let se = (se_off * se_off + se_on * se_on).sqrt();
    assert!(c_off - c_on > 4.0 * se, "no clear drop: {c_off} -> {c_on}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// (c) With uncertainty on, results do not depend on the thread count, a
/// trial run alone equals the same trial in a batch, and two policies see
/// the same drawn lives.
#[test]
fn uncertain_trials_are_reproducible() {
    let dir = folder("repro");
    let m = load_with_records(
        &dir,
        3,
        3000.0,
        20.0,
        r#"{ rule = "age", interval_hours = 500, stock = 1 }"#,
    );
    let on = with_uncertainty(&m, true);
    let policy = on.policy("x").unwrap().clone();
    // More than one block of trials, so the fold crosses a block boundary.
    let n = wearout::run::BLOCK + 300;
    let in_pool = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| evaluate(&on, &policy, 0..n, on.target, &Quiet).unwrap())
    };
    let one = in_pool(1);
    let two = in_pool(2);
    assert_eq!(one, two);
    for k in [0, 7, wearout::run::BLOCK, n - 1] {
        let alone = evaluate(&on, &policy, k..k + 1, on.target, &Quiet).unwrap();
        let i = k as usize;
        assert_eq!(
            alone.acc.trial_availability[0],
            one.acc.trial_availability[i]
        );
        assert_eq!(alone.acc.trial_total[0], one.acc.trial_total[i]);
        assert_eq!(alone.acc.trial_spend[0], one.acc.trial_spend[i]);
    }
    // The checked run (invariants asserted after every event) agrees.
    let sim = Simulator::new(&on, &policy);
    assert!(sim.draws_lives());
    let mut ws = Workspace::default();
    for k in 0..50 {
        let o = sim.run_checked(k, &mut ws);
        assert_eq!(o, sim.run(k, &mut ws));
        assert_eq!(o.availability, one.acc.trial_availability[k as usize]);
    }
    // Uncertainty changes the trials...
    let off = evaluate(&m, &policy, 0..n, m.target, &Quiet).unwrap();
    assert_ne!(off.acc.trial_availability, one.acc.trial_availability);
    // ...but not what policies share: another policy's trial draws the same
    // lives, and they differ from trial to trial.
    let mut other = policy.clone();
    other.parts[0].stock = wearout::model::Stock::single(3);
    let sim2 = Simulator::new(&on, &other);
    let (mut a, mut b, mut c) = (Vec::new(), Vec::new(), Vec::new());
    let s5 = TrialSeed::new(on.seed, 5);
    sim.trial_lives(&s5, &mut a);
    sim2.trial_lives(&s5, &mut b);
    sim.trial_lives(&TrialSeed::new(on.seed, 6), &mut c);
    assert_eq!(a, b);
    assert_ne!(a, c);
    assert_ne!(a[0], on.parts[0].life);
    let _ = std::fs::remove_dir_all(&dir);
}

fn load_error(dir: &Path, tag: &str, life: &str) -> ScenarioError {
    let p = write(
        dir,
        &format!("{tag}.toml"),
        &scenario_text(
            life,
            1,
            1000.0,
            1.0,
            r#"{ rule = "run_to_failure", stock = 1 }"#,
        ),
    );
    match scenario::load(&p) {
        Err(LoadError::Invalid(e)) => e,
        Err(e) => panic!("{tag}: not a scenario error: {e}"),
        Ok(_) => panic!("{tag}: loaded"),
    }
}

/// (d) Load errors name the field `parts.bearing.life.records`, the
/// scenario file, and say what went wrong in the records' own words.
#[test]
fn records_errors_name_the_field() {
    let dir = folder("errors");
    let field = "parts.bearing.life.records";

    let e = load_error(
        &dir,
        "missing",
        r#"{ records = "nowhere.csv", dist = "weibull" }"#,
    );
    assert_eq!(e.path, field, "{e}");
    assert!(e.file.ends_with("missing.toml"), "{e}");
    assert!(
        e.message.contains("cannot read") && e.message.contains("nowhere.csv"),
        "{e}"
    );

    write(
        &dir,
        "running.csv",
        "hours,status\n1200,running\n800,suspended\n1500,S\n",
    );
    let e = load_error(
        &dir,
        "no-failures",
        r#"{ records = "running.csv", dist = "weibull" }"#,
    );
    assert_eq!(e.path, field, "{e}");
    assert!(e.message.contains("no failures"), "{e}");
    assert!(e.message.contains("running.csv"), "{e}");

    // Embedded text has no folder to look in.
    let text = scenario_text(
        r#"{ records = "records.csv", dist = "weibull" }"#,
        1,
        1000.0,
        1.0,
        r#"{ rule = "run_to_failure", stock = 1 }"#,
    );
    let e = scenario::parse("embedded.toml", &text).unwrap_err();
    assert_eq!(e.path, field, "{e}");
    assert!(e.message.contains("not read from a file"), "{e}");
    // A line and column that point into the life table.
    assert!(
        text.lines().nth(e.line - 1).unwrap().contains("records"),
        "{e}"
    );

    // Other mistakes of the same table, at their own fields.
    write(&dir, "records.csv", &records_csv(&six_failures()));
    let e = load_error(
        &dir,
        "bad-dist",
        r#"{ records = "records.csv", dist = "weibul" }"#,
    );
    assert_eq!(e.path, "parts.bearing.life.dist", "{e}");
    assert!(e.message.contains("did you mean `weibull`"), "{e}");
    let e = load_error(
        &dir,
        "bad-part",
        r#"{ records = "records.csv", dist = "weibull", part = "pump" }"#,
    );
    assert_eq!(e.path, "parts.bearing.life.part", "{e}");
    assert!(e.message.contains("no part 'pump'"), "{e}");
    let e = load_error(
        &dir,
        "extra-key",
        r#"{ records = "records.csv", dist = "weibull", shape = 2 }"#,
    );
    assert_eq!(e.path, "parts.bearing.life.shape", "{e}");
    // One failure cannot fix a Weibull's two parameters.
    write(&dir, "one.csv", "hours,failed\n900,1\n1200,0\n");
    let e = load_error(
        &dir,
        "one-failure",
        r#"{ records = "one.csv", dist = "weibull" }"#,
    );
    assert_eq!(e.path, field, "{e}");
    assert!(e.message.contains("only one failure"), "{e}");
    let _ = std::fs::remove_dir_all(&dir);
}
