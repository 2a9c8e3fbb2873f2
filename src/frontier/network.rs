//! The frontier search over sites and a depot, and under a ready-units
//! target: the rule of each part type and its stock at each site and at
//! the depot.
//!
//! Owns: the analytic seed and pruning of such a search (the two-echelon
//! model of each part type under each of its rules, the merge of the part
//! types' stock paths, the analytic score of the target in force), the
//! choice of the policies simulated in full along the analytic frontier,
//! and the stock choices of a part type's search space.
//! May use: `analytic` (renewal rates, the Poisson law), `echelon` (the
//! two-echelon model and its marginal analysis), `model`, `recost` (the
//! non-dominated filter, the costed result), `run` (full simulation).
//! No randomness of its own, no I/O.
//!
//! How it searches (DEVELOPERS.md has the reasoning):
//! 1. **Each part type under each rule, analytically.** Its removals per
//!    position-hour in steady state (Barlow & Proschan's renewal-reward
//!    rates: `1 / int_0^T R` for age replacement, `(1 + M(T)) / T` for
//!    block replacement), split into planned and failed ones; its running
//!    money over the horizon (labour, parts bought or repaired, shipments);
//!    its expected units down in replacement at each site; and its stock
//!    path: the two-echelon model of `echelon` (VARI-METRIC: each site's
//!    pipeline with the depot's expected delay, the two-moment negative
//!    binomial for the site backorders; Sherbrooke 1986), and the lower
//!    convex hull of the marginal analysis over the depot and the sites
//!    (`echelon::allocation_hull`), the site backorders weighted by how much
//!    each site's count matters to the target.
//! 2. **The system path of each rule combination.** From the cheapest
//!    stock of every part type, the greedy marginal analysis across part
//!    types: at each step the next hull point of the part type that cuts
//!    the weighted backorders most per unit of money (Sherbrooke's system
//!    approach). Every step is a candidate policy with an analytic cost and
//!    an analytic score of the target: units down at site `j`,
//!    `m_j = sum over part types of (backorders + units in replacement)`,
//!    read as Poisson; for a ready-units target the chance of a moment with
//!    every site at its count, `prod_j P(N_j <= n_j - k_j)`; for an
//!    availability target `1 - sum_j m_j / N`.
//! 3. **The analytic frontier** of all the candidates in (cost, score).
//! 4. **Full simulation along it**, on the search trials: a few policies
//!    evenly spaced along the analytic frontier, then repeatedly the middle
//!    policy of the neighbouring pair of simulated ones whose gap in
//!    simulated chance times gap in cost is largest (where the frontier
//!    bends), up to `max_full` policies.
//!
//! Left out of the analytics (the simulation has them all): lateral supply
//! (the analytic backorders are those without it, on the safe side), the
//! wait for a limited repair channel, initial ages (steady state), the
//! time a unit is down (its parts do not age then), and the spread of the
//! cost across trials (a percentile cost measure is ranked by the mean).

use crate::analytic::{
    PoissonPipeline, age_replacement_cost_rate, block_replacement_cost_rate,
};
use crate::echelon::{ByLocation, SiteDemand, TwoEchelon, allocation_hull};
use crate::model::{
    CostBasis, Model, PartPolicy, PartSearch, Policy, Rule, SearchSpace, Stock,
};
use crate::recost::{Costed, non_dominated};
use crate::run::Progress;

use super::{FrontierConfig, FrontierError, SearchStats};

/// Most rule combinations the analytic stage walks; beyond, each part
/// type's dearest rules are dropped first.
const MAX_RULE_COMBOS: usize = 4096;

/// True when a scenario is searched here: it names sites (stock per site
/// and at a depot) or has a ready-units target.
pub(super) fn applies(model: &Model) -> bool {
    model.has_sites() || model.ready.is_some()
}

/// Every stock choice of a part type's search space, in a fixed order:
/// without sites the one level from `stock_min` to `stock_max`; with sites
/// every combination of the site levels (the first site's fastest) and,
/// slowest, the depot's level.
pub(super) fn stock_choices(ps: &PartSearch) -> Vec<Stock> {
    let Some(r) = &ps.locations else {
        return (ps.stock_min..=ps.stock_max).map(Stock::single).collect();
    };
    let mut out = Vec::new();
    for depot in r.depot.0..=r.depot.1 {
        let mut levels: Vec<u32> = r.sites.iter().map(|s| s.0).collect();
        'odometer: loop {
            out.push(Stock::at_sites(&levels, depot));
            for (l, range) in levels.iter_mut().zip(&r.sites) {
                *l += 1;
                if *l <= range.1 {
                    continue 'odometer;
                }
                *l = range.0;
            }
            break;
        }
    }
    out
}

/// One point of a part type's stock path under one rule.
#[derive(Debug, Clone)]
struct StockPoint {
    stock: Stock,
    /// The money the marginal analysis ranks by (unit price x spares).
    key_cost: f64,
    /// Weighted total site backorders.
    weighted: f64,
    /// Expected backorders at each site (units down waiting for a spare).
    site_backorders: Vec<f64>,
    /// Capital of the initial stock.
    capital: f64,
    /// Holding money over the horizon for the expected spares on hand.
    holding: f64,
}

/// One part type under one rule.
#[derive(Debug, Clone)]
struct RuleFigures {
    rule: Rule,
    /// Running money over the horizon (labour, parts bought or repaired,
    /// shipments).
    running: f64,
    /// Expected units down in replacement at each site.
    in_replacement: Vec<f64>,
    /// The stock path, cheapest first.
    path: Vec<StockPoint>,
}

/// Planned and failed removals per position-hour of `rule` on `life` in
/// steady state (Barlow & Proschan 1965, the renewal-reward argument).
fn removal_rates(model: &Model, p: usize, rule: Rule) -> (f64, f64) {
    let life = &model.parts[p].life;
    match rule {
        Rule::RunToFailure => (0.0, 1.0 / life.mean()),
        Rule::Age(t) => {
            let all = age_replacement_cost_rate(life, 1.0, 1.0, t);
            let failed = age_replacement_cost_rate(life, 0.0, 1.0, t);
            ((all - failed).max(0.0), failed)
        }
        Rule::Block(t) => (1.0 / t, block_replacement_cost_rate(life, 0.0, 1.0, t)),
    }
}

/// The analytic figures of every part type under every rule of the space.
struct Analytic {
    /// Per part type, per kept rule.
    parts: Vec<Vec<RuleFigures>>,
    /// Units at each site.
    site_units: Vec<f64>,
    /// Down units each site may have while the target still holds (ready
    /// target), per site.
    slack: Option<Vec<u32>>,
    penalty_per_unit_hour: f64,
    horizon: f64,
    basis: CostBasis,
}

impl Analytic {
    fn new(model: &Model, space: &SearchSpace) -> Self {
        let n_sites = model.sites.len();
        // Positions of each part type at each site.
        let mut positions = vec![vec![0.0f64; n_sites]; model.parts.len()];
        for u in &model.units {
            for &p in &u.parts {
                positions[p][u.site] += 1.0;
            }
        }
        let site_units: Vec<f64> = model.site_units().iter().map(|&n| n as f64).collect();
        let slack = model.ready.as_ref().map(|r| {
            site_units
                .iter()
                .zip(&r.at_least)
                .map(|(&n, &k)| (n as u32).saturating_sub(k))
                .collect::<Vec<u32>>()
        });
        let horizon = model.horizon;
        // Each part type's removals and running money per rule.
        let rates: Vec<Vec<(Rule, f64, f64)>> = space
            .parts
            .iter()
            .enumerate()
            .map(|(p, ps)| {
                ps.rules
                    .iter()
                    .map(|&rule| {
                        let (planned, failed) = removal_rates(model, p, rule);
                        (rule, planned, failed)
                    })
                    .collect()
            })
            .collect();
        // Units down in replacement at each site, with each part type's
        // first rule: where the weights of the sites are read.
        let mut base_down = vec![0.0; n_sites];
        for (p, part) in model.parts.iter().enumerate() {
            if let Some(&(_, planned, failed)) = rates[p].first() {
                let per_position =
                    planned * part.duration_planned + failed * part.duration_unplanned;
                for (d, n) in base_down.iter_mut().zip(&positions[p]) {
                    *d += per_position * n;
                }
            }
        }
        let weights: Vec<f64> = match &slack {
            None => vec![1.0; n_sites],
            Some(s) => site_weights(&base_down, s),
        };
        let basis = space.cost.basis;
        let parts = model
            .parts
            .iter()
            .enumerate()
            .map(|(p, part)| {
                let ps = &space.parts[p];
                let shipping = model.depot.as_ref().map_or(0.0, |d| d.cost_per_shipment);
                // The money the marginal analysis ranks a spare by: its
                // capital (on the spend basis) and its holding if always on
                // the shelf.
                let holding_h = part.holding_per_hour * horizon;
                let capital_key = if basis == CostBasis::Spend {
                    part.price
                } else {
                    0.0
                };
                let mut unit = capital_key + holding_h;
                if unit <= 0.0 || !unit.is_finite() {
                    unit = part.price.max(1.0);
                }
                let fleet_positions: f64 = positions[p].iter().sum();
                rates[p]
                    .iter()
                    .map(|&(rule, planned, failed)| {
                        let (material_p, material_f, condemn) = match &part.repair {
                            Some(r) => {
                                let removals = planned + failed;
                                let condemn = if removals > 0.0 {
                                    (planned * r.condemn_planned + failed * r.condemn_failed)
                                        / removals
                                } else {
                                    r.condemn_failed
                                };
                                (
                                    r.condemn_planned * part.price
                                        + (1.0 - r.condemn_planned) * r.cost_planned,
                                    r.condemn_failed * part.price
                                        + (1.0 - r.condemn_failed) * r.cost_failed,
                                    condemn,
                                )
                            }
                            None => (part.price, part.price, 1.0),
                        };
                        let running = fleet_positions
                            * horizon
                            * (planned * (part.labour_planned + material_p + shipping)
                                + failed * (part.labour_unplanned + material_f + shipping));
                        let per_position = planned * part.duration_planned
                            + failed * part.duration_unplanned;
                        let in_replacement: Vec<f64> =
                            positions[p].iter().map(|n| n * per_position).collect();
                        let rate = planned + failed;
                        let demands: Vec<SiteDemand> = positions[p]
                            .iter()
                            .enumerate()
                            .map(|(j, n)| SiteDemand {
                                rate: n * rate,
                                resupply: match &model.depot {
                                    Some(d) => d.transport[j].mean(),
                                    None => part.mean_return(condemn),
                                },
                            })
                            .collect();
                        let path = stock_path(
                            model,
                            p,
                            ps,
                            &demands,
                            part.mean_return(condemn),
                            unit,
                            &weights,
                        );
                        RuleFigures {
                            rule,
                            running,
                            in_replacement,
                            path,
                        }
                    })
                    .collect()
            })
            .collect();
        Analytic {
            parts,
            site_units,
            slack,
            penalty_per_unit_hour: model.downtime_penalty,
            horizon,
            basis,
        }
    }

    /// Analytic (cost, score) of one candidate: per part type its rule
    /// index and stock path index.
    fn score(&self, rules: &[usize], steps: &[usize]) -> (f64, f64) {
        let n_sites = self.site_units.len();
        let mut down = vec![0.0; n_sites];
        let mut cost = 0.0;
        for (p, (&r, &k)) in rules.iter().zip(steps).enumerate() {
            let f = &self.parts[p][r];
            let point = &f.path[k];
            cost += f.running + point.holding;
            if self.basis == CostBasis::Spend {
                cost += point.capital;
            }
            for (j, d) in down.iter_mut().enumerate() {
                *d += f.in_replacement[j] + point.site_backorders[j];
            }
        }
        if self.basis == CostBasis::TotalWithPenalty {
            cost += self.penalty_per_unit_hour * self.horizon * down.iter().sum::<f64>();
        }
        let score = match &self.slack {
            Some(slack) => down
                .iter()
                .zip(slack)
                .map(|(&m, &s)| poisson_cdf(m, s))
                .product(),
            None => {
                let units: f64 = self.site_units.iter().sum();
                1.0 - down.iter().sum::<f64>() / units.max(1.0)
            }
        };
        (cost, score)
    }
}

/// `P(N <= s)` for `N ~ Poisson(m)`.
fn poisson_cdf(m: f64, s: u32) -> f64 {
    PoissonPipeline::new(m.max(0.0)).map_or(0.0, |p| p.cdf(s))
}

/// How much one more unit down at each site cuts the chance of a moment
/// with every site at its count: `d/dm ln P(N_j <= s_j) = -P(N_j = s_j) /
/// P(N_j <= s_j)` for Poisson `N_j` (its magnitude), at the units down in
/// replacement alone; floored at a thousandth of the largest so every
/// site's backorders still count.
fn site_weights(down: &[f64], slack: &[u32]) -> Vec<f64> {
    let raw: Vec<f64> = down
        .iter()
        .zip(slack)
        .map(|(&m, &s)| match PoissonPipeline::new(m.max(0.0)) {
            Ok(law) => {
                let c = law.cdf(s);
                if c > 0.0 { law.pmf(s) / c } else { 1.0 }
            }
            Err(_) => 1.0,
        })
        .collect();
    let top = raw.iter().copied().fold(0.0, f64::max);
    if top <= 0.0 || !top.is_finite() {
        return vec![1.0; down.len()];
    }
    raw.iter().map(|&w| w.max(1e-3 * top)).collect()
}

/// A part type's stock path under one rule: the lower convex hull of the
/// marginal analysis over the depot and the sites, each point raised to
/// the space's least levels, with its per-site backorders, capital and
/// holding. A part type nobody fits has the one point of least stock.
fn stock_path(
    model: &Model,
    p: usize,
    ps: &PartSearch,
    demands: &[SiteDemand],
    depot_resupply: f64,
    unit: f64,
    weights: &[f64],
) -> Vec<StockPoint> {
    let part = &model.parts[p];
    let n_sites = demands.len();
    // Bounds and least levels per location.
    let (site_bounds, depot_bound): (Vec<(u32, u32)>, (u32, u32)) = match &ps.locations {
        Some(r) => (r.sites.clone(), r.depot),
        None => (vec![(ps.stock_min, ps.stock_max); n_sites], (0, 0)),
    };
    let make_stock = |sites: &[u32], depot: u32| {
        if ps.locations.is_some() {
            Stock::at_sites(sites, depot)
        } else {
            Stock::single(sites[0])
        }
    };
    let echelon = match &model.depot {
        Some(_) => TwoEchelon::with_depot(demands, depot_resupply),
        None => TwoEchelon::without_depot(demands),
    };
    let least_sites: Vec<u32> = site_bounds.iter().map(|b| b.0).collect();
    let least = || {
        let stock = make_stock(&least_sites, depot_bound.0);
        let capital = f64::from(stock.total()) * part.price;
        StockPoint {
            key_cost: f64::from(stock.total()) * unit,
            weighted: 0.0,
            site_backorders: vec![0.0; n_sites],
            capital,
            holding: capital / part.price.max(f64::MIN_POSITIVE)
                * part.holding_per_hour
                * model.horizon,
            stock,
        }
    };
    let Ok(echelon) = echelon else {
        return vec![least()];
    };
    let bounds = ByLocation {
        depot: depot_bound.1,
        sites: site_bounds.iter().map(|b| b.1).collect(),
    };
    let prices = ByLocation {
        depot: unit,
        sites: vec![unit; n_sites],
    };
    let Ok(hull) = allocation_hull(&echelon, &bounds, &prices, Some(weights)) else {
        return vec![least()];
    };
    let mut out: Vec<StockPoint> = Vec::with_capacity(hull.len());
    for a in hull {
        let sites: Vec<u32> = a
            .stock
            .sites
            .iter()
            .zip(&site_bounds)
            .map(|(&s, b)| s.max(b.0))
            .collect();
        let depot = if model.depot.is_some() {
            a.stock.depot.max(depot_bound.0)
        } else {
            0
        };
        let stock = make_stock(&sites, depot);
        if out.last().is_some_and(|l| l.stock == stock) {
            continue;
        }
        let at = ByLocation {
            depot,
            sites: sites.clone(),
        };
        let Ok(e) = echelon.evaluate(&at) else {
            continue;
        };
        let site_backorders: Vec<f64> = e.sites.iter().map(|s| s.backorders).collect();
        let depot_on_hand = e.depot.map_or(0.0, |d| {
            (f64::from(depot) - d.pipeline_mean + d.backorders).max(0.0)
        });
        let on_hand: f64 = e.sites.iter().map(|s| s.on_hand).sum::<f64>() + depot_on_hand;
        out.push(StockPoint {
            key_cost: f64::from(stock.total()) * unit,
            weighted: site_backorders
                .iter()
                .zip(weights)
                .map(|(b, w)| b * w)
                .sum(),
            site_backorders,
            capital: f64::from(stock.total()) * part.price,
            holding: on_hand * part.holding_per_hour * model.horizon,
            stock,
        });
    }
    if out.is_empty() {
        out.push(least());
    }
    out
}

/// The rule combinations walked: every combination of each part type's
/// rules, the dearest rules (by running money) dropped first from the part
/// type with the most while there are more than [`MAX_RULE_COMBOS`].
fn rule_combos(an: &Analytic) -> Vec<Vec<usize>> {
    let mut kept: Vec<Vec<usize>> = an
        .parts
        .iter()
        .map(|rules| {
            let mut idx: Vec<usize> = (0..rules.len()).collect();
            idx.sort_by(|&a, &b| rules[a].running.total_cmp(&rules[b].running));
            idx
        })
        .collect();
    let count = |kept: &[Vec<usize>]| {
        kept.iter()
            .fold(1usize, |acc, k| acc.saturating_mul(k.len().max(1)))
    };
    while count(&kept) > MAX_RULE_COMBOS {
        let Some(widest) = (0..kept.len()).max_by_key(|&p| kept[p].len()) else {
            break;
        };
        if kept[widest].len() <= 1 {
            break;
        }
        kept[widest].pop();
    }
    for k in &mut kept {
        k.sort_unstable();
    }
    let mut combos: Vec<Vec<usize>> = vec![Vec::new()];
    for k in &kept {
        combos = combos
            .into_iter()
            .flat_map(|c| {
                k.iter().map(move |&r| {
                    let mut c = c.clone();
                    c.push(r);
                    c
                })
            })
            .collect();
    }
    combos
}

/// A candidate policy: per part type its rule index and stock path index,
/// with its analytic cost and score.
#[derive(Debug, Clone)]
struct Candidate {
    rules: Vec<usize>,
    steps: Vec<usize>,
    cost: f64,
    score: f64,
}

/// Steps 2 and 3: every rule combination's system path, and the analytic
/// frontier of all their points, cheapest first.
fn analytic_frontier(an: &Analytic, space: &SearchSpace) -> Vec<Candidate> {
    let mut pool: Vec<Candidate> = Vec::new();
    let fits = |rules: &[usize], steps: &[usize]| {
        space.spares_budget.is_none_or(|b| {
            let capital: f64 = rules
                .iter()
                .zip(steps)
                .enumerate()
                .map(|(p, (&r, &k))| an.parts[p][r].path[k].capital)
                .sum();
            capital <= b + 1e-9
        })
    };
    for rules in rule_combos(an) {
        let mut steps = vec![0usize; rules.len()];
        loop {
            if fits(&rules, &steps) {
                let (cost, score) = an.score(&rules, &steps);
                pool.push(Candidate {
                    rules: rules.clone(),
                    steps: steps.clone(),
                    cost,
                    score,
                });
            }
            // The part type whose next stock point cuts the weighted
            // backorders most per unit of money (ties: the lower index).
            let mut best: Option<(f64, usize)> = None;
            for (p, (&r, &k)) in rules.iter().zip(&steps).enumerate() {
                let path = &an.parts[p][r].path;
                if k + 1 < path.len() {
                    let dc = (path[k + 1].key_cost - path[k].key_cost).max(1e-12);
                    let gain = (path[k].weighted - path[k + 1].weighted) / dc;
                    if best.is_none_or(|b| gain > b.0) {
                        best = Some((gain, p));
                    }
                }
            }
            match best {
                Some((_, p)) => steps[p] += 1,
                None => break,
            }
        }
    }
    let pts: Vec<(f64, f64)> = pool.iter().map(|c| (c.cost, c.score)).collect();
    let front = non_dominated(&pts);
    front.into_iter().map(|i| pool[i].clone()).collect()
}

/// The search of a scenario with sites or a ready-units target: steps 1
/// to 4 of the module comment. Returns the policies simulated in full on
/// the search trials.
///
/// # Errors
/// When nothing fits the spares budget, or the run was interrupted.
pub(super) fn search(
    model: &Model,
    space: &SearchSpace,
    config: &FrontierConfig,
    progress: &dyn Progress,
    stats: &mut SearchStats,
) -> Result<Vec<Costed>, FrontierError> {
    let t_start = std::time::Instant::now();
    let an = Analytic::new(model, space);
    let front = analytic_frontier(&an, space);
    stats.seconds_screening = t_start.elapsed().as_secs_f64();
    if front.is_empty() {
        return Err(FrontierError::NothingFits(
            space.spares_budget.unwrap_or(0.0),
        ));
    }
    stats.surrogate_scored = front.len();
    let t_search = std::time::Instant::now();
    let n = config.search_trials;
    let budget = config.max_full.max(2).min(front.len());
    progress.phase("search", budget as u64 * n);
    let policy_of = |c: &Candidate| Policy {
        name: String::new(),
        parts: c
            .rules
            .iter()
            .zip(&c.steps)
            .enumerate()
            .map(|(p, (&r, &k))| PartPolicy {
                rule: an.parts[p][r].rule,
                stock: an.parts[p][r].path[k].stock.clone(),
            })
            .collect(),
    };
    // Simulated so far: index along the analytic frontier -> result.
    let mut done: std::collections::BTreeMap<usize, Costed> = std::collections::BTreeMap::new();
    let simulate = |i: usize, done: &mut std::collections::BTreeMap<usize, Costed>| {
        let policy = policy_of(&front[i]);
        let s = crate::run::evaluate(model, &policy, 0..n, config.target, progress)
            .ok_or(FrontierError::Interrupted)?;
        done.insert(i, Costed::of(s, space.cost));
        Ok::<(), FrontierError>(())
    };
    let last = front.len() - 1;
    // Evenly spaced first picks, the cheapest and the dearest among them.
    let first = (budget / 3).clamp(2, budget);
    for k in 0..first {
        let i = ((k * last) as f64 / (first - 1).max(1) as f64).round() as usize;
        if !done.contains_key(&i) {
            simulate(i, &mut done)?;
        }
    }
    // Then where the simulated frontier bends most.
    let eps = 1.0 / n.max(1) as f64;
    while done.len() < budget {
        let keys: Vec<usize> = done.keys().copied().collect();
        let mut best: Option<(f64, usize)> = None;
        for w in keys.windows(2) {
            let (a, b) = (w[0], w[1]);
            if b - a < 2 {
                continue;
            }
            let (ca, cb) = (&done[&a], &done[&b]);
            let dk = (cb.chance.value - ca.chance.value).max(0.0) + eps;
            let dc = (cb.cost.mean - ca.cost.mean).abs().max(1e-9);
            let gain = dk * dc;
            if best.is_none_or(|x| gain > x.0) {
                best = Some((gain, (a + b) / 2));
            }
        }
        match best {
            Some((_, i)) => simulate(i, &mut done)?,
            None => break,
        }
    }
    stats.evaluated = done.len();
    stats.seconds_search = t_search.elapsed().as_secs_f64();
    Ok(done.into_values().collect())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::StockRanges;

    #[test]
    fn stock_choices_cover_every_site_and_depot_level_once() {
        let ps = PartSearch {
            rules: vec![Rule::RunToFailure],
            stock_min: 0,
            stock_max: 0,
            locations: Some(StockRanges {
                sites: vec![(0, 2), (1, 2)],
                depot: (0, 1),
            }),
        };
        let all = stock_choices(&ps);
        assert_eq!(all.len(), 3 * 2 * 2);
        let set: std::collections::HashSet<String> = all.iter().map(|s| s.to_string()).collect();
        assert_eq!(set.len(), all.len());
        assert_eq!(all[0], Stock::at_sites(&[0, 1], 0));
        assert_eq!(all[1], Stock::at_sites(&[1, 1], 0));
        assert_eq!(all[11], Stock::at_sites(&[2, 2], 1));
    }

    #[test]
    fn site_weights_favour_the_tight_site() {
        // Poisson(1): P(N = 0) / P(N <= 0) = 1; P(N = 3) / P(N <= 3) =
        // (1/6) / (1 + 1 + 1/2 + 1/6) = 0.0625 (Poisson law, by hand).
        let w = site_weights(&[1.0, 1.0], &[0, 3]);
        assert!((w[0] - 1.0).abs() < 1e-12, "{w:?}");
        assert!((w[1] - 0.0625).abs() < 1e-12, "{w:?}");
    }
}
