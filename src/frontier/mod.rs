//! The frontier search: the policies that no other policy beats on both
//! cost and the chance of meeting the availability target.
//!
//! Owns: the search over replacement rules and stock levels and its
//! result; the re-costing on fresh trials, the non-dominated filter and the
//! noise flags are `recost`'s.
//! May use: `sim`, `run`, `summary`, `model`, `recost` (its last step),
//! `rayon`, and `lp` (the one file that talks to good_lp). Reports progress
//! through [`Progress`]; does no I/O.
//!
//! How it searches (see DEVELOPERS.md for the reasoning):
//! 1. **Screening.** Each part type is simulated alone (the other part types
//!    never fail) under every option (rule x stock) of its search space, on
//!    the search trials. This yields, per option and trial, the down hours
//!    and the cost that part type brings. Part types interact only through
//!    shared down time (a unit that is down does not age its other parts),
//!    a second-order effect, so a policy's down hours are close to the sum
//!    of its options' down hours trial by trial, and its cost to the sum of
//!    their costs: the *surrogate*.
//! 2. **Seeds.** A linear program over trials with the CVaR bound of the
//!    chance constraint (`lp`), solved for a ladder of chance levels and
//!    rounded; a marginal-analysis path from the cheapest policy upwards,
//!    taking at each step the single change with the best gain in
//!    surrogate down time per unit of cost (Sherbrooke's METRIC-style
//!    greedy, generalised to rules).
//! 3. **Pareto local search** on the surrogate from the seeds: every single
//!    part-type change of every archived policy, keeping the non-dominated.
//! 4. **Full simulation** of a spread of surrogate-frontier policies (and
//!    their immediate neighbours near the frontier) on the search trials,
//!    where part types interact exactly; the non-dominated ones are kept.
//! 5. **Re-costing** of those on fresh trials (disjoint trial indices) and
//!    the frontier recomputed from the re-costed figures, with paired
//!    noise flags between neighbours.
//!
//! A scenario with sites, a depot or a ready-units target is searched by
//! `network` instead of steps 1 to 4 (the two-echelon model ranks the
//! candidates; no screening runs), then re-costed by step 5.

pub mod lp;
mod network;

use std::collections::{HashMap, HashSet};

use rayon::prelude::*;

use crate::model::{
    CostMeasure, CostStatistic, Model, PartPolicy, Policy, Rule, SearchSpace, Stock,
};
use crate::recost::{
    self, Costed, FrontierPoint, frontier_points, non_dominated, validation_range,
};
use crate::run::Progress;
use crate::sim::{ActiveParts, Simulator};
use crate::summary::{Chance, MeanSe, Summary, percentile_sorted, sorted};

/// The most policies `--exhaustive` will try.
pub const EXHAUSTIVE_LIMIT: u128 = 20_000;

/// What the search may try and how hard.
#[derive(Debug, Clone)]
pub struct FrontierConfig {
    pub search_trials: u64,
    pub validate_trials: u64,
    pub target: f64,
    /// Evaluate every policy in full (small spaces only).
    pub exhaustive: bool,
    /// Upper bound on the policies simulated in full during the search.
    pub max_full: usize,
    /// Trials each single-part screening run uses (the first of the search
    /// trials).
    pub screen_trials: u64,
    /// At most this many search-frontier policies are re-costed (spread
    /// evenly over the chance range).
    pub max_frontier: usize,
}

impl FrontierConfig {
    /// The standard limits of `wearout frontier`: at most
    /// [`FrontierConfig::MAX_FULL`] policies in full,
    /// [`FrontierConfig::SCREEN_TRIALS`] screening trials, at most
    /// [`FrontierConfig::MAX_FRONTIER`] policies re-costed; no exhaustive
    /// search.
    pub fn new(search_trials: u64, validate_trials: u64, target: f64) -> Self {
        FrontierConfig {
            search_trials,
            validate_trials,
            target,
            exhaustive: false,
            max_full: Self::MAX_FULL,
            screen_trials: Self::SCREEN_TRIALS,
            max_frontier: Self::MAX_FRONTIER,
        }
    }

    /// Default upper bound on the policies simulated in full (`--max-full`).
    pub const MAX_FULL: usize = 48;
    /// Trials of each single-part screening run.
    pub const SCREEN_TRIALS: u64 = 1000;
    /// Most search-frontier policies re-costed.
    pub const MAX_FRONTIER: usize = 24;
}

/// Where the search's effort went.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct SearchStats {
    /// Policies simulated in full on the search trials.
    pub evaluated: usize,
    /// Single-part-type screening runs.
    pub screening_runs: usize,
    /// Policies scored on the surrogate.
    pub surrogate_scored: usize,
    /// Linear programs solved.
    pub lps: usize,
    /// Search-frontier policies re-costed on the validation trials.
    pub recosted: usize,
    pub seconds_screening: f64,
    pub seconds_search: f64,
    pub seconds_validation: f64,
}

/// The result of a frontier run.
#[derive(Debug, Clone)]
pub struct FrontierResult {
    /// Re-costed non-dominated policies, cheapest first.
    pub points: Vec<FrontierPoint>,
    /// Every policy simulated in full on the search trials (cost measure and
    /// chance there), for plots.
    pub searched: Vec<(Policy, MeanSe, Chance)>,
    pub space_size: u128,
    pub search_trials: u64,
    pub validate_trials: u64,
    pub cost: CostMeasure,
    pub target: f64,
    pub stats: SearchStats,
    /// The whole search-trial frontier before thinning and re-costing (for
    /// checks).
    pub search_frontier: Vec<(Policy, MeanSe, Chance)>,
}

impl FrontierResult {
    /// The frontier of a list of policies re-costed without a search
    /// (`wearout frontier --policies`, in one process or merged from
    /// shards): the non-dominated ones, cheapest first, with their paired
    /// noise flags against the row above, names kept as given. `seconds`
    /// is the time the re-costing took.
    pub fn of_list(
        model: &Model,
        recosted: Vec<Costed>,
        validate_trials: u64,
        target: f64,
        seconds: f64,
    ) -> Self {
        let measure = recost::measure(model);
        let points = frontier_points(&recosted, measure, false);
        let stats = SearchStats {
            recosted: recosted.len(),
            seconds_validation: seconds,
            ..SearchStats::default()
        };
        FrontierResult {
            points,
            searched: Vec::new(),
            space_size: model.search.as_ref().map_or(0, |s| s.size()),
            search_trials: 0,
            validate_trials,
            cost: measure,
            target,
            stats,
            search_frontier: Vec::new(),
        }
    }
}

/// Why a frontier could not be searched.
#[derive(Debug, thiserror::Error)]
pub enum FrontierError {
    #[error("the scenario has no [search] table; add one (see docs/scenario-format.md)")]
    NoSearchSpace,
    #[error(
        "the search space has {size} policies, more than the {limit} that --exhaustive will try; drop --exhaustive or narrow the space"
    )]
    TooLarge { size: u128, limit: u128 },
    #[error("no policy in the search space fits the spares budget of {0}")]
    NothingFits(f64),
    #[error("interrupted")]
    Interrupted,
}

/// The options (rule x stock) of each part type.
#[derive(Debug, Clone)]
struct Options {
    per_part: Vec<Vec<PartPolicy>>,
}

impl Options {
    fn new(model: &Model) -> Option<Self> {
        let space = model.search.as_ref()?;
        let per_part = space
            .parts
            .iter()
            .map(|ps| {
                let mut v = Vec::new();
                let stocks = network::stock_choices(ps);
                for &rule in &ps.rules {
                    for stock in &stocks {
                        v.push(PartPolicy {
                            rule,
                            stock: stock.clone(),
                        });
                    }
                }
                v
            })
            .collect();
        Some(Options { per_part })
    }

    fn policy(&self, combo: &[u16], name: String) -> Policy {
        Policy {
            name,
            parts: combo
                .iter()
                .enumerate()
                .map(|(p, &o)| self.per_part[p][o as usize].clone())
                .collect(),
        }
    }
}

/// Per option of one part type: its screening figures.
#[derive(Debug, Clone)]
struct Screened {
    /// Down hours per search trial.
    down: Vec<f64>,
    /// Cost (on the measure's basis) per search trial.
    cost: Vec<f64>,
    cost_mean: f64,
    capital: f64,
}

/// The surrogate: per part type, per option, per trial.
struct Surrogate<'a> {
    screened: Vec<Vec<Screened>>,
    allowed_down: f64,
    measure: CostMeasure,
    budget: Option<f64>,
    n: usize,
    cache: HashMap<Vec<u16>, (f64, f64)>,
    _model: &'a Model,
}

impl Surrogate<'_> {
    fn capital(&self, combo: &[u16]) -> f64 {
        combo
            .iter()
            .enumerate()
            .map(|(p, &o)| self.screened[p][o as usize].capital)
            .sum()
    }

    /// (cost measure, chance) of a combination on the surrogate.
    fn score(&mut self, combo: &[u16]) -> (f64, f64) {
        if let Some(v) = self.cache.get(combo) {
            return *v;
        }
        let mut down = vec![0.0; self.n];
        for (p, &o) in combo.iter().enumerate() {
            for (d, x) in down.iter_mut().zip(&self.screened[p][o as usize].down) {
                *d += x;
            }
        }
        let ok = down.iter().filter(|&&d| d <= self.allowed_down).count();
        let chance = ok as f64 / self.n as f64;
        let cost = match self.measure.statistic {
            CostStatistic::Mean => combo
                .iter()
                .enumerate()
                .map(|(p, &o)| self.screened[p][o as usize].cost_mean)
                .sum(),
            CostStatistic::Percentile(q) => {
                let mut c = vec![0.0; self.n];
                for (p, &o) in combo.iter().enumerate() {
                    for (d, x) in c.iter_mut().zip(&self.screened[p][o as usize].cost) {
                        *d += x;
                    }
                }
                percentile_sorted(&sorted(&c), q)
            }
        };
        self.cache.insert(combo.to_vec(), (cost, chance));
        (cost, chance)
    }

    fn fits(&self, combo: &[u16]) -> bool {
        self.budget.is_none_or(|b| self.capital(combo) <= b + 1e-9)
    }

    /// Every combination one part type's option away from `cur` that fits
    /// the budget, by part type, then option.
    fn neighbours(&self, cur: &[u16]) -> Vec<Vec<u16>> {
        let mut out = Vec::new();
        for (p, opts) in self.screened.iter().enumerate() {
            for o in 0..opts.len() as u16 {
                if o == cur[p] {
                    continue;
                }
                let mut next = cur.to_vec();
                next[p] = o;
                if self.fits(&next) {
                    out.push(next);
                }
            }
        }
        out
    }

    /// Per part type, the first option with the least `key`.
    fn least_per_part(&self, key: impl Fn(&Screened) -> f64) -> Vec<u16> {
        self.screened
            .iter()
            .map(|opts| {
                let mut best = 0;
                for (i, o) in opts.iter().enumerate() {
                    if key(o) < key(&opts[best]) {
                        best = i;
                    }
                }
                best as u16
            })
            .collect()
    }
}

/// Hypervolume of a set of (cost, chance) points against the reference
/// point (cost_ref, chance 0): the area of cost-chance space they dominate
/// (Zitzler & Thiele 1998, the S metric).
pub fn hypervolume(points: &[(f64, f64)], cost_ref: f64) -> f64 {
    let front = non_dominated(points);
    let mut hv = 0.0;
    // Strips of chance, from the cheapest point upwards: each point adds the
    // band between the previous point's chance and its own, from its cost
    // to the reference cost.
    let mut prev_chance = 0.0;
    for &i in &front {
        let (c, ch) = points[i];
        if c < cost_ref && ch > prev_chance {
            hv += (cost_ref - c) * (ch - prev_chance);
            prev_chance = ch;
        }
    }
    hv
}

/// Run the frontier search: the steps of the module comment, or with
/// `config.exhaustive` every policy of the space in full, then the
/// re-costing of the search frontier on fresh trials.
///
/// # Errors
/// When the scenario has no search space, `--exhaustive` meets a space that
/// is too large, nothing fits the budget, or the run was interrupted.
pub fn search(
    model: &Model,
    config: &FrontierConfig,
    progress: &dyn Progress,
) -> Result<FrontierResult, FrontierError> {
    let space = model.search.as_ref().ok_or(FrontierError::NoSearchSpace)?;
    let mut stats = SearchStats::default();
    let searched = if config.exhaustive {
        let options = Options::new(model).ok_or(FrontierError::NoSearchSpace)?;
        simulate_every_policy(model, space, &options, config, progress, &mut stats)?
    } else if network::applies(model) {
        network::search(model, space, config, progress, &mut stats)?
    } else {
        let options = Options::new(model).ok_or(FrontierError::NoSearchSpace)?;
        search_on_the_surrogate(model, space, &options, config, progress, &mut stats)?
    };
    recost_the_frontier(model, space, config, searched, progress, stats)
}

/// `--exhaustive`: every policy of the space (within the spares budget) in
/// full on the search trials, in parallel over policies, in odometer order.
fn simulate_every_policy(
    model: &Model,
    space: &SearchSpace,
    options: &Options,
    config: &FrontierConfig,
    progress: &dyn Progress,
    stats: &mut SearchStats,
) -> Result<Vec<Costed>, FrontierError> {
    let t_start = std::time::Instant::now();
    let size = space.size();
    let n = config.search_trials;
    if size > EXHAUSTIVE_LIMIT {
        return Err(FrontierError::TooLarge {
            size,
            limit: EXHAUSTIVE_LIMIT,
        });
    }
    progress.phase("exhaustive", size as u64 * n);
    // Every combination in odometer order (first part type fastest).
    let mut combos: Vec<Vec<u16>> = Vec::new();
    let mut combo = vec![0u16; options.per_part.len()];
    'odometer: loop {
        combos.push(combo.clone());
        for (digit, opts) in combo.iter_mut().zip(&options.per_part) {
            *digit += 1;
            if (*digit as usize) < opts.len() {
                continue 'odometer;
            }
            *digit = 0;
        }
        break;
    }
    let policies: Vec<Policy> = combos
        .iter()
        .enumerate()
        .map(|(i, c)| options.policy(c, format!("p{}", i + 1)))
        .filter(|p| {
            space
                .spares_budget
                .is_none_or(|b| p.initial_stock_capital(model) <= b + 1e-9)
        })
        .collect();
    if policies.is_empty() {
        return Err(FrontierError::NothingFits(
            space.spares_budget.unwrap_or(0.0),
        ));
    }
    // Parallel over policies (each on one thread), in a fixed order.
    let evaluated: Vec<Option<Summary>> = policies
        .par_iter()
        .map_init(crate::sim::Workspace::default, |ws, policy| {
            if progress.cancelled() {
                return None;
            }
            let s = crate::run::evaluate_on_thread(model, policy, 0..n, config.target, ws);
            progress.advance(n);
            Some(s)
        })
        .collect();
    let searched = evaluated
        .into_iter()
        .map(|s| Ok(Costed::of(s.ok_or(FrontierError::Interrupted)?, space.cost)))
        .collect::<Result<Vec<_>, _>>()?;
    stats.evaluated = searched.len();
    stats.seconds_search = t_start.elapsed().as_secs_f64();
    Ok(searched)
}

/// Steps 1 to 4: screening, seeds, Pareto local search on the surrogate,
/// and a spread of the surrogate frontier simulated in full on the search
/// trials.
fn search_on_the_surrogate(
    model: &Model,
    space: &SearchSpace,
    options: &Options,
    config: &FrontierConfig,
    progress: &dyn Progress,
    stats: &mut SearchStats,
) -> Result<Vec<Costed>, FrontierError> {
    let t_start = std::time::Instant::now();
    let mut sur = screen(model, space, options, config, progress, stats)?;
    stats.seconds_screening = t_start.elapsed().as_secs_f64();
    let t_search = std::time::Instant::now();
    let seeds = seeds(&mut sur, space, stats)?;
    let archive = pareto_local_search(&mut sur, seeds, 40);
    stats.surrogate_scored = sur.cache.len();
    let picks = spread(&mut sur, &archive, config.max_full);
    let searched = simulate_picks(model, space, options, config, picks, progress)?;
    stats.evaluated = searched.len();
    stats.seconds_search = t_search.elapsed().as_secs_f64();
    Ok(searched)
}

/// Step 1, screening: each part type alone under each of its options, on the
/// first `config.screen_trials` search trials, one option per task, in
/// parallel over options; the surrogate built from the results.
fn screen<'a>(
    model: &'a Model,
    space: &SearchSpace,
    options: &Options,
    config: &FrontierConfig,
    progress: &dyn Progress,
    stats: &mut SearchStats,
) -> Result<Surrogate<'a>, FrontierError> {
    let measure = space.cost;
    let n_parts = model.parts.len();
    let allowed_down = (1.0 - config.target) * model.units.len() as f64 * model.horizon;
    let screen_n = config.search_trials.min(config.screen_trials.max(1));
    let tasks: Vec<(usize, PartPolicy)> = options
        .per_part
        .iter()
        .enumerate()
        .flat_map(|(p, opts)| opts.iter().map(move |pp| (p, pp.clone())))
        .collect();
    progress.phase("screening", tasks.len() as u64 * screen_n);
    let results: Vec<Option<Screened>> = tasks
        .par_iter()
        .map_init(crate::sim::Workspace::default, |ws, (p, pp)| {
            let p = *p;
            if progress.cancelled() {
                return None;
            }
            let mut parts: Vec<PartPolicy> = vec![
                PartPolicy {
                    rule: Rule::RunToFailure,
                    stock: Stock::single(0),
                };
                n_parts
            ];
            parts[p] = pp.clone();
            let sim = Simulator::with_parts(model, &parts, ActiveParts::only(n_parts, p));
            let capital = pp.stock.total() as f64 * model.parts[p].price;
            let mut down = Vec::with_capacity(screen_n as usize);
            let mut cost = Vec::with_capacity(screen_n as usize);
            for t in 0..screen_n {
                let o = sim.run(t, ws);
                down.push(o.down_hours());
                cost.push(o.parts[p].cost(measure.basis, capital));
            }
            progress.advance(screen_n);
            let cost_mean = cost.iter().sum::<f64>() / cost.len().max(1) as f64;
            Some(Screened {
                down,
                cost,
                cost_mean,
                capital,
            })
        })
        .collect();
    let mut screened: Vec<Vec<Screened>> = vec![Vec::new(); n_parts];
    for ((p, _), r) in tasks.iter().zip(results) {
        screened[*p].push(r.ok_or(FrontierError::Interrupted)?);
        stats.screening_runs += 1;
    }
    Ok(Surrogate {
        screened,
        allowed_down,
        measure,
        budget: space.spares_budget,
        n: screen_n as usize,
        cache: HashMap::new(),
        _model: model,
    })
}

/// Step 2, seeds: the marginal-analysis path from the cheapest policy and the
/// linear programs' roundings, those within the budget; failing all, the
/// policy of least capital.
fn seeds(
    sur: &mut Surrogate<'_>,
    space: &SearchSpace,
    stats: &mut SearchStats,
) -> Result<Vec<Vec<u16>>, FrontierError> {
    let mut seeds: Vec<Vec<u16>> = Vec::new();
    let cheapest = sur.least_per_part(|o| o.cost_mean);
    seeds.extend(marginal_path(sur, &cheapest));
    seeds.extend(lp_seeds(sur, stats));
    seeds.retain(|c| sur.fits(c));
    if seeds.is_empty() {
        // The cheapest-capital combination as a last seed.
        let low = sur.least_per_part(|o| o.capital);
        if !sur.fits(&low) {
            return Err(FrontierError::NothingFits(
                space.spares_budget.unwrap_or(0.0),
            ));
        }
        seeds.push(low);
    }
    Ok(seeds)
}

/// Step 4, full simulation of the picked combinations (each once) on the search
/// trials, where part types interact exactly.
fn simulate_picks(
    model: &Model,
    space: &SearchSpace,
    options: &Options,
    config: &FrontierConfig,
    picks: Vec<Vec<u16>>,
    progress: &dyn Progress,
) -> Result<Vec<Costed>, FrontierError> {
    let n = config.search_trials;
    progress.phase("search", picks.len() as u64 * n);
    let mut seen: HashSet<Vec<u16>> = HashSet::new();
    let mut searched = Vec::new();
    for combo in picks {
        if !seen.insert(combo.clone()) {
            continue;
        }
        let policy = options.policy(&combo, String::new());
        let s = crate::run::evaluate(model, &policy, 0..n, config.target, progress)
            .ok_or(FrontierError::Interrupted)?;
        searched.push(Costed::of(s, space.cost));
    }
    Ok(searched)
}

/// Step 5: the frontier on the search trials, thinned to at most
/// `config.max_frontier` policies, re-costed on the validation trials and
/// its frontier recomputed from the re-costed figures.
fn recost_the_frontier(
    model: &Model,
    space: &SearchSpace,
    config: &FrontierConfig,
    searched: Vec<Costed>,
    progress: &dyn Progress,
    mut stats: SearchStats,
) -> Result<FrontierResult, FrontierError> {
    let measure = space.cost;
    let pts: Vec<(f64, f64)> = searched
        .iter()
        .map(|s| (s.cost.mean, s.chance.value))
        .collect();
    let full_front = non_dominated(&pts);
    let search_frontier: Vec<(Policy, MeanSe, Chance)> = full_front
        .iter()
        .map(|&i| {
            (
                searched[i].policy.clone(),
                searched[i].cost,
                searched[i].chance,
            )
        })
        .collect();
    let front = thin(&full_front, &pts, config.max_frontier);
    stats.recosted = front.len();

    let t_val = std::time::Instant::now();
    let front_policies: Vec<Policy> = front
        .iter()
        .enumerate()
        .map(|(k, &i)| Policy {
            name: format!("F{}", k + 1),
            ..searched[i].policy.clone()
        })
        .collect();
    progress.phase("validation", front.len() as u64 * config.validate_trials);
    let recosted = recost::recost(
        model,
        &front_policies,
        validation_range(config.validate_trials),
        config.target,
        measure,
        progress,
    )
    .ok_or(FrontierError::Interrupted)?;
    stats.seconds_validation = t_val.elapsed().as_secs_f64();
    let points = frontier_points(&recosted, measure, true);
    let searched_out = searched
        .into_iter()
        .enumerate()
        .map(|(k, c)| {
            let mut p = c.policy;
            if p.name.is_empty() {
                p.name = format!("s{}", k + 1);
            }
            (p, c.cost, c.chance)
        })
        .collect();
    Ok(FrontierResult {
        points,
        searched: searched_out,
        space_size: space.size(),
        search_trials: config.search_trials,
        validate_trials: config.validate_trials,
        cost: measure,
        target: config.target,
        stats,
        search_frontier,
    })
}

/// Keep at most `max` of the frontier `front` (indices into `pts`, cheapest
/// first), spread over the chance range: the cheapest and the safest stay,
/// and the interior point whose removal leaves the smallest chance gap
/// between its neighbours goes first.
fn thin(front: &[usize], pts: &[(f64, f64)], max: usize) -> Vec<usize> {
    let mut keep = front.to_vec();
    while keep.len() > max.max(2) {
        let mut best = 1;
        let mut best_gap = f64::INFINITY;
        for j in 1..keep.len() - 1 {
            let gap = pts[keep[j + 1]].1 - pts[keep[j - 1]].1;
            if gap < best_gap {
                best_gap = gap;
                best = j;
            }
        }
        keep.remove(best);
    }
    keep
}

/// Mean surrogate down hours of a combination (for greedy steps).
fn mean_down(sur: &Surrogate<'_>, combo: &[u16]) -> f64 {
    combo
        .iter()
        .enumerate()
        .map(|(p, &o)| {
            let d = &sur.screened[p][o as usize].down;
            d.iter().sum::<f64>() / d.len().max(1) as f64
        })
        .sum()
}

/// Marginal analysis: from the cheapest policy, repeatedly take the single
/// part-type change with the largest reduction of a risk score per unit of
/// extra cost, recording every step.
fn marginal_path(sur: &mut Surrogate<'_>, start: &[u16]) -> Vec<Vec<u16>> {
    let mut path = vec![start.to_vec()];
    let mut cur = start.to_vec();
    // Risk score: shortfall of the chance plus a small weight on mean down
    // time, so flat stretches of the chance still have a direction.
    let risk = |sur: &mut Surrogate<'_>, c: &[u16]| {
        let (_, ch) = sur.score(c);
        (1.0 - ch) + 1e-3 * mean_down(sur, c) / sur.allowed_down.max(1.0)
    };
    for _ in 0..400 {
        let (c0, _) = sur.score(&cur);
        let r0 = risk(sur, &cur);
        let mut best: Option<(f64, Vec<u16>)> = None;
        for next in sur.neighbours(&cur) {
            let (c1, _) = sur.score(&next);
            let r1 = risk(sur, &next);
            let gain = r0 - r1;
            if gain <= 1e-12 {
                continue;
            }
            let dc = c1 - c0;
            // A change that is cheaper and safer is taken at once.
            let ratio = if dc <= 0.0 { f64::INFINITY } else { gain / dc };
            if best.as_ref().is_none_or(|(b, _)| ratio > *b) {
                best = Some((ratio, next));
            }
        }
        match best {
            Some((_, next)) => {
                cur = next;
                path.push(cur.clone());
            }
            None => break,
        }
        if sur.score(&cur).1 >= 1.0 {
            break;
        }
    }
    path
}

/// LP seeds: the CVaR program for a ladder of chance levels, each solution
/// rounded to every combination of the options it uses.
fn lp_seeds(sur: &mut Surrogate<'_>, stats: &mut SearchStats) -> Vec<Vec<u16>> {
    // The LP works on a subsample of trials (rows), and only on options not
    // dominated in mean cost and mean down time within their part type.
    let rows = sur.n.min(400);
    let mut keep: Vec<Vec<usize>> = Vec::new();
    for opts in &sur.screened {
        let means: Vec<(f64, f64)> = opts
            .iter()
            .map(|o| {
                let d = o.down.iter().sum::<f64>() / o.down.len().max(1) as f64;
                (o.cost_mean, -d)
            })
            .collect();
        let mut k = non_dominated(&means);
        k.sort_unstable();
        keep.push(k);
    }
    let mut out = Vec::new();
    for alpha in [0.3, 0.5, 0.7, 0.8, 0.9, 0.95, 0.98, 0.995] {
        let parts: Vec<Vec<lp::LpOption<'_>>> = sur
            .screened
            .iter()
            .zip(&keep)
            .map(|(opts, k)| {
                k.iter()
                    .map(|&i| lp::LpOption {
                        cost: opts[i].cost_mean,
                        capital: opts[i].capital,
                        down: &opts[i].down[..rows],
                    })
                    .collect()
            })
            .collect();
        stats.lps += 1;
        let Ok(x) = lp::solve_cvar(&parts, sur.allowed_down, alpha, sur.budget) else {
            continue;
        };
        // Supports per part type (options with weight), at most 3 each.
        let supports: Vec<Vec<u16>> = x
            .iter()
            .zip(&keep)
            .map(|(w, k)| {
                let mut s: Vec<(f64, u16)> = w
                    .iter()
                    .zip(k)
                    .filter(|(v, _)| **v > 1e-6)
                    .map(|(v, &i)| (*v, i as u16))
                    .collect();
                s.sort_by(|a, b| b.0.total_cmp(&a.0));
                s.truncate(3);
                s.into_iter().map(|(_, i)| i).collect()
            })
            .collect();
        let mut combos: Vec<Vec<u16>> = vec![Vec::new()];
        for s in &supports {
            let s = if s.is_empty() { vec![0] } else { s.clone() };
            combos = combos
                .into_iter()
                .flat_map(|c| {
                    s.iter().map(move |&o| {
                        let mut c = c.clone();
                        c.push(o);
                        c
                    })
                })
                .collect();
            if combos.len() > 256 {
                combos.truncate(256);
            }
        }
        out.extend(combos);
    }
    out
}

/// Pareto local search over single part-type changes, on the surrogate.
fn pareto_local_search(
    sur: &mut Surrogate<'_>,
    seeds: Vec<Vec<u16>>,
    max_rounds: usize,
) -> Vec<Vec<u16>> {
    let mut archive: Vec<(Vec<u16>, f64, f64)> = Vec::new();
    let add = |archive: &mut Vec<(Vec<u16>, f64, f64)>, c: Vec<u16>, cost: f64, ch: f64| {
        if archive
            .iter()
            .any(|(a, ac, ak)| a == &c || (*ac <= cost && *ak >= ch && (*ac < cost || *ak > ch)))
        {
            return false;
        }
        archive.retain(|(_, ac, ak)| !(cost <= *ac && ch >= *ak));
        archive.push((c, cost, ch));
        true
    };
    let mut frontier_queue: Vec<Vec<u16>> = Vec::new();
    for s in seeds {
        let (c, k) = sur.score(&s);
        if add(&mut archive, s.clone(), c, k) {
            frontier_queue.push(s);
        }
    }
    let mut explored: HashSet<Vec<u16>> = HashSet::new();
    for _ in 0..max_rounds {
        let batch: Vec<Vec<u16>> = frontier_queue
            .drain(..)
            .filter(|c| archive.iter().any(|(a, _, _)| a == c) && explored.insert(c.clone()))
            .collect();
        if batch.is_empty() {
            break;
        }
        for cur in batch {
            for next in sur.neighbours(&cur) {
                let (c, k) = sur.score(&next);
                if add(&mut archive, next.clone(), c, k) {
                    frontier_queue.push(next);
                }
            }
        }
    }
    archive.sort_by(|a, b| a.1.total_cmp(&b.1));
    archive.into_iter().map(|(c, _, _)| c).collect()
}

/// Choose at most `max` combinations from the surrogate frontier, spread
/// evenly in chance, plus each one's cheaper and safer surrogate
/// neighbours (full simulation may reorder close surrogate points).
fn spread(sur: &mut Surrogate<'_>, archive: &[Vec<u16>], max: usize) -> Vec<Vec<u16>> {
    if archive.len() <= max {
        return archive.to_vec();
    }
    let scored: Vec<(f64, f64)> = archive.iter().map(|c| sur.score(c)).collect();
    let lo = scored.iter().map(|s| s.1).fold(f64::INFINITY, f64::min);
    let hi = scored.iter().map(|s| s.1).fold(f64::NEG_INFINITY, f64::max);
    let mut out: Vec<Vec<u16>> = Vec::new();
    let mut chosen = vec![false; archive.len()];
    // Always the cheapest and the safest.
    chosen[0] = true;
    chosen[archive.len() - 1] = true;
    let slots = max.saturating_sub(2).max(1);
    for k in 1..=slots {
        let level = lo + (hi - lo) * k as f64 / (slots + 1) as f64;
        // The cheapest archive point reaching this level.
        if let Some(i) = (0..archive.len()).find(|&i| scored[i].1 >= level) {
            chosen[i] = true;
        }
    }
    for (i, c) in archive.iter().enumerate() {
        if chosen[i] && out.len() < max {
            out.push(c.clone());
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn non_dominated_keeps_the_staircase() {
        let pts = [(1.0, 0.5), (2.0, 0.4), (2.0, 0.7), (3.0, 0.7), (4.0, 0.9)];
        assert_eq!(non_dominated(&pts), vec![0, 2, 4]);
    }

    #[test]
    fn hypervolume_of_a_staircase() {
        // Two points against reference cost 10: (2, 0.5) and (6, 0.9):
        // (10-6) x 0.9 + (10-2) x (0.5 - 0) - overlap... computed by strips:
        // chance 0..0.5 from cost 2 to 10 (8 x 0.5 = 4), 0.5..0.9 from 6 to 10
        // (4 x 0.4 = 1.6): 5.6.
        let hv = hypervolume(&[(2.0, 0.5), (6.0, 0.9)], 10.0);
        assert!((hv - 5.6).abs() < 1e-12, "{hv}");
    }
}
