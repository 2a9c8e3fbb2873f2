//! Estimates of a run's work, time and memory before it starts, and the
//! limits past which a run is refused at once, with a message saying why and
//! what would work.
//!
//! Owns: the event-count model of one trial (renewals per position from the
//! life distribution, the rule and the repair time; the same with sites,
//! a depot and rotables), the memory model of a
//! run (per-trial figures kept for percentiles, per-thread workspaces, the
//! model itself), the calibration of both against benchmark B1, and the
//! limits.
//! May use: `model`, `dist`, `run` (the block size), `frontier` (its
//! configuration). No I/O and no clock: the caller gives the thread count
//! and the memory the machine has available.
//!
//! The event count is an upper-leaning estimate: each position renews about
//! `H / (E[min(X, T)] + d)` times over the horizon `H` (Wald's identity for
//! the truncated cycles; `X` the life, `T` the interval or the horizon, `d`
//! the shorter repair time), each renewal costing about
//! [`EVENTS_PER_RENEWAL`] events (the failure or due event, and the awaited
//! arrival when the store is empty). `E[min(X, T)]` is a lower
//! Riemann sum of the survival function on a geometric grid, which stays
//! finite and conservative for absurd parameters (a Weibull shape of 1e-6,
//! a mean life of 1e-300 h) where closed forms overflow.

use crate::frontier::FrontierConfig;
use crate::model::{Model, PartPolicy, Policy, Rule, Stock};
use crate::run::BLOCK;

/// Events per renewal of a position: its failure or due event and, when
/// the store is empty, the awaited arrival (counted as if always). A
/// replacement that nothing can interrupt is finished within its demand's
/// event, and an arrival nobody waits for is booked when the store is next
/// used, so neither is an event of its own.
pub const EVENTS_PER_RENEWAL: f64 = 2.0;
/// Engine time per event and per position of the event's unit, in
/// nanoseconds, on one core of the project's 2-core machine (calibrated on
/// B1's reference policy: see docs/performance.md, "Measured figures").
pub const NS_PER_EVENT: f64 = 120.0;
/// Engine time per position per trial (drawing the initial ages and lives;
/// measured on a fleet of a million units, where memory traffic dominates).
pub const NS_PER_POSITION: f64 = 300.0;
/// The most events one trial may handle: about 20 s on one core. A trial is
/// the unit of work that cannot be split or interrupted early; past this a
/// scenario is almost surely mistyped (hours for years, a life in minutes).
pub const MAX_EVENTS_PER_TRIAL: f64 = 1.5e8;
/// The longest run one process is allowed: 30 days.
pub const MAX_SECONDS: f64 = 30.0 * 86_400.0;
/// Runs estimated past this many seconds are announced before they start.
pub const ANNOUNCE_SECONDS: f64 = 10.0;
/// Runs estimated past this many bytes are announced before they start.
pub const ANNOUNCE_BYTES: f64 = 1.0e9;
/// Share of the available memory a run may plan to use.
pub const MEMORY_SHARE: f64 = 0.8;
/// Bytes of per-trial figures a summary keeps per trial and policy (three
/// doubles with the slack of a growing vector, and the sorted copies made
/// for percentiles).
pub const BYTES_PER_KEPT_TRIAL: f64 = 64.0;
/// Bytes per position of one thread's workspace (state, clocks, streams,
/// event slots); measured about 70 on a fleet of a million units.
pub const BYTES_PER_POSITION: f64 = 80.0;
/// Bytes per unit of one thread's workspace (unit state, tournament tree).
pub const BYTES_PER_UNIT: f64 = 120.0;
/// Bytes per unit of the model (the flattened unit list and what the
/// scenario's reading leaves behind), held once.
pub const MODEL_BYTES_PER_UNIT: f64 = 100.0;
/// Memory of the process before any run (program, runtime, buffers).
pub const BASE_BYTES: f64 = 24.0e6;
/// Shard-file bytes per record: a fixed part and a part per part type
/// (measured on B1; see docs/performance.md).
pub const SHARD_BYTES_FIXED: f64 = 36.0;
pub const SHARD_BYTES_PER_PART: f64 = 26.0;
/// Shard-file bytes per site (its up, ready and backorder hours, its
/// counts) and per part type's network figures (repairs, requests,
/// shipments, transfers, their costs and hours), per record.
pub const SHARD_BYTES_PER_SITE: f64 = 27.0;
pub const SHARD_BYTES_PER_NETWORK_PART: f64 = 20.0;

/// The largest money one trial may add up: beyond it the squares taken for
/// standard errors overflow double precision (about 1.8e308).
pub const MAX_TRIAL_MONEY: f64 = 1.0e150;

/// The smallest gamma scale the engine is run with, in hours.
pub const MIN_GAMMA_SCALE: f64 = 1e-6;

/// Why a run is refused before it starts.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum EstimateError {
    #[error("part type `{part}`: {why}")]
    Life { part: String, why: String },
    #[error(
        "the money of one trial could reach about {money:.1e}, past the {max:.0e} that means and standard errors can be computed for (the largest figure is `{field}`); give money in a larger unit (thousands or millions) or check the figure"
    )]
    Money { money: f64, max: f64, field: String },
    #[error(
        "one trial of this run would handle about {events:.1e} events, more than the {max:.0e} allowed (about 20 s of one core): part type `{part}` would be replaced about {renewals:.1e} times per position over the {horizon} h horizon ({why}). Shorten the horizon, lengthen the life or the interval, or check that every figure of the scenario is in hours"
    )]
    TrialTooLong {
        events: f64,
        max: f64,
        part: String,
        renewals: f64,
        horizon: f64,
        why: String,
    },
    #[error(
        "this run would need about {need} of memory ({what}), but about {have} is available; {fix}"
    )]
    Memory {
        need: String,
        have: String,
        what: String,
        fix: String,
    },
    #[error(
        "this run would take about {time} on {threads} thread(s) ({work}), more than the {max} one process is allowed; {fix}"
    )]
    Time {
        time: String,
        threads: usize,
        work: String,
        max: String,
        fix: String,
    },
}

/// The work of one trial of one policy.
#[derive(Debug, Clone, PartialEq)]
pub struct TrialWork {
    /// Expected events (upper-leaning).
    pub events: f64,
    /// Engine nanoseconds on one core.
    pub nanos: f64,
    /// The part type with the most renewals per position, and that count.
    pub busiest: Option<(usize, f64)>,
    /// A generous bound of the money one trial can add up (parts, labour,
    /// holding of the whole stock, penalty for the whole fleet down).
    pub money: f64,
}

/// What a run is estimated to cost before it starts.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// Trial runs (trials times policies, screening included).
    pub trial_runs: f64,
    /// Events of the costliest single trial.
    pub max_trial_events: f64,
    /// Its part type with the most renewals per position and that count.
    pub busiest: Option<(String, f64)>,
    /// The largest money bound of one trial (see [`TrialWork::money`]).
    pub max_trial_money: f64,
    /// Mean events per trial run.
    pub mean_events: f64,
    /// Wall seconds on `threads` threads.
    pub seconds: f64,
    pub threads: usize,
    /// Peak memory, bytes.
    pub bytes: f64,
    /// Per-trial figures kept in memory (trials times policies).
    pub kept_trials: f64,
    /// Bytes of the shard file written, if any.
    pub shard_bytes: Option<f64>,
}

/// Renewals of one position of `part` under `rule` over `horizon`.
pub fn renewals_per_position(model: &Model, part: usize, rule: Rule, horizon: f64) -> f64 {
    let pt = &model.parts[part];
    let repair = pt.duration_planned.min(pt.duration_unplanned).max(0.0);
    let t = match rule {
        Rule::RunToFailure => horizon,
        Rule::Age(t) | Rule::Block(t) => t.min(horizon),
    };
    let cycle = mean_truncated_life(&pt.life, t) + repair;
    // Cycles that can end before the horizon at all: all of them when the
    // interval and repair fit in it, else those whose life does.
    let ends = if t + repair < horizon {
        1.0
    } else {
        let f = 1.0 - sf(&pt.life, horizon - repair);
        if f.is_finite() {
            f.clamp(0.0, 1.0)
        } else {
            1.0
        }
    };
    let mut r = if cycle > 0.0 {
        ends * horizon / cycle
    } else {
        f64::INFINITY
    };
    if let Rule::Block(t) = rule {
        r += (horizon / t).floor();
    }
    if let Some(limit) = pt.hard_limit {
        r += (horizon / (limit + repair)).floor();
    }
    if r.is_nan() { f64::INFINITY } else { r }
}

/// `life.sf(t)`, kept to the arguments the gamma functions accept (their
/// scaled argument in `(0, inf)`): 1 where it underflows to 0, 0 where it
/// overflows.
fn sf(life: &crate::dist::Life, t: f64) -> f64 {
    if let crate::dist::Life::Gamma { scale, .. } = *life {
        let x = t / scale;
        if x.is_nan() || x <= 0.0 {
            return 1.0;
        }
        if !x.is_finite() {
            return 0.0;
        }
    }
    life.sf(t)
}

/// A gamma life whose scaled argument `t / scale` would leave the range
/// the incomplete gamma functions accept (0 or infinity) for the ages the
/// engine meets (initial ages of aged parts, up to the 1e300 h its
/// residual-life search reaches): a scale under [`MIN_GAMMA_SCALE`], or a
/// positive initial age under 1e-300 of the scale. Returns the part type
/// and what is wrong.
pub fn gamma_out_of_range(model: &Model) -> Option<(String, String)> {
    for (p, pt) in model.parts.iter().enumerate() {
        let crate::dist::Life::Gamma { scale, .. } = pt.life else {
            continue;
        };
        if scale < MIN_GAMMA_SCALE {
            return Some((
                pt.name.clone(),
                format!(
                    "a gamma life with a scale of {scale:e} h is too small to compute with (at least {MIN_GAMMA_SCALE:e} h); check that the life is in hours"
                ),
            ));
        }
        let tiny = scale * 1e-300;
        if model.horizon < tiny * 1e20 {
            return Some((
                pt.name.clone(),
                format!(
                    "the horizon of {} h is below 1e-280 of the gamma scale ({scale} h): nothing can be computed at that ratio; check the units",
                    model.horizon
                ),
            ));
        }
        for g in &model.groups {
            let bad = match &g.initial_age[p] {
                crate::model::InitialAge::New => false,
                crate::model::InitialAge::Fixed(a) => *a > 0.0 && *a < tiny,
                crate::model::InitialAge::Uniform { low, high } => {
                    (*low > 0.0 && *low < tiny)
                        || (*low == 0.0 && *high > 0.0 && *high < tiny * 1e17)
                }
                crate::model::InitialAge::List(v) => v.iter().any(|a| *a > 0.0 && *a < tiny),
            };
            if bad {
                return Some((
                    pt.name.clone(),
                    format!(
                        "an initial age above 0 but below 1e-300 of the gamma scale ({scale} h) cannot be computed with; give 0 (new) instead"
                    ),
                ));
            }
        }
    }
    None
}

/// A lower bound, within about 5 %, of `E[min(X, t)] = integral_0^t R(x) dx`:
/// the lower Riemann sum of the survival function (which only falls) on a
/// geometric grid from `t` down to `t * 1e-15`.
pub fn mean_truncated_life(life: &crate::dist::Life, t: f64) -> f64 {
    if t.is_nan() || t <= 0.0 {
        return 0.0;
    }
    if !t.is_finite() {
        return f64::INFINITY;
    }
    let q = 1.0 / 1.05;
    let mut hi = t;
    let mut sum = 0.0;
    for _ in 0..720 {
        let lo = hi * q;
        let r = sf(life, hi);
        let r = if r.is_finite() {
            r.clamp(0.0, 1.0)
        } else {
            0.0
        };
        sum += (hi - lo) * r;
        hi = lo;
    }
    sum
}

/// The work of one trial of `parts` (one entry per part type), with only
/// the part types in `active` failing (all when `None`).
pub fn trial_work(model: &Model, parts: &[PartPolicy], active: Option<usize>) -> TrialWork {
    let h = model.horizon;
    let per_part: Vec<f64> = parts
        .iter()
        .enumerate()
        .map(|(p, pp)| {
            if active.is_none_or(|a| a == p) {
                renewals_per_position(model, p, pp.rule, h)
            } else {
                0.0
            }
        })
        .collect();
    // A depot's shipments and a rotable's returns from repair take the
    // place of a consumable's order arrivals (and are booked when a store
    // is next used unless someone waits): no more events per renewal. On
    // B2's reference policy this estimates 4 900 events per trial against
    // 1 958 counted (tests/network_reports.rs).
    let events_per_renewal = EVENTS_PER_RENEWAL;
    let mut events = 0.0;
    let mut nanos = 0.0;
    let fleet_factor = 0.5 + 0.1 * (model.units.len() as f64 + 1.0).log2();
    for unit in &model.units {
        let n_pos = unit.parts.len() as f64;
        let mut e = 0.0;
        for &p in &unit.parts {
            e += events_per_renewal * per_part[p];
        }
        events += e;
        // An event scans its unit's positions for the next one and updates
        // the fleet's tournament tree (log2 of the units).
        nanos += e * NS_PER_EVENT * (1.0 + n_pos / 16.0) * fleet_factor + n_pos * NS_PER_POSITION;
    }
    let busiest = per_part
        .iter()
        .enumerate()
        .filter(|(p, _)| model.units.iter().any(|u| u.parts.contains(p)))
        .max_by(|a, b| a.1.total_cmp(b.1))
        .map(|(p, &r)| (p, r));
    let installed = model.installed_count();
    // A product with a zero count is zero, whatever the rate (so a huge
    // rate of an unused stock does not make NaN); a rate that is not finite
    // makes the bound infinite.
    let times = |rate: f64, count: f64| if count == 0.0 { 0.0 } else { rate * count };
    // Each renewal may also pay a repair (the dearer of the two), a
    // shipment from the depot and a lateral transfer.
    let shipment = model.depot.as_ref().map_or(0.0, |d| d.cost_per_shipment);
    let transfer = model.lateral.as_ref().map_or(0.0, |l| l.cost_per_transfer);
    let mut finite =
        model.downtime_penalty.is_finite() && shipment.is_finite() && transfer.is_finite();
    let mut money = times(model.downtime_penalty, model.units.len() as f64 * h);
    for (p, (pt, pp)) in model.parts.iter().zip(parts).enumerate() {
        let repair = pt
            .repair
            .as_ref()
            .map_or(0.0, |r| r.cost_planned.max(r.cost_failed));
        finite &= [
            pt.price,
            pt.labour_planned,
            pt.labour_unplanned,
            pt.holding_per_hour,
            repair,
        ]
        .iter()
        .all(|x| x.is_finite());
        let stock = f64::from(pp.stock.total());
        money += times(
            pt.price + pt.labour_planned + pt.labour_unplanned + repair + shipment + transfer,
            (per_part[p] + 1.0) * installed[p] as f64,
        );
        money += times(pt.holding_per_hour * h, stock) + times(pt.price, stock);
    }
    if !finite || money.is_nan() {
        money = f64::INFINITY;
    }
    TrialWork {
        events,
        nanos,
        busiest,
        money,
    }
}

fn positions(model: &Model) -> f64 {
    model.units.iter().map(|u| u.parts.len()).sum::<usize>() as f64
}

/// Memory of one thread's workspace.
pub fn workspace_bytes(model: &Model) -> f64 {
    positions(model) * BYTES_PER_POSITION + model.units.len() as f64 * BYTES_PER_UNIT
}

/// Memory of the model itself.
pub fn model_bytes(model: &Model) -> f64 {
    positions(model) * 8.0 + model.units.len() as f64 * MODEL_BYTES_PER_UNIT
}

/// Bytes of one decoded outcome (a block of them is held per policy):
/// the fixed figures, each part type's, the hours by units up (fleet and
/// per site) and each site's figures.
fn outcome_bytes(model: &Model) -> f64 {
    let units = model.units.len() as f64;
    let sites = if model.has_sites() {
        model.sites.len() as f64
    } else {
        0.0
    };
    96.0 + 72.0 * model.parts.len() as f64
        + 8.0 * (units + 1.0) * (1.0 + sites.min(1.0))
        + 80.0 * sites
}

/// Bytes a summary keeps per trial and policy: [`BYTES_PER_KEPT_TRIAL`],
/// and under a ready-units target each trial's readiness and each site's
/// hours at its count (with their sorted copies and slack).
pub fn kept_bytes_per_trial(model: &Model) -> f64 {
    match &model.ready {
        None => BYTES_PER_KEPT_TRIAL,
        Some(_) => {
            let sites = if model.has_sites() {
                model.sites.len() as f64
            } else {
                0.0
            };
            BYTES_PER_KEPT_TRIAL + 16.0 * (1.0 + sites)
        }
    }
}

/// Estimated shard-file bytes per record of `model`: a fixed part, a part
/// per part type, the hours by units up (nonzero counts only, about
/// 2 + 0.4 per unit of them, 9 bytes each), and with sites each site's
/// figures and hours by units up (about 2 + 0.3 per unit) and each part
/// type's network figures. Measured on 2 000 trials (format 2, 2026-12):
/// B0 148, the 2026 demo 230, B1 341, the demo with garages 521 and B2
/// 595 bytes per record; this gives 154, 244, 354, 479 and 722.
pub fn shard_bytes_per_record(model: &Model) -> f64 {
    let entries = |n: usize| (2.0 + 0.4 * n as f64).min(n as f64 + 1.0);
    let mut b = SHARD_BYTES_FIXED
        + SHARD_BYTES_PER_PART * model.parts.len() as f64
        + 9.0 * entries(model.units.len());
    if model.has_sites() {
        for n in model.site_units() {
            b += SHARD_BYTES_PER_SITE + 9.0 * (2.0 + 0.3 * n as f64).min(n as f64 + 1.0);
        }
        b += SHARD_BYTES_PER_NETWORK_PART * model.parts.len() as f64;
    }
    b
}

fn busiest_name(model: &Model, w: &TrialWork) -> Option<(String, f64)> {
    w.busiest.map(|(p, r)| (model.parts[p].name.clone(), r))
}

/// Estimate evaluating `policies` on `trials` trials each. `keep`: the
/// per-trial figures are kept for a summary (a single run or a merge);
/// `shard`: the outcomes are written to a shard file instead.
pub fn evaluate(
    model: &Model,
    policies: &[Policy],
    trials: u64,
    threads: usize,
    keep: bool,
    shard: bool,
) -> Estimate {
    let threads = threads.max(1);
    let n = trials as f64;
    let works: Vec<TrialWork> = policies
        .iter()
        .map(|p| trial_work(model, &p.parts, None))
        .collect();
    let worst = works
        .iter()
        .max_by(|a, b| a.events.total_cmp(&b.events))
        .cloned()
        .unwrap_or(TrialWork {
            events: 0.0,
            nanos: 0.0,
            busiest: None,
            money: 0.0,
        });
    let money = works.iter().map(|w| w.money).fold(0.0, f64::max);
    let nanos: f64 = works.iter().map(|w| w.nanos).sum::<f64>() * n;
    let events: f64 = works.iter().map(|w| w.events).sum::<f64>() * n;
    let runs = n * policies.len() as f64;
    let kept = if keep { runs } else { 0.0 };
    let block = (BLOCK as f64).min(n) * outcome_bytes(model) * policies.len().max(1) as f64;
    let bytes = BASE_BYTES
        + model_bytes(model)
        + workspace_bytes(model) * threads as f64
        + kept * kept_bytes_per_trial(model)
        + block * 2.0;
    Estimate {
        trial_runs: runs,
        max_trial_events: worst.events,
        busiest: busiest_name(model, &worst),
        max_trial_money: money,
        mean_events: if runs > 0.0 { events / runs } else { 0.0 },
        seconds: nanos * 1e-9 / threads as f64,
        threads,
        bytes,
        kept_trials: kept,
        shard_bytes: shard.then(|| runs * shard_bytes_per_record(model)),
    }
}

/// Estimate merging shards of `policies` x `trials` records: no trials run,
/// the per-trial figures are kept.
pub fn merge(model: &Model, policies: usize, trials: u64) -> Estimate {
    let runs = trials as f64 * policies as f64;
    Estimate {
        trial_runs: 0.0,
        max_trial_events: 0.0,
        busiest: None,
        max_trial_money: 0.0,
        mean_events: 0.0,
        // Decoding runs at tens of millions of records a second; say 1 us.
        seconds: runs * 1e-6,
        threads: 1,
        bytes: BASE_BYTES + runs * kept_bytes_per_trial(model) + model_bytes(model),
        kept_trials: runs,
        shard_bytes: None,
    }
}

/// Estimate a frontier search with `config`.
pub fn frontier(model: &Model, config: &FrontierConfig, threads: usize) -> Estimate {
    let threads = threads.max(1);
    let Some(space) = model.search.as_ref() else {
        return evaluate(model, &[], 0, threads, true, false);
    };
    let n_parts = model.parts.len();
    let n = config.search_trials as f64;
    let screen_n = config.search_trials.min(config.screen_trials.max(1)) as f64;
    // Per part type and rule: one trial with only that part type active.
    let mut screen_nanos = 0.0;
    let mut screen_runs = 0.0;
    let mut worst_single: Vec<f64> = vec![0.0; n_parts];
    let mut worst_events: Vec<f64> = vec![0.0; n_parts];
    let mut mean_nanos: Vec<f64> = vec![0.0; n_parts];
    let mut worst_single_trial = (0.0, None);
    let base_parts: Vec<PartPolicy> = vec![
        PartPolicy {
            rule: Rule::RunToFailure,
            stock: Stock::single(0),
        };
        n_parts
    ];
    let mut money = 0.0f64;
    for (p, ps) in space.parts.iter().enumerate() {
        let stocks = f64::from(ps.stock_max - ps.stock_min + 1);
        let mut sum = 0.0;
        for &rule in &ps.rules {
            let mut parts = base_parts.clone();
            parts[p] = PartPolicy {
                rule,
                stock: Stock::single(ps.stock_max),
            };
            let w = trial_work(model, &parts, Some(p));
            money = money.max(w.money);
            screen_nanos += w.nanos * stocks * screen_n;
            screen_runs += stocks * screen_n;
            sum += w.nanos;
            if w.nanos > worst_single[p] {
                worst_single[p] = w.nanos;
            }
            if w.events > worst_events[p] {
                worst_events[p] = w.events;
            }
            if w.events > worst_single_trial.0 {
                worst_single_trial = (w.events, w.busiest);
            }
        }
        mean_nanos[p] = sum / ps.rules.len().max(1) as f64;
    }
    // With sites or a ready-units target the search ranks its candidates
    // analytically: no screening runs.
    let analytic_seed = model.has_sites() || model.ready.is_some();
    if analytic_seed {
        screen_nanos = 0.0;
        screen_runs = 0.0;
    }
    // A whole policy costs about the sum of its part types' single-part
    // work (the busiest option of each, to lean high).
    let policy_nanos: f64 = worst_single.iter().sum();
    let policy_events: f64 = worst_events.iter().sum();
    // A space past the exhaustive limit is refused by the search itself.
    let size = if space.size() > crate::frontier::EXHAUSTIVE_LIMIT {
        0.0
    } else {
        space.size() as f64
    };
    let (search_runs, search_nanos, kept_search) = if config.exhaustive {
        let mean: f64 = mean_nanos.iter().sum();
        (size * n, size * n * mean, size * n)
    } else {
        let k = config.max_full as f64;
        (k * n, k * n * policy_nanos, k * n)
    };
    let v = config.validate_trials as f64;
    // The spread over the chance range, two more around each quoted
    // chance level, a close neighbour of each, and the scenario's named
    // policies (`frontier::thin`); a dense frontier may re-cost more.
    let k = (2 * (config.max_frontier + 2 * crate::recost::CHANCE_LEVELS.len())
        + model.policies.len()) as f64;
    let runs = screen_runs + search_runs + k * v;
    let nanos = screen_nanos + search_nanos + k * v * policy_nanos;
    let options: f64 = space
        .parts
        .iter()
        .map(|ps| ps.rules.len() as f64 * f64::from(ps.stock_max - ps.stock_min + 1))
        .sum();
    let screened = if analytic_seed { 0.0 } else { options };
    let kept = kept_search + k * v + screened * screen_n * 16.0 / kept_bytes_per_trial(model);
    let bytes = BASE_BYTES
        + model_bytes(model)
        + workspace_bytes(model) * threads as f64
        + kept * kept_bytes_per_trial(model)
        + 2.0 * (BLOCK as f64).min(n.max(v)) * outcome_bytes(model);
    let busiest = model
        .parts
        .iter()
        .enumerate()
        .map(|(p, pt)| {
            let r = space.parts[p]
                .rules
                .iter()
                .map(|&rule| renewals_per_position(model, p, rule, model.horizon))
                .fold(0.0, f64::max);
            (pt.name.clone(), r)
        })
        .filter(|(name, _)| {
            model
                .part_id(name)
                .is_some_and(|p| model.units.iter().any(|u| u.parts.contains(&p)))
        })
        .max_by(|a, b| a.1.total_cmp(&b.1));
    Estimate {
        trial_runs: runs,
        max_trial_events: policy_events.max(worst_single_trial.0),
        busiest,
        max_trial_money: money * n_parts as f64,
        mean_events: policy_events,
        seconds: nanos * 1e-9 / threads as f64,
        threads,
        bytes,
        kept_trials: kept,
        shard_bytes: None,
    }
}

/// A byte count for people: `24 TB`, `310 MB`.
pub fn bytes_text(b: f64) -> String {
    let units = [(1e12, "TB"), (1e9, "GB"), (1e6, "MB"), (1e3, "kB")];
    for (scale, name) in units {
        if b >= scale {
            let x = b / scale;
            return if x >= 100.0 {
                format!("{x:.0} {name}")
            } else {
                format!("{x:.1} {name}")
            };
        }
    }
    format!("{b:.0} bytes")
}

/// A duration for people: `3 min 10 s`, `6.3 years`.
pub fn seconds_text(s: f64) -> String {
    if !s.is_finite() {
        return "forever".to_string();
    }
    if s < 1.0 {
        "under a second".to_string()
    } else if s < 60.0 {
        format!("{s:.0} s")
    } else if s < 3600.0 {
        format!("{} min {} s", (s / 60.0).floor(), (s % 60.0).floor())
    } else if s < 86_400.0 * 2.0 {
        format!("{:.1} h", s / 3600.0)
    } else if s < 86_400.0 * 365.0 {
        format!("{:.1} days", s / 86_400.0)
    } else {
        format!("{:.2e} years", s / (86_400.0 * 365.25))
    }
}

impl Estimate {
    /// One line for people: `about 3 min 10 s on 2 threads, peak memory
    /// about 60 MB; shard file about 180 MB`.
    pub fn describe(&self) -> String {
        let mut s = format!(
            "about {} on {} thread(s) ({:.2e} trial runs of about {:.0} events), peak memory about {}",
            seconds_text(self.seconds),
            self.threads,
            self.trial_runs,
            self.mean_events,
            bytes_text(self.bytes)
        );
        if let Some(b) = self.shard_bytes {
            s.push_str(&format!("; shard file about {}", bytes_text(b)));
        }
        s
    }

    /// Whether the run is large enough to announce before it starts.
    pub fn worth_announcing(&self) -> bool {
        self.seconds > ANNOUNCE_SECONDS || self.bytes > ANNOUNCE_BYTES
    }

    /// Refuse a run past the limits: a trial past [`MAX_EVENTS_PER_TRIAL`],
    /// money figures so large that a trial's cost could overflow (past
    /// [`MAX_TRIAL_MONEY`]),
    /// memory past [`MEMORY_SHARE`] of `available` bytes (when known), time
    /// past [`MAX_SECONDS`].
    ///
    /// # Errors
    /// An [`EstimateError`] saying why and what would work.
    pub fn check(&self, model: &Model, available: Option<f64>) -> Result<(), EstimateError> {
        if let Some((part, why)) = gamma_out_of_range(model) {
            return Err(EstimateError::Life { part, why });
        }
        if self.max_trial_events.is_nan() || self.max_trial_events > MAX_EVENTS_PER_TRIAL {
            let (part, renewals) = self.busiest.clone().unwrap_or_default();
            let why = match model.part_id(&part) {
                Some(p) => {
                    let pt = &model.parts[p];
                    format!(
                        "its mean life within the horizon is about {:.3e} h and its shorter repair takes {} h",
                        mean_truncated_life(&pt.life, model.horizon),
                        pt.duration_planned.min(pt.duration_unplanned)
                    )
                }
                None => "its lives or intervals are very short".to_string(),
            };
            return Err(EstimateError::TrialTooLong {
                events: self.max_trial_events,
                max: MAX_EVENTS_PER_TRIAL,
                part,
                renewals,
                horizon: model.horizon,
                why,
            });
        }
        if self.max_trial_money.is_nan() || self.max_trial_money > MAX_TRIAL_MONEY {
            let biggest = model
                .parts
                .iter()
                .flat_map(|p| {
                    [
                        (format!("parts.{}.price", p.name), p.price),
                        (
                            format!("parts.{}.labour", p.name),
                            p.labour_planned.max(p.labour_unplanned),
                        ),
                        (
                            format!("parts.{}.holding", p.name),
                            p.holding_per_hour * model.horizon,
                        ),
                        (
                            format!("parts.{}.repair.cost", p.name),
                            p.repair
                                .as_ref()
                                .map_or(0.0, |r| r.cost_planned.max(r.cost_failed)),
                        ),
                    ]
                })
                .chain([
                    (
                        "scenario.downtime_penalty_per_hour".to_string(),
                        model.downtime_penalty * model.horizon,
                    ),
                    (
                        "depot.cost_per_shipment".to_string(),
                        model.depot.as_ref().map_or(0.0, |d| d.cost_per_shipment),
                    ),
                    (
                        "lateral.cost_per_transfer".to_string(),
                        model.lateral.as_ref().map_or(0.0, |l| l.cost_per_transfer),
                    ),
                ])
                .max_by(|a, b| a.1.total_cmp(&b.1))
                .map(|(f, _)| f)
                .unwrap_or_default();
            return Err(EstimateError::Money {
                money: self.max_trial_money,
                max: MAX_TRIAL_MONEY,
                field: biggest,
            });
        }
        if let Some(have) = available {
            let limit = have * MEMORY_SHARE;
            if self.bytes.is_nan() || self.bytes > limit {
                let fixed = self.bytes - self.kept_trials * kept_bytes_per_trial(model);
                let what = if self.kept_trials * kept_bytes_per_trial(model) > fixed {
                    format!(
                        "{:.0} bytes of figures for each of {:.2e} trial runs, kept for percentiles and chances",
                        kept_bytes_per_trial(model),
                        self.kept_trials
                    )
                } else {
                    format!(
                        "{} per thread for a fleet of {} units",
                        bytes_text(workspace_bytes(model)),
                        model.units.len()
                    )
                };
                let fix = if self.kept_trials * kept_bytes_per_trial(model) > fixed {
                    let fit = ((limit - fixed).max(0.0) / kept_bytes_per_trial(model)).floor();
                    format!(
                        "at most about {fit:.2e} trial runs fit here; use fewer trials (the standard error of a chance falls as 1/sqrt(trials): 10^6 trials already give it to within 0.1 %)"
                    )
                } else {
                    "use fewer threads (--threads 1) or a smaller fleet".to_string()
                };
                return Err(EstimateError::Memory {
                    need: bytes_text(self.bytes),
                    have: bytes_text(have),
                    what,
                    fix,
                });
            }
        }
        if self.seconds.is_nan() || self.seconds > MAX_SECONDS {
            return Err(EstimateError::Time {
                time: seconds_text(self.seconds),
                threads: self.threads,
                work: format!(
                    "{:.2e} trial runs of about {:.0} events",
                    self.trial_runs, self.mean_events
                ),
                max: seconds_text(MAX_SECONDS),
                fix: "use fewer trials (10^6 trials give a chance to within 0.1 %), or spread the run over many machines with --shard K/N (docs/cluster.md)".to_string(),
            });
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::dist::Life;

    #[test]
    fn truncated_mean_matches_closed_forms() {
        // Exponential: E[min(X, t)] = mu (1 - exp(-t / mu)) (any reliability
        // text, e.g. Barlow & Proschan 1965, the age-replacement denominator).
        let life = Life::exponential(1000.0).unwrap();
        for t in [10.0, 1000.0, 5000.0, 1e6] {
            let exact: f64 = 1000.0 * (1.0 - (-t / 1000.0f64).exp());
            let got = mean_truncated_life(&life, t);
            assert!(got <= exact * (1.0 + 1e-12), "{t}: {got} > {exact}");
            assert!(got >= exact * 0.94, "{t}: {got} far below {exact}");
        }
        // Weibull, against dist's own closed form (incomplete gamma).
        let w = Life::weibull(2.2, 14_000.0).unwrap();
        let exact = w.integral_sf(11_200.0);
        let got = mean_truncated_life(&w, 11_200.0);
        assert!(got <= exact && got >= 0.94 * exact, "{got} vs {exact}");
    }

    #[test]
    fn absurd_lives_stay_finite_and_refused() {
        // Weibull shape 1e-6: R(t) = exp(-(t/eta)^1e-6) is about e^-1 over
        // any sane range, so E[min(X, H)] is about 0.37 H: a few renewals.
        let w = Life::weibull(1e-6, 1000.0).unwrap();
        let m = mean_truncated_life(&w, 30_000.0);
        assert!(m > 0.3 * 30_000.0 && m < 0.4 * 30_000.0, "{m}");
        // A mean life of 1e-300 h: the sum is tiny, renewals astronomical.
        let e = Life::exponential(1e-300).unwrap();
        assert!(mean_truncated_life(&e, 1e9) < 1e-290);
    }

    #[test]
    fn text_of_sizes_and_times() {
        assert_eq!(bytes_text(24e12), "24.0 TB");
        assert_eq!(bytes_text(310e6), "310 MB");
        assert_eq!(seconds_text(190.0), "3 min 10 s");
        assert!(seconds_text(2e8).ends_with("years"));
    }
}
