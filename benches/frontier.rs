//! Frontier speed on the benchmark fleets (`cargo bench --bench frontier`).
//!
//! B1: the search with 2 000 search trials and 10 000 validation trials
//! (target: under 2 minutes on two cores, at least 8 non-dominated policies
//! spanning chances from below 0.6 to above 0.97). B0: `--exhaustive`
//! over all 8 000 policies on the scenario's 500 search trials (target:
//! under a minute), and the search on the same trials beside it.
//! With `--b2` only: B2 (three garages, a depot, rotables, a ready-units
//! target) with 2 000 search and 10 000 validation trials (target: under
//! 3 minutes on two cores, at least 8 non-dominated policies spanning
//! chances from below 0.6 to above 0.97).

#[path = "../tests/common/mod.rs"]
mod common;

use std::time::Instant;

use common::load;

use wearout::frontier::{FrontierConfig, FrontierResult, hypervolume, search};
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

fn report(name: &str, r: &FrontierResult, secs: f64) {
    let chances: Vec<f64> = r.points.iter().map(|p| p.costed.chance.value).collect();
    println!(
        "{name}: {secs:.1} s wall (screening {:.1} s, search {:.1} s, validation {:.1} s); {} policies in full of {}; {} non-dominated after re-costing, chances {:.3} to {:.3}",
        r.stats.seconds_screening,
        r.stats.seconds_search,
        r.stats.seconds_validation,
        r.stats.evaluated,
        r.space_size,
        r.points.len(),
        chances.iter().copied().fold(f64::INFINITY, f64::min),
        chances.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    );
}

fn main() {
    println!("threads: {}", rayon::current_num_threads());
    if std::env::args().any(|a| a == "--b2") {
        let b2 = load("b2");
        let t = Instant::now();
        let r = search(&b2, &config(2000, 10_000, b2.target, false), &Quiet).expect("B2 frontier");
        report("B2 frontier 2000/10000", &r, t.elapsed().as_secs_f64());
        return;
    }
    let b1 = load("b1");
    let t = Instant::now();
    let r = search(&b1, &config(2000, 10_000, b1.target, false), &Quiet).expect("B1 frontier");
    report("B1 frontier 2000/10000", &r, t.elapsed().as_secs_f64());

    let b0 = load("b0");
    let n = b0.search.as_ref().map_or(500, |s| s.search_trials);
    let t = Instant::now();
    let ex = search(&b0, &config(n, 10_000, b0.target, true), &Quiet).expect("B0 exhaustive");
    report(
        &format!("B0 exhaustive {n}/10000"),
        &ex,
        t.elapsed().as_secs_f64(),
    );
    let t = Instant::now();
    let se = search(&b0, &config(n, 10_000, b0.target, false), &Quiet).expect("B0 search");
    report(
        &format!("B0 search {n}/10000"),
        &se,
        t.elapsed().as_secs_f64(),
    );
    let pts = |r: &FrontierResult| -> Vec<(f64, f64)> {
        r.search_frontier
            .iter()
            .map(|(_, c, k)| (c.mean, k.value))
            .collect()
    };
    let (pe, ps) = (pts(&ex), pts(&se));
    let cost_ref = 1.01 * pe.iter().map(|p| p.0).fold(f64::MIN, f64::max);
    println!(
        "B0 hypervolume of search / exhaustive on the same {n} trials: {:.5}",
        hypervolume(&ps, cost_ref) / hypervolume(&pe, cost_ref)
    );
}
