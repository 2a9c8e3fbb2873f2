//! Running many trials: parallel over trial blocks, folded in trial order.
//!
//! Owns: how trial indices are split over threads and how their outcomes are
//! folded, so that the thread count and block size never change a result.
//! May use: `sim`, `outcome`, `summary`, `model`, `rayon`. Reports progress through the
//! [`Progress`] observer; never prints.

use std::ops::Range;

use rayon::prelude::*;

use crate::model::{Model, Policy};
use crate::outcome::TrialOutcome;
use crate::sim::{Simulator, Workspace};
use crate::summary::{Accumulator, Summary};

/// Receives progress from long runs. The core never prints; the command
/// line supplies a progress bar, tests supply nothing.
pub trait Progress: Sync {
    /// A new phase of `total` trials begins (e.g. "screening").
    fn phase(&self, _name: &str, _total: u64) {}
    /// `n` more trials are done.
    fn advance(&self, _n: u64) {}
    /// Whether the run should stop early (e.g. after Ctrl-C).
    fn cancelled(&self) -> bool {
        false
    }
}

/// An observer that ignores everything.
#[derive(Debug, Clone, Copy, Default)]
pub struct Quiet;
impl Progress for Quiet {}

/// Trials folded per block: large enough for parallel work, small enough to
/// keep memory flat.
pub const BLOCK: u64 = 1024;

/// Run trials `range` of `sim`, calling `each` on every outcome in trial
/// order. Returns false if the observer cancelled the run.
pub fn for_each_trial(
    sim: &Simulator<'_>,
    range: Range<u64>,
    progress: &dyn Progress,
    mut each: impl FnMut(u64, &TrialOutcome),
) -> bool {
    let mut start = range.start;
    while start < range.end {
        if progress.cancelled() {
            return false;
        }
        let end = (start + BLOCK).min(range.end);
        // The observer is asked before every trial, so a cancelled run stops
        // within about one trial's time even when a block is long (large
        // fleets); a cancelled block is dropped whole, so results never change.
        let outcomes: Vec<Option<TrialOutcome>> = (start..end)
            .into_par_iter()
            .map_init(Workspace::default, |ws, t| {
                (!progress.cancelled()).then(|| sim.run(t, ws))
            })
            .collect();
        if outcomes.iter().any(Option::is_none) {
            return false;
        }
        for (i, o) in outcomes.iter().flatten().enumerate() {
            each(start + i as u64, o);
        }
        progress.advance(end - start);
        start = end;
    }
    true
}

/// Evaluate `policy` on trials `range`; `None` if cancelled.
pub fn evaluate(
    model: &Model,
    policy: &Policy,
    range: Range<u64>,
    target: f64,
    progress: &dyn Progress,
) -> Option<Summary> {
    evaluate_sim(
        model,
        policy,
        Simulator::new(model, policy),
        range,
        target,
        progress,
    )
}

/// As [`evaluate`], counting units up in every trial (the hours with
/// exactly `m` units up), as `wearout evaluate` reports them for every
/// scenario. The other figures are the same.
pub fn evaluate_counting_units(
    model: &Model,
    policy: &Policy,
    range: Range<u64>,
    target: f64,
    progress: &dyn Progress,
) -> Option<Summary> {
    let sim = Simulator::new(model, policy).counting_units_up();
    evaluate_sim(model, policy, sim, range, target, progress)
}

fn evaluate_sim(
    model: &Model,
    policy: &Policy,
    sim: Simulator<'_>,
    range: Range<u64>,
    target: f64,
    progress: &dyn Progress,
) -> Option<Summary> {
    let mut acc = Accumulator::for_model(model);
    let first = range.start;
    if !for_each_trial(&sim, range, progress, |_, o| acc.push(o)) {
        return None;
    }
    Some(Summary::new(model, policy, first, acc, target))
}

/// Evaluate `policy` on trials `range` on the calling thread, reusing `ws`
/// (for callers that parallelise over policies instead of trials). Gives
/// exactly the figures of [`evaluate`].
pub fn evaluate_on_thread(
    model: &Model,
    policy: &Policy,
    range: Range<u64>,
    target: f64,
    ws: &mut Workspace,
) -> Summary {
    let sim = Simulator::new(model, policy);
    let mut acc = Accumulator::for_model(model);
    let first = range.start;
    for t in range {
        acc.push(&sim.run(t, ws));
    }
    Summary::new(model, policy, first, acc, target)
}
