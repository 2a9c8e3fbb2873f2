//! The frontier search over sites and a depot under a ready-units target,
//! checked against trying every policy of a small two-site space.

mod common;

use common::model;

use wearout::frontier::{FrontierConfig, FrontierResult, hypervolume, search};
use wearout::model::Measure;
use wearout::recost::non_dominated;
use wearout::run::Quiet;

/// Two garages (4 and 3 buses) under a depot, a rotable motor and a
/// consumable valve, ready units at each garage; invented data. Its search
/// space has 2 x 27 x 27 = 1 458 policies (stock 0 to 2 at each garage and
/// at the depot, the motor run to failure or age-replaced at 2 000 h).
const TWO_SITES: &str = r#"[scenario]
name = "two_sites"
description = "Two small garages under a depot (invented data)"
horizon_hours = 6000
downtime_penalty_per_hour = 50
seed = 7
trials = 300

[defaults]
holding = { fraction_of_price = 0.2, per_hours = 4000 }

[sites.a]
[sites.b]

[depot]
transport = { a = { dist = "fixed", hours = 24 }, b = { dist = "fixed", hours = 48 } }

[ready_units]
at_least = { a = 3, b = 2 }
share = 0.9

[parts.motor]
life = { dist = "weibull", shape = 2.0, scale = 3000 }
price = 10000
labour = { planned = 500, unplanned = 1500 }
duration_hours = { planned = 8, unplanned = 16 }
lead_time = { dist = "fixed", hours = 600 }
repair = { time = { dist = "lognormal", median_hours = 300, log_sd = 0.5 }, cost = { planned = 1500, failed = 3000 }, condemn = { planned = 0.05, failed = 0.1 } }

[parts.valve]
life = { dist = "exponential", mean = 1500 }
price = 800
labour = { planned = 50, unplanned = 150 }
duration_hours = { planned = 1, unplanned = 3 }
lead_time = { dist = "fixed", hours = 200 }

[units.bus]
positions = ["motor", "valve", "valve"]

[[fleet]]
unit = "bus"
count = 4
site = "a"

[[fleet]]
unit = "bus"
count = 3
site = "b"

[policies.reference]
motor = { rule = "age", interval_hours = 2000, stock = { depot = 1, every_site = 1 } }
valve = { rule = "run_to_failure", stock = { depot = 1, every_site = 1 } }

[search]
cost = "spend"
statistic = "mean"
trials = 300
validate_trials = 300

[search.every_part]
rules = ["run_to_failure"]
stock = { every_site = { min = 0, max = 2 }, depot = { min = 0, max = 2 } }

[search.parts.motor]
rules = ["run_to_failure", "age"]
interval_hours = [2000]
"#;

fn config(search_trials: u64, target: f64, exhaustive: bool) -> FrontierConfig {
    FrontierConfig {
        exhaustive,
        ..FrontierConfig::new(search_trials, 200, target)
    }
}

fn points(r: &FrontierResult) -> Vec<(f64, f64)> {
    r.search_frontier
        .iter()
        .map(|(_, c, k)| (c.mean, k.value))
        .collect()
}

/// On the two-site case the frontier found by the search, on the same
/// search trials, covers at least 99 % of the hypervolume of the frontier
/// found by trying all 1 458 policies, while simulating at most 5 % of
/// them in full (the bound issue 15 sets for the search). Hypervolume
/// (Zitzler & Thiele 1998) in (cost, chance) space against the reference
/// point (1.01 x the dearest exhaustive-frontier cost, chance 0).
#[test]
fn two_site_search_matches_exhaustive() {
    let m = model(TWO_SITES);
    assert_eq!(m.measure(), Measure::Readiness);
    let n = 300;
    let exhaustive = search(&m, &config(n, m.target, true), &Quiet).unwrap();
    // At most 5 % of the space in full: 72 of 1 458.
    let searched = search(
        &m,
        &FrontierConfig {
            max_full: 72,
            ..config(n, m.target, false)
        },
        &Quiet,
    )
    .unwrap();
    assert_eq!(exhaustive.stats.evaluated, 1458);
    assert!(
        searched.stats.evaluated * 20 <= 1458,
        "the search simulated {} policies in full",
        searched.stats.evaluated
    );
    let ex = points(&exhaustive);
    let se = points(&searched);
    let cost_ref = 1.01 * ex.iter().map(|p| p.0).fold(f64::MIN, f64::max);
    let ratio = hypervolume(&se, cost_ref) / hypervolume(&ex, cost_ref);
    eprintln!(
        "two sites: exhaustive frontier {} points, search frontier {} points, hypervolume ratio {ratio:.5}, {} policies in full",
        ex.len(),
        se.len(),
        searched.stats.evaluated
    );
    assert!(ratio >= 0.99, "hypervolume ratio {ratio}");
    // The search can never beat trying everything on the same trials.
    assert!(ratio <= 1.0 + 1e-12);
    // The frontier spans the chances: from below 0.1 to above 0.95.
    let lo = se.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
    let hi = se.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
    assert!(lo < 0.1 && hi > 0.95, "chances {lo} to {hi}");
    // Every reported point is non-dominated among the re-costed ones.
    let re: Vec<(f64, f64)> = searched
        .points
        .iter()
        .map(|p| (p.costed.cost.mean, p.costed.chance.value))
        .collect();
    assert_eq!(non_dominated(&re).len(), re.len());
}
