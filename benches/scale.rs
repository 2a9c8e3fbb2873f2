//! How run time grows with trials, fleet size and horizon
//! (`cargo bench --bench scale`; `-- --quick` stops the trial series at
//! 10^5). Benchmark B1's reference policy throughout; the fleet series
//! changes B1's truck count (10, 40, 400), the horizon series its horizon.
//! Also: the peak resident memory after the trial series (10^6 trials in
//! one process), the shard file bytes per trial, and the estimate the
//! command line prints before a run beside the measured time.
//!
//! Every row prints microseconds per trial (and per truck-trial or per
//! 1 000 h-trial); linear growth shows as a flat column.

#[path = "../tests/common/mod.rs"]
mod common;

use std::time::Instant;

use common::peak_rss_mb;

use wearout::model::Model;
use wearout::run::{Quiet, evaluate};
use wearout::scenario::Source;
use wearout::shard::{self, RunKind, ShardHeader, ShardSpec};

fn b1_with(trucks: usize, horizon: f64) -> (Model, String) {
    let text = common::scenario_text("b1")
        .replacen("count = 40", &format!("count = {trucks}"), 1)
        .replacen(
            "horizon_hours = 30000",
            &format!("horizon_hours = {horizon}"),
            1,
        );
    let model = wearout::scenario::parse("b1.toml", &text).expect("b1 variant parses");
    (model, text)
}

/// Seconds to evaluate the reference policy on `trials` trials.
fn time_run(model: &Model, trials: u64) -> f64 {
    let policy = model.policy("reference").expect("reference policy");
    let t = Instant::now();
    let s = evaluate(model, policy, 0..trials, model.target, &Quiet).expect("runs");
    let secs = t.elapsed().as_secs_f64();
    assert_eq!(s.trials(), trials);
    secs
}

fn estimate_s(model: &Model, trials: u64) -> f64 {
    let policy = model.policy("reference").expect("reference policy");
    wearout::estimate::evaluate(
        model,
        std::slice::from_ref(policy),
        trials,
        rayon::current_num_threads(),
        true,
        false,
    )
    .seconds
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let threads = rayon::current_num_threads();
    println!("Scale of B1 (reference policy), {threads} threads; times are wall seconds.");
    let (b1, text) = b1_with(40, 30_000.0);
    // Warm up.
    let _ = time_run(&b1, 500);

    println!("\n1. Trials (40 trucks, 30 000 h)");
    println!(
        "{:>10} {:>10} {:>14} {:>12}",
        "trials", "seconds", "us per trial", "estimate s"
    );
    let top: u32 = if quick { 5 } else { 6 };
    let mut base: Option<f64> = None;
    for e in 3..=top {
        let n = 10u64.pow(e);
        let s = time_run(&b1, n);
        let per = s / n as f64 * 1e6;
        let b = *base.get_or_insert(per);
        println!(
            "{:>10} {:>10.2} {:>14.1} {:>12.1}   (x{:.2} of the first row per trial)",
            n,
            s,
            per,
            estimate_s(&b1, n),
            per / b
        );
    }
    if let Some(mb) = peak_rss_mb() {
        println!("   peak resident memory after 10^{top} trials in this process: {mb:.1} MB");
    }

    println!("\n2. Fleet size (2 000 trials, 30 000 h)");
    println!(
        "{:>10} {:>10} {:>14} {:>20} {:>12}",
        "trucks", "seconds", "us per trial", "us per truck-trial", "estimate s"
    );
    for trucks in [10usize, 40, 400] {
        let (m, _) = b1_with(trucks, 30_000.0);
        let s = time_run(&m, 2000);
        println!(
            "{:>10} {:>10.2} {:>14.1} {:>20.2} {:>12.1}",
            trucks,
            s,
            s / 2000.0 * 1e6,
            s / 2000.0 / trucks as f64 * 1e6,
            estimate_s(&m, 2000)
        );
    }

    println!("\n3. Horizon (2 000 trials, 40 trucks)");
    println!(
        "{:>10} {:>10} {:>14} {:>22} {:>12}",
        "hours", "seconds", "us per trial", "us per 1000 h-trial", "estimate s"
    );
    for h in [7_500.0, 15_000.0, 30_000.0, 60_000.0] {
        let (m, _) = b1_with(40, h);
        let s = time_run(&m, 2000);
        println!(
            "{:>10} {:>10.2} {:>14.1} {:>22.2} {:>12.1}",
            h,
            s,
            s / 2000.0 * 1e6,
            s / 2000.0 / (h / 1000.0) * 1e6,
            estimate_s(&m, 2000)
        );
    }

    println!("\n4. Shard files (2 000 trials, 30 000 h)");
    println!(
        "{:>10} {:>14} {:>16} {:>16} {:>14}",
        "trucks", "file bytes", "header bytes", "bytes per trial", "write s"
    );
    for trucks in [10usize, 40, 400] {
        let (m, t) = if trucks == 40 {
            (b1.clone(), text.clone())
        } else {
            b1_with(trucks, 30_000.0)
        };
        let policy = m.policy("reference").expect("reference").clone();
        let source = Source {
            file: Some("scenarios/b1.toml".into()),
            dir: None,
            text: t,
        };
        let h = ShardHeader::new(
            &m,
            &source,
            RunKind::Evaluate,
            std::slice::from_ref(&policy),
            0..2000,
            ShardSpec::WHOLE,
            m.target,
        );
        let mut v = Vec::new();
        let w = shard::write_shard(&h, &m, std::slice::from_ref(&policy), &Quiet, &mut v)
            .expect("writes");
        println!(
            "{:>10} {:>14} {:>16} {:>16.1} {:>14.2}",
            trucks,
            w.bytes,
            w.bytes - w.record_bytes,
            w.record_bytes as f64 / w.records as f64,
            w.seconds
        );
    }
    if let Some(mb) = peak_rss_mb() {
        println!("\npeak resident memory of the whole bench: {mb:.1} MB");
    }
}
