//! Engine speed and memory on the benchmark fleet B1 (`cargo bench --bench engine`).
//!
//! Reports, for B1's reference policy: trials per second, events per
//! second, and, measured in the same run, the time needed only to draw the
//! random numbers those trials use (the same count of lives and lead times
//! per part type, from the same kind of streams). With `-- --million` it
//! also runs 1 000 000 trials and reports the peak resident memory.

use std::time::Instant;

use rayon::prelude::*;
use wearout::dist::Life;
use wearout::run::{Quiet, evaluate, for_each_trial};
use wearout::sim::Simulator;
use wearout::stream::{StreamKey, TrialSeed};

fn peak_rss_mb() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

fn main() {
    let million = std::env::args().any(|a| a == "--million");
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/b1.toml");
    let model = wearout::scenario::load(std::path::Path::new(path)).expect("b1 loads");
    let policy = model.policy("reference").expect("reference policy").clone();
    let sim = Simulator::new(&model, &policy);
    let n: u64 = 10_000;
    println!(
        "B1 reference policy, {} trials, {} threads",
        n,
        rayon::current_num_threads()
    );

    // Warm up.
    let _ = evaluate(&model, &policy, 0..500, model.target, &Quiet);

    // 1. The whole engine, as `wearout evaluate` runs it.
    let t0 = Instant::now();
    let summary = evaluate(&model, &policy, 0..n, model.target, &Quiet).expect("runs");
    let engine_s = t0.elapsed().as_secs_f64();

    // Count events and the draws each trial used.
    let installed = model.installed_count();
    let mut events = 0u64;
    let mut draws: Vec<(u64, Vec<u64>, Vec<u64>)> = Vec::with_capacity(n as usize);
    for_each_trial(&sim, 0..n, &Quiet, |t, o| {
        events += o.events;
        let lives: Vec<u64> = o
            .parts
            .iter()
            .zip(&installed)
            .map(|(p, &k)| k as u64 + p.failures as u64 + p.planned as u64)
            .collect();
        let leads: Vec<u64> = o.parts.iter().map(|p| p.orders as u64).collect();
        draws.push((t, lives, leads));
    });

    // 2. Only the random numbers: the same lives and lead times, drawn from
    // the same streams and distributions, nothing else.
    let lives: Vec<Life> = model.parts.iter().map(|p| p.life).collect();
    let t1 = Instant::now();
    let checksum: f64 = draws
        .par_iter()
        .map(|(t, nl, nd)| {
            let seed = TrialSeed::new(model.seed, *t);
            let mut acc = 0.0;
            for (p, (&k, &d)) in nl.iter().zip(nd).enumerate() {
                let mut s = seed.stream(StreamKey::Lives {
                    unit: p as u32,
                    position: 0,
                });
                for _ in 0..k {
                    acc += lives[p].sample_residual(0.0, &mut s);
                }
                let mut s = seed.stream(StreamKey::LeadTimes { part: p as u32 });
                for _ in 0..d {
                    acc += model.parts[p].lead_time.sample(&mut s);
                }
            }
            acc
        })
        .sum();
    let rng_s = t1.elapsed().as_secs_f64();

    println!(
        "  engine: {engine_s:.3} s wall, {:.0} trials/s",
        n as f64 / engine_s
    );
    println!(
        "  events: {events} ({:.0} per trial), {:.2} M events/s",
        events as f64 / n as f64,
        events as f64 / engine_s / 1e6
    );
    println!(
        "  random numbers alone: {rng_s:.3} s wall (checksum {checksum:.3e}); engine / random = {:.2}",
        engine_s / rng_s
    );
    println!(
        "  availability mean {:.5} ± {:.5}",
        summary.acc.availability.mean(),
        summary.acc.availability.se()
    );
    if let Some(mb) = peak_rss_mb() {
        println!("  peak resident memory so far: {mb:.1} MB");
    }

    if million {
        let m: u64 = 1_000_000;
        let t = Instant::now();
        let s = evaluate(&model, &policy, 0..m, model.target, &Quiet).expect("runs");
        let secs = t.elapsed().as_secs_f64();
        println!(
            "  1 000 000 trials: {secs:.1} s, availability {:.5} ± {:.6}, peak resident memory {:.1} MB",
            s.acc.availability.mean(),
            s.acc.availability.se(),
            peak_rss_mb().unwrap_or(f64::NAN)
        );
    }
}
