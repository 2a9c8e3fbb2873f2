//! Engine speed and memory on the benchmark fleet B1 (`cargo bench --bench engine`).
//!
//! Reports, for B1's reference policy: trials per second, events per
//! second, and, measured in the same run, the time needed only to draw the
//! random numbers those trials use: the very same draws (lives per position,
//! initial ages, lead times per part type), from the same streams, with
//! nothing else ([`Simulator::draw_only`]). Each is timed three times,
//! alternately, and the median is reported. With `-- --million` it runs
//! 1 000 000 trials instead and reports the peak resident memory. With
//! `-- --one-thread N` it only runs trials `0..N` of the engine on the
//! calling thread and prints their events, for instruction counts
//! (`--units-up` also counts units up, as `wearout evaluate` does):
//!
//! valgrind --tool=callgrind --toggle-collect='*one_thread*' target/release/deps/engine-* --one-thread 200
//!
//! With `-- --b2` each mode runs the benchmark fleet B2 (three garages, a
//! depot, lateral supply, rotables, a ready-units target) instead; its
//! timing has no random-numbers-alone comparison (the draws of repairs,
//! condemnations and transport are not counted by `draw_only`).

#[path = "../tests/common/mod.rs"]
mod common;

use std::time::Instant;

use common::peak_rss_mb;
use rayon::prelude::*;
use wearout::run::{Quiet, evaluate};
use wearout::sim::{DrawCounts, Simulator, Workspace};

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Trials `0..n` on the calling thread; returns their events.
#[inline(never)]
fn one_thread(sim: &Simulator<'_>, n: u64) -> u64 {
    let mut ws = Workspace::default();
    (0..n).map(|t| sim.run(t, &mut ws).events).sum()
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let million = args.iter().any(|a| a == "--million");
    let b2 = args.iter().any(|a| a == "--b2");
    let name = if b2 { "B2" } else { "B1" };
    let model = common::load(&name.to_lowercase());
    let policy = model.policy("reference").expect("reference policy").clone();
    let sim = Simulator::new(&model, &policy);

    if let Some(i) = args.iter().position(|a| a == "--one-thread") {
        let n: u64 = args
            .get(i + 1)
            .and_then(|s| s.parse().ok())
            .expect("--one-thread N: a number of trials");
        let units_up = args.iter().any(|a| a == "--units-up");
        let sim = if units_up {
            sim.clone().counting_units_up()
        } else {
            sim.clone()
        };
        println!(
            "{name} reference policy, {n} trials on one thread{}: {} events",
            if units_up { ", counting units up" } else { "" },
            one_thread(&sim, n)
        );
        return;
    }

    if million {
        let m: u64 = 1_000_000;
        println!(
            "{name} reference policy, {m} trials, {} threads",
            rayon::current_num_threads()
        );
        let t = Instant::now();
        let s = evaluate(&model, &policy, 0..m, model.target, &Quiet).expect("runs");
        let secs = t.elapsed().as_secs_f64();
        println!(
            "  {secs:.1} s, {:.0} trials/s, availability {:.5} ± {:.6}, chance {:.4}, peak resident memory {:.1} MB",
            m as f64 / secs,
            s.acc.availability.mean(),
            s.acc.availability.se(),
            s.chance().value,
            peak_rss_mb().unwrap_or(f64::NAN)
        );
        return;
    }

    if b2 {
        let n: u64 = 10_000;
        println!(
            "B2 reference policy, {n} trials, {} threads",
            rayon::current_num_threads()
        );
        let _ = evaluate(&model, &policy, 0..500, model.target, &Quiet);
        let mut runs = Vec::new();
        let mut last = None;
        for _ in 0..3 {
            let t0 = Instant::now();
            let s = evaluate(&model, &policy, 0..n, model.target, &Quiet).expect("runs");
            runs.push(t0.elapsed().as_secs_f64());
            last = Some(s);
        }
        let secs = median(runs.clone());
        let mut ws = Workspace::default();
        let events: u64 = (0..1000).map(|t| sim.run(t, &mut ws).events).sum();
        let s = last.expect("ran");
        println!(
            "  engine: {secs:.3} s wall (runs {runs:.3?}), {:.0} trials/s, {:.0} events per trial (first 1 000 trials)",
            n as f64 / secs,
            events as f64 / 1000.0
        );
        println!(
            "  readiness mean {:.5} ± {:.5}, chance {:.4}",
            s.acc.readiness.mean(),
            s.acc.readiness.se(),
            s.chance().value
        );
        if let Some(mb) = peak_rss_mb() {
            println!("  peak resident memory: {mb:.1} MB");
        }
        return;
    }

    let n: u64 = 10_000;
    println!(
        "B1 reference policy, {n} trials, {} threads",
        rayon::current_num_threads()
    );

    // The draws each trial takes, and its events.
    let mut ws = Workspace::default();
    let mut events = 0u64;
    let counts: Vec<DrawCounts> = (0..n)
        .map(|t| {
            let o = sim.run(t, &mut ws);
            events += o.events;
            ws.draw_counts(&o)
        })
        .collect();

    // Warm up.
    let _ = evaluate(&model, &policy, 0..500, model.target, &Quiet);

    let (mut engine, mut rng) = (Vec::new(), Vec::new());
    let (mut checksum, mut draws) = (0.0, 0u64);
    let mut availability = (0.0, 0.0);
    for _ in 0..3 {
        // 1. The whole engine, as `wearout evaluate` runs it.
        let t0 = Instant::now();
        let summary = evaluate(&model, &policy, 0..n, model.target, &Quiet).expect("runs");
        engine.push(t0.elapsed().as_secs_f64());
        availability = (
            summary.acc.availability.mean(),
            summary.acc.availability.se(),
        );

        // 2. Only the random numbers: the same draws, nothing else.
        let t1 = Instant::now();
        (checksum, draws) = counts
            .par_iter()
            .enumerate()
            .map_init(Vec::new, |lives, (t, c)| sim.draw_only(t as u64, c, lives))
            .reduce(|| (0.0, 0), |a, b| (a.0 + b.0, a.1 + b.1));
        rng.push(t1.elapsed().as_secs_f64());
    }
    let (engine_s, rng_s) = (median(engine.clone()), median(rng.clone()));

    println!(
        "  engine: {engine_s:.3} s wall (runs {:.3?}), {:.0} trials/s",
        engine,
        n as f64 / engine_s
    );
    println!(
        "  events: {events} ({:.0} per trial), {:.2} M events/s",
        events as f64 / n as f64,
        events as f64 / engine_s / 1e6
    );
    println!(
        "  random numbers alone: {rng_s:.3} s wall (runs {rng:.3?}), {draws} draws ({:.0} per trial, checksum {checksum:.6e})",
        draws as f64 / n as f64
    );
    println!("  engine / random numbers = {:.2}", engine_s / rng_s);
    println!(
        "  availability mean {:.5} ± {:.5}",
        availability.0, availability.1
    );
    if let Some(mb) = peak_rss_mb() {
        println!(
            "  peak resident memory: {mb:.1} MB (the draw counts kept for the comparison included)"
        );
    }
}
