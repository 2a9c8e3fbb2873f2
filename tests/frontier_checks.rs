//! The frontier search checked against trying every policy (B0), against
//! the Barlow & Proschan age-replacement optimum, and for the properties a
//! reported frontier must have.

mod common;

use common::load;

use wearout::frontier::{FrontierConfig, FrontierResult, hypervolume, search};
use wearout::model::Rule;
use wearout::recost::{VALIDATION_OFFSET, non_dominated};
use wearout::run::Quiet;

fn config(
    search_trials: u64,
    validate_trials: u64,
    target: f64,
    exhaustive: bool,
) -> FrontierConfig {
    FrontierConfig {
        exhaustive,
        ..FrontierConfig::new(search_trials, validate_trials, target)
    }
}

fn points(r: &FrontierResult) -> Vec<(f64, f64)> {
    r.search_frontier
        .iter()
        .map(|(_, c, k)| (c.mean, k.value))
        .collect()
}

/// On B0 the frontier found by the search, on the same search trials,
/// covers at least 99 % of the hypervolume of the frontier found by trying
/// all 8 000 policies, while simulating at most 5 % of them in full.
/// Hypervolume (Zitzler & Thiele 1998) in (cost, chance) space, against the
/// reference point (1.01 x the dearest exhaustive-frontier cost, chance 0).
#[test]
fn b0_search_matches_exhaustive() {
    let m = load("b0");
    let n = 200;
    let exhaustive = search(&m, &config(n, 200, m.target, true), &Quiet).unwrap();
    let searched = search(&m, &config(n, 200, m.target, false), &Quiet).unwrap();
    assert_eq!(exhaustive.stats.evaluated, 8000);
    assert!(
        searched.stats.evaluated <= 400,
        "the search simulated {} policies in full",
        searched.stats.evaluated
    );
    let ex = points(&exhaustive);
    let se = points(&searched);
    let cost_ref = 1.01 * ex.iter().map(|p| p.0).fold(f64::MIN, f64::max);
    let hv_ex = hypervolume(&ex, cost_ref);
    let hv_se = hypervolume(&se, cost_ref);
    let ratio = hv_se / hv_ex;
    eprintln!(
        "B0: exhaustive frontier {} points, search frontier {} points, hypervolume ratio {ratio:.5}, {} policies in full",
        ex.len(),
        se.len(),
        searched.stats.evaluated
    );
    assert!(ratio >= 0.99, "hypervolume ratio {ratio}");
    // The search can never beat trying everything on the same trials.
    assert!(ratio <= 1.0 + 1e-12);
}

/// A single part type under age replacement with ample stock and
/// near-zero durations: every policy meets the target, so the frontier is
/// the cheapest policy, and its interval and cost rate must be Barlow &
/// Proschan's (1965) optimum. Weibull shape 2, cf/cp = 5 (reference data
/// `age_replacement_beta2_r5`, computed-scipy): T* = 0.510655 eta,
/// C* = 4.085242 cp / eta. The curve is flat near T*, so the interval is
/// checked loosely (within 0.06 eta) and the cost tightly.
#[test]
fn single_part_search_finds_the_barlow_proschan_optimum() {
    let eta = 1000.0;
    let horizon = 200_000.0;
    let units = 20;
    let text = format!(
        r#"
[scenario]
name = "bp"
horizon_hours = {horizon}
downtime_penalty_per_hour = 0
target_availability = 0.5
seed = 11

[parts.p]
life = {{ dist = "weibull", shape = 2, scale = {eta} }}
price = 0
labour = {{ planned = 1, unplanned = 5 }}
duration_hours = {{ planned = 0, unplanned = 0 }}
lead_time = {{ dist = "fixed", hours = 0 }}
holding = {{ per_spare_hour = 0 }}

[units.u]
positions = ["p"]

[[fleet]]
unit = "u"
count = {units}

[search]
[search.parts.p]
rules = ["run_to_failure", "age"]
interval_fraction_range = {{ from = 0.30, to = 0.80, step = 0.02 }}
stock = {{ min = 1, max = 1 }}
"#
    );
    let m = common::model(&text);
    let r = search(&m, &config(100, 200, m.target, false), &Quiet).unwrap();
    assert_eq!(
        r.points.len(),
        1,
        "all policies meet the target: one cheapest"
    );
    let best = &r.points[0].costed;
    let t = best.policy.parts[0]
        .rule
        .interval()
        .expect("age replacement is optimal");
    assert!(matches!(best.policy.parts[0].rule, Rule::Age(_)));
    assert!((t / eta - 0.510_655).abs() <= 0.06, "interval {t}");
    let scale = horizon * units as f64;
    let rate = best.cost.mean / scale;
    let se = best.cost.se / scale;
    // The grid's best point costs at most 0.05 % more than C* (formula).
    common::within(
        "optimal cost rate",
        rate,
        4.085_242 / eta,
        se + 0.0005 * 4.085 / eta,
        4.0,
    );
}

/// Every listed policy is non-dominated among the re-costed ones, the
/// re-costing uses trial indices disjoint from the search's, and a
/// safety-critical part never appears as run to failure (the demo's brake
/// actuator has a hard limit).
#[test]
fn reported_frontier_is_honest() {
    let m = common::demo_2026();
    let r = search(&m, &config(300, 600, m.target, false), &Quiet).unwrap();
    assert!(r.points.len() >= 2);
    let pts: Vec<(f64, f64)> = r
        .points
        .iter()
        .map(|p| (p.costed.cost.mean, p.costed.chance.value))
        .collect();
    assert_eq!(non_dominated(&pts), (0..pts.len()).collect::<Vec<_>>());
    for p in &r.points {
        let s = &p.costed.summary;
        assert_eq!(s.trials(), 600);
        assert!(s.first_trial >= VALIDATION_OFFSET);
        assert!(VALIDATION_OFFSET >= r.search_trials);
    }
    let brake = m.part_id("brake_actuator").unwrap();
    let limit = m.parts[brake].hard_limit.unwrap();
    for (pol, _, _) in &r.searched {
        assert!(m.safety_violation(pol).is_none(), "{pol:?}");
        assert!(pol.parts[brake].rule.interval().is_some_and(|t| t <= limit));
    }
    for p in &r.points {
        assert!(m.safety_violation(&p.costed.policy).is_none());
    }
    // Cheapest first, chance rising.
    for w in r.points.windows(2) {
        assert!(w[0].costed.cost.mean <= w[1].costed.cost.mean);
        assert!(w[0].costed.chance.value < w[1].costed.chance.value);
        assert!(w[1].noise.is_some());
    }
}

/// The search is reproducible: same seed, same frontier, whatever the
/// thread count.
#[test]
fn frontier_is_reproducible_across_threads() {
    let m = common::demo_2026();
    let run = |threads| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| search(&m, &config(200, 300, m.target, false), &Quiet).unwrap())
    };
    let a = run(1);
    let b = run(2);
    let key = |r: &FrontierResult| -> Vec<(String, f64, f64)> {
        r.points
            .iter()
            .map(|p| {
                (
                    p.costed.policy.describe(&m),
                    p.costed.cost.mean,
                    p.costed.chance.value,
                )
            })
            .collect()
    };
    assert_eq!(key(&a), key(&b));
}
