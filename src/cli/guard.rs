//! The run-size guard every command passes before it starts: the run's
//! estimated time and memory (from the library's `estimate`), a refusal at
//! once of a run that cannot finish, and a line on stderr before a large
//! one.
//!
//! Owns: asking the machine for its available memory and the thread
//! count, and what is printed about an estimate.
//! May use: `wearout::estimate`, `wearout::model`.

use std::io::Write;

use wearout::estimate::{self, Estimate};
use wearout::frontier::FrontierConfig;
use wearout::model::{Model, Policy};

use super::CliError;

/// The memory this machine has available (Linux `MemAvailable`), if known.
fn available_memory() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = s.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024.0)
}

/// Refuse a run past the limits, and announce a large one on stderr.
fn check(model: &Model, est: &Estimate) -> Result<(), CliError> {
    est.check(model, available_memory())?;
    if est.worth_announcing() {
        let _ = writeln!(std::io::stderr(), "estimate: {}", est.describe());
    }
    Ok(())
}

/// What is about to run.
pub enum Run<'a> {
    /// `policies` on `trials` trials each, kept for a summary in memory
    /// (`evaluate`, `frontier --policies`).
    Summaries { policies: &'a [Policy], trials: u64 },
    /// `policies` on `trials` trials each, written to a shard file.
    Shard { policies: &'a [Policy], trials: u64 },
    /// A frontier search.
    Search(&'a FrontierConfig),
    /// A merge of `policies` x `trials` records.
    Merge { policies: usize, trials: u64 },
}

/// Estimate `run` on `model` and refuse it or announce it (see the module
/// comment).
///
/// # Errors
/// A user error saying why the run cannot finish and what would work.
pub fn guard(model: &Model, run: Run<'_>) -> Result<(), CliError> {
    let threads = rayon::current_num_threads();
    let est = match run {
        Run::Summaries { policies, trials } => {
            estimate::evaluate(model, policies, trials, threads, true, false)
        }
        Run::Shard { policies, trials } => {
            estimate::evaluate(model, policies, trials, threads, false, true)
        }
        Run::Search(config) => estimate::frontier(model, config, threads),
        Run::Merge { policies, trials } => estimate::merge(model, policies, trials),
    };
    check(model, &est)?;
    super::warn(model);
    Ok(())
}
