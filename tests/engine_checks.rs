//! The event simulation checked against published results of reliability,
//! renewal and inventory theory. Each check names its source; the figures
//! were copied from the project's reference data (computed with scipy where
//! so marked, cross-checked a second way there).
//!
//! Tolerances are multiples of the simulation's own standard error (fixed
//! seeds, so the checks do not flake); where a small deterministic bias is
//! known (start-up transients), the horizon is long enough to make it far
//! smaller than the standard error.

mod common;

use common::{OnePart, model, run, within};
use wearout::analytic;
use wearout::dist::Life;

const INSTANT: &str = r#"{ dist = "fixed", hours = 0 }"#;

/// Series system of exponential parts: the first stop of a unit is
/// exponential with mean 1 / sum(1/m_i) (any reliability textbook, e.g.
/// Barlow & Proschan 1965; the figures below are the reference data's
/// `series_exponential_4`, computed-scipy). With means 1000, 2000, 4000,
/// 8000 h the system mean is 533.33 h, far below the smallest mean 1000 h,
/// and the chance that a unit runs 1000 h without a stop is exp(-1.875) =
/// 0.15335497.
#[test]
fn series_of_four_exponentials() {
    let parts: String = [1000, 2000, 4000, 8000]
        .iter()
        .enumerate()
        .map(|(i, m)| {
            format!(
                r#"
[parts.p{i}]
life = {{ dist = "exponential", mean = {m} }}
price = 1
labour = {{ planned = 0, unplanned = 0 }}
duration_hours = {{ planned = 0, unplanned = 1e-6 }}
lead_time = {{ dist = "fixed", hours = 0 }}
holding = {{ per_spare_hour = 0 }}
"#
            )
        })
        .collect();
    let text = |horizon: f64| {
        format!(
            r#"
[scenario]
name = "series"
horizon_hours = {horizon}
downtime_penalty_per_hour = 0
target_availability = 1.0
seed = 5
{parts}
[units.u]
positions = ["p0", "p1", "p2", "p3"]
[[fleet]]
unit = "u"
count = 1
[policies.x]
p0 = {{ rule = "run_to_failure", stock = 1 }}
p1 = {{ rule = "run_to_failure", stock = 1 }}
p2 = {{ rule = "run_to_failure", stock = 1 }}
p3 = {{ rule = "run_to_failure", stock = 1 }}
"#
        )
    };
    // Survival past the smallest mean: a trial with no stop has availability 1.
    let m = model(&text(1000.0));
    let n = 40_000;
    let s = run(&m, "x", n);
    let p = 0.153_354_97; // exp(-1.875)
    let c = s.chance_at(1.0);
    within(
        "P(no stop in 1000 h)",
        c.value,
        p,
        (p * (1.0 - p) / n as f64).sqrt(),
        4.0,
    );

    // Mean time between stops: failures over a long horizon with instant
    // renewal form a Poisson process of rate sum(1/m_i).
    let h = 200_000.0;
    let m = model(&text(h));
    let s = run(&m, "x", 200);
    let rate = s.acc.failures.mean() / h;
    let se = s.acc.failures.se() / h;
    let system_mean = 533.333_333;
    within("stop rate", rate, 1.0 / system_mean, se, 4.0);
    // The mean of the minimum is far below the minimum of the means (1000 h):
    // a plan on the smallest mean life overstates the time to the first stop
    // by a factor 1.875.
    assert!(1.0 / (rate + 4.0 * se) < 0.6 * 1000.0);
}

/// Run to failure with instant, always-available replacement: the expected
/// number of failures by t is the renewal function M(t) (Feller; values for
/// Weibull lives from the reference data `renewal_weibull_beta*`,
/// computed-scipy by solving the renewal equation, with a Monte Carlo
/// cross-check there).
#[test]
fn failures_follow_the_weibull_renewal_function() {
    let cases = [
        (1.5, 5.0, 5.269_16),
        (2.0, 2.0, 1.894_039_3),
        (2.0, 5.0, 5.278_515_8),
        (3.0, 1.0, 0.672_329_1),
        (3.0, 5.0, 5.165_274_5),
    ];
    for (shape, t_over_eta, m_ref) in cases {
        let eta = 1000.0;
        let units = 50;
        let text = OnePart {
            life: &format!(r#"{{ dist = "weibull", shape = {shape}, scale = {eta} }}"#),
            units,
            positions: 1,
            horizon: t_over_eta * eta,
            price: 1.0,
            labour_planned: 0.0,
            labour_unplanned: 0.0,
            duration_planned: 0.0,
            duration_unplanned: 0.0,
            lead: INSTANT,
            policy: r#"{ rule = "run_to_failure", stock = 1 }"#,
        }
        .text();
        let m = model(&text);
        let s = run(&m, "x", 1000);
        let per_unit = s.acc.failures.mean() / units as f64;
        let se = s.acc.failures.se() / units as f64;
        within(
            &format!("M({t_over_eta}) for shape {shape}"),
            per_unit,
            m_ref,
            se,
            4.0,
        );
    }
}

fn cost_rate_per_position(text: &str, positions: f64, horizon: f64, trials: u64) -> (f64, f64) {
    let m = model(text);
    let s = run(&m, "x", trials);
    let scale = horizon * positions;
    (s.acc.total.mean() / scale, s.acc.total.se() / scale)
}

/// Age replacement with ample stock and no down time: the long-run cost per
/// operating hour is Barlow & Proschan's (1965, Mathematical Theory of
/// Reliability) C(T) = (cp R(T) + cf F(T)) / int_0^T R. Reference optimum for
/// Weibull shape 2, cf/cp = 5 (reference data `age_replacement_beta2_r5`,
/// computed-scipy): T* = 0.510655 eta, C* = 4.085242 cp / eta. The curve is
/// flat near the optimum, so the interval is checked on a grid and the cost
/// tightly.
#[test]
fn age_replacement_matches_barlow_proschan() {
    let eta = 1000.0;
    let horizon = 2.0e6;
    let units = 20;
    let life = Life::weibull(2.0, eta).unwrap();
    let grid = [0.3, 0.4, 0.5, 0.6, 0.7, 0.8];
    let mut simulated = Vec::new();
    for f in grid {
        let text = OnePart {
            life: &format!(r#"{{ dist = "weibull", shape = 2, scale = {eta} }}"#),
            units,
            positions: 1,
            horizon,
            price: 0.0,
            labour_planned: 1.0,
            labour_unplanned: 5.0,
            duration_planned: 0.0,
            duration_unplanned: 0.0,
            lead: INSTANT,
            policy: &format!(
                r#"{{ rule = "age", interval_hours = {}, stock = 1 }}"#,
                f * eta
            ),
        }
        .text();
        let (rate, se) = cost_rate_per_position(&text, units as f64, horizon, 20);
        let formula = analytic::age_replacement_cost_rate(&life, 1.0, 5.0, f * eta);
        within(&format!("age cost rate at {f} eta"), rate, formula, se, 4.0);
        simulated.push(rate);
    }
    // The best grid point is the one nearest the published optimum 0.5107.
    let best = simulated
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .map(|(i, _)| grid[i])
        .unwrap();
    assert_eq!(best, 0.5);
    // At the published optimum itself the cost rate is C* = 4.085242 / eta.
    let text = OnePart {
        life: &format!(r#"{{ dist = "weibull", shape = 2, scale = {eta} }}"#),
        units,
        positions: 1,
        horizon,
        price: 0.0,
        labour_planned: 1.0,
        labour_unplanned: 5.0,
        duration_planned: 0.0,
        duration_unplanned: 0.0,
        lead: INSTANT,
        policy: &format!(
            r#"{{ rule = "age", interval_hours = {}, stock = 1 }}"#,
            0.510_655 * eta
        ),
    }
    .text();
    let (rate, se) = cost_rate_per_position(&text, units as f64, horizon, 20);
    within("C* (age)", rate, 4.085_242 / eta, se, 4.0);
}

/// Block replacement: cost per operating hour (cp + cf M(T)) / T (Barlow &
/// Proschan 1965). Reference optimum for Weibull shape 2, cf/cp = 5
/// (reference data `block_replacement_beta2_r5`, computed-scipy):
/// T* = 0.50772 eta, C* = 4.30759 cp / eta.
#[test]
fn block_replacement_matches_renewal_cost() {
    let eta = 1000.0;
    let horizon = 2.0e6;
    let units = 20;
    let text = OnePart {
        life: &format!(r#"{{ dist = "weibull", shape = 2, scale = {eta} }}"#),
        units,
        positions: 1,
        horizon,
        price: 0.0,
        labour_planned: 1.0,
        labour_unplanned: 5.0,
        duration_planned: 0.0,
        duration_unplanned: 0.0,
        lead: INSTANT,
        policy: &format!(
            r#"{{ rule = "block", interval_hours = {}, stock = 1 }}"#,
            0.507_72 * eta
        ),
    }
    .text();
    let (rate, se) = cost_rate_per_position(&text, units as f64, horizon, 20);
    within("C* (block)", rate, 4.307_59 / eta, se, 4.0);
    // And away from the optimum, against the renewal-function formula.
    let life = Life::weibull(2.0, eta).unwrap();
    let t = 0.8 * eta;
    let text = OnePart {
        life: &format!(r#"{{ dist = "weibull", shape = 2, scale = {eta} }}"#),
        units,
        positions: 1,
        horizon,
        price: 0.0,
        labour_planned: 1.0,
        labour_unplanned: 5.0,
        duration_planned: 0.0,
        duration_unplanned: 0.0,
        lead: INSTANT,
        policy: &format!(r#"{{ rule = "block", interval_hours = {t}, stock = 1 }}"#),
    }
    .text();
    let (rate, se) = cost_rate_per_position(&text, units as f64, horizon, 20);
    let formula = analytic::block_replacement_cost_rate(&life, 1.0, 5.0, t);
    within("block cost rate at 0.8 eta", rate, formula, se, 4.0);
}

/// Base stock, one-for-one, with Poisson demand: by Palm's theorem (Palm
/// 1938; Sherbrooke, Optimal Inventory Modeling of Systems, 2004) the number
/// of orders in resupply is Poisson with mean (demand rate x mean lead time)
/// whatever the lead-time distribution. With pipeline mean 2.5 and S = 3
/// (reference data `poisson_spares_m2.5`, computed-scipy): the share of
/// demands met from the shelf is P(X <= 2) = 0.5438131159, and the mean
/// number of demands waiting is EBO(3) = 0.4131956097.
#[test]
fn base_stock_matches_palm() {
    let units = 1000;
    let mean_life = 400_000.0; // demand 0.0025 per hour
    let horizon = 2.0e6;
    let lead_mean = 1000.0;
    let leads = [
        format!(
            r#"{{ dist = "lognormal", median_hours = {}, log_sd = 0.6 }}"#,
            lead_mean / (0.18f64).exp()
        ),
        format!(r#"{{ dist = "gamma", mean_hours = {lead_mean}, cv = 0.5 }}"#),
        format!(r#"{{ dist = "fixed", hours = {lead_mean} }}"#),
    ];
    for lead in &leads {
        let text = OnePart {
            life: &format!(r#"{{ dist = "exponential", mean = {mean_life} }}"#),
            units,
            positions: 1,
            horizon,
            price: 1.0,
            labour_planned: 0.0,
            labour_unplanned: 0.0,
            duration_planned: 0.0,
            duration_unplanned: 0.0,
            lead,
            policy: r#"{ rule = "run_to_failure", stock = 3 }"#,
        }
        .text();
        let m = model(&text);
        let trials = 30;
        let s = run(&m, "x", trials);
        // Share of demands that found the store empty, per trial.
        let mut share = wearout::summary::Moments::default();
        let mut waiting = wearout::summary::Moments::default();
        // Recompute per trial from a second pass of the same trials.
        let sim = wearout::sim::Simulator::new(&m, m.policy("x").unwrap());
        let mut ws = wearout::sim::Workspace::default();
        for t in 0..trials {
            let o = sim.run(t, &mut ws);
            let p = &o.parts[0];
            share.push(p.stockouts as f64 / p.orders as f64);
            waiting.push(o.down_waiting / horizon);
        }
        assert_eq!(s.trials(), trials);
        within(
            &format!("share of demands finding the store empty ({lead})"),
            share.mean(),
            1.0 - 0.543_813_115_9,
            share.se(),
            4.0,
        );
        within(
            &format!("mean number waiting ({lead})"),
            waiting.mean(),
            0.413_195_609_7,
            waiting.se(),
            4.0,
        );
    }
}

/// Parts of one unit due at the same reading are replaced together, not
/// one after the other: "Replacements on different positions of one unit
/// run in parallel" (MODEL.md, Conventions; the reference model of this
/// project). Two positions under block replacement every 100 h share their
/// grid; a planned replacement takes 10 h; lives are Weibull with a scale
/// of 10^9 h, so no part fails within the 1 000 h horizon (the chance is
/// about 10^-18 per part). Parts age only while the unit is up, so the
/// k-th grid point falls at 100 k + 10 (k - 1) h: nine grid points before
/// 1 000 h, 10 h down at each, 90 h in all and 18 planned replacements per
/// unit (worked by hand). Done one after the other, each grid point would
/// hold the unit down 20 h: 160 h in eight grid points.
#[test]
fn parts_due_at_one_reading_are_replaced_together() {
    let text = OnePart {
        life: r#"{ dist = "weibull", shape = 3.0, scale = 1e9 }"#,
        units: 3,
        positions: 2,
        horizon: 1000.0,
        price: 1.0,
        labour_planned: 1.0,
        labour_unplanned: 1.0,
        duration_planned: 10.0,
        duration_unplanned: 10.0,
        lead: INSTANT,
        policy: r#"{ rule = "block", interval_hours = 100, stock = 2 }"#,
    }
    .text();
    let s = run(&model(&text), "x", 20);
    let a = &s.acc;
    assert_eq!(a.failures.mean(), 0.0);
    assert_eq!(a.planned.mean(), 3.0 * 18.0);
    assert!(
        (a.down_planned.mean() - 3.0 * 90.0).abs() < 1e-9,
        "planned down hours {}",
        a.down_planned.mean()
    );
}
