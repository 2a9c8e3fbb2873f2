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

use crate::analytic::{PoissonPipeline, age_replacement_cost_rate, block_replacement_cost_rate};
use std::collections::BTreeMap;

use crate::echelon::{SiteDemand, TwoEchelon};
use crate::model::{CostBasis, Model, PartPolicy, PartSearch, Policy, Rule, SearchSpace, Stock};
use crate::recost::Costed;
use crate::run::Progress;

use super::{FrontierConfig, FrontierError, SearchStats};

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
    /// How much each site's units down weigh (see [`site_weights`]).
    weights: Vec<f64>,
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
                        let per_position =
                            planned * part.duration_planned + failed * part.duration_unplanned;
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
                        let path =
                            stock_path(model, p, ps, &demands, part.mean_return(condemn), &weights);
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
            weights,
            penalty_per_unit_hour: model.downtime_penalty,
            horizon,
            basis,
        }
    }

    /// The analytic score of the target from the units down at each site.
    fn score(&self, down: &[f64]) -> f64 {
        match &self.slack {
            Some(slack) => down
                .iter()
                .zip(slack)
                .map(|(&m, &s)| poisson_cdf(m, s))
                .product(),
            None => {
                let units: f64 = self.site_units.iter().sum();
                1.0 - down.iter().sum::<f64>() / units.max(1.0)
            }
        }
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

/// A part type's stock points under one rule: for each depot level of the
/// space, Sherbrooke's marginal analysis over the sites (from the space's
/// least levels, one spare at a time where it cuts the weighted site
/// backorders most per unit of money; each site's backorders are convex in
/// its own stock, so for a fixed depot level the path is efficient; one
/// path per depot level is the remedy for the depot's non-convexity that
/// `echelon::allocation_hull` also uses), every step kept, with its
/// per-site backorders, capital and holding. A part type nobody fits has
/// the one point of least stock.
fn stock_path(
    model: &Model,
    p: usize,
    ps: &PartSearch,
    demands: &[SiteDemand],
    depot_resupply: f64,
    weights: &[f64],
) -> Vec<StockPoint> {
    let part = &model.parts[p];
    let n_sites = demands.len();
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
    // Pipelines the two-echelon model can hold: finite means.
    let total: f64 = demands.iter().map(|d| d.rate).sum();
    let finite = demands.iter().all(|d| (d.rate * d.resupply).is_finite())
        && (model.depot.is_none() || (total * depot_resupply).is_finite());
    let echelon = match &model.depot {
        _ if !finite => Err(()),
        Some(_) => TwoEchelon::with_depot(demands, depot_resupply).map_err(|_| ()),
        None => TwoEchelon::without_depot(demands).map_err(|_| ()),
    };
    let least_sites: Vec<u32> = site_bounds.iter().map(|b| b.0).collect();
    let Ok(echelon) = echelon else {
        // No demand (nothing is ever short), or none the model can hold:
        // the least stock only.
        let stock = make_stock(&least_sites, depot_bound.0);
        let spares = f64::from(stock.total());
        return vec![StockPoint {
            site_backorders: vec![0.0; n_sites],
            capital: spares * part.price,
            holding: spares * part.holding_per_hour * model.horizon,
            stock,
        }];
    };
    let depot_levels = if model.depot.is_some() {
        depot_bound.0..=depot_bound.1
    } else {
        0..=0
    };
    let mut out: Vec<StockPoint> = Vec::new();
    let point = |sites: &[u32], s0: u32, depot_on_hand: f64| {
        let measures: Vec<_> = (0..n_sites)
            .map(|j| echelon.site(j, s0, sites[j]))
            .collect();
        let on_hand: f64 = measures.iter().map(|m| m.on_hand).sum::<f64>() + depot_on_hand;
        let stock = make_stock(sites, s0);
        let spares = f64::from(stock.total());
        StockPoint {
            site_backorders: measures.iter().map(|m| m.backorders).collect(),
            capital: spares * part.price,
            holding: on_hand * part.holding_per_hour * model.horizon,
            stock,
        }
    };
    let all = stock_choices(ps);
    if all.len() <= MAX_ENUMERATED {
        // Few enough: every stock choice, each by the two-echelon model.
        let mut depot_cache: Option<(u32, f64)> = None;
        for stock in all {
            let s0 = if model.depot.is_some() {
                stock.depot()
            } else {
                0
            };
            let on_hand0 = match depot_cache {
                Some((d, h)) if d == s0 => h,
                _ => {
                    let h = echelon.depot(s0).map_or(0.0, |d| {
                        (f64::from(s0) - d.pipeline_mean + d.backorders).max(0.0)
                    });
                    depot_cache = Some((s0, h));
                    h
                }
            };
            let sites: Vec<u32> = stock.site_levels().collect();
            out.push(point(&sites, s0, on_hand0));
        }
        return out;
    }
    for s0 in depot_levels {
        let depot_on_hand = echelon.depot(s0).map_or(0.0, |d| {
            (f64::from(s0) - d.pipeline_mean + d.backorders).max(0.0)
        });
        let mut sites = least_sites.clone();
        loop {
            let measures: Vec<_> = (0..n_sites)
                .map(|j| echelon.site(j, s0, sites[j]))
                .collect();
            let site_backorders: Vec<f64> = measures.iter().map(|m| m.backorders).collect();
            let on_hand: f64 = measures.iter().map(|m| m.on_hand).sum::<f64>() + depot_on_hand;
            let stock = make_stock(&sites, s0);
            let spares = f64::from(stock.total());
            out.push(StockPoint {
                site_backorders,
                capital: spares * part.price,
                holding: on_hand * part.holding_per_hour * model.horizon,
                stock,
            });
            // The site whose next spare cuts the weighted backorders most
            // (every site's spare costs the same; ties: the lower index).
            let mut best: Option<(f64, usize)> = None;
            for j in 0..n_sites {
                if sites[j] < site_bounds[j].1 {
                    let now = echelon.site(j, s0, sites[j]).backorders;
                    let next = echelon.site(j, s0, sites[j] + 1).backorders;
                    let gain = weights[j] * (now - next);
                    if best.is_none_or(|b| gain > b.0) {
                        best = Some((gain, j));
                    }
                }
            }
            match best {
                Some((gain, j)) if gain > 1e-12 => sites[j] += 1,
                _ => break,
            }
        }
    }
    out
}

/// One choice for one part type: a rule and one of its stock points, with
/// what it adds to the analytic cost, to each site's units down and to the
/// weighted units down.
#[derive(Debug, Clone)]
struct PartOption {
    rule: usize,
    step: usize,
    cost: f64,
    capital: f64,
    /// Units down at each site: in replacement plus backorders.
    down: Vec<f64>,
    weighted: f64,
}

/// A partial or whole policy in the merge: what its part types add up to.
#[derive(Debug, Clone)]
struct Node {
    cost: f64,
    capital: f64,
    weighted: f64,
    down: Vec<f64>,
    /// Index of the node it extends in the previous layer.
    parent: u32,
    /// Index of the part type's option it adds.
    option: u32,
}

/// Most nodes kept per layer of the merge; beyond, the layer's
/// non-dominated staircase is thinned evenly along the cost.
const MAX_NODES: usize = 6000;

/// Layers of non-dominated items in (cost, weighted), lower better in
/// both: the first `depth` layers of peeling (the staircase, then the
/// staircase of the rest, ...), each item with its layer from 0, cheapest
/// first within a layer.
fn layers<T>(items: Vec<T>, key: impl Fn(&T) -> (f64, f64), depth: usize) -> Vec<(usize, T)> {
    let mut rest: Vec<T> = items;
    rest.sort_by(|a, b| {
        let (ca, wa) = key(a);
        let (cb, wb) = key(b);
        ca.total_cmp(&cb).then(wa.total_cmp(&wb))
    });
    let mut out = Vec::new();
    for layer in 0..depth {
        if rest.is_empty() {
            break;
        }
        let mut later = Vec::new();
        let mut least = f64::INFINITY;
        for it in rest {
            let (_, w) = key(&it);
            if w < least - 1e-12 {
                least = w;
                out.push((layer, it));
            } else {
                later.push(it);
            }
        }
        rest = later;
    }
    out
}

/// Most stock choices of a part type evaluated one by one; beyond, the
/// marginal analysis per depot level.
const MAX_ENUMERATED: usize = 4096;

/// Most options of one part type kept (its lowest layers first).
const MAX_OPTIONS: usize = 600;

/// Most nodes one merge step builds.
const MAX_MERGED: usize = 2_000_000;

/// Layers of peeling kept of each part type's options and of each merge.
const DEPTH: usize = 6;

/// A whole policy of the analytic stage: per part type (rule index, stock
/// point index), its analytic cost and its layer of the analytic frontier
/// (0: on it).
#[derive(Debug, Clone)]
struct Candidate {
    choice: Vec<(usize, usize)>,
    cost: f64,
    layer: usize,
}

/// Steps 2 and 3: each part type's options (its rules times its stock
/// points) on its own staircase of (analytic cost, weighted units down),
/// merged part type by part type keeping the staircase of the sums (the
/// weighted units down add over part types, so no combination off a
/// staircase can come back onto the whole's), within the spares budget;
/// then the analytic frontier of the whole policies in (cost, score),
/// cheapest first, each as per part type (rule index, stock point index).
fn analytic_frontier(an: &Analytic, space: &SearchSpace) -> (Vec<Candidate>, usize) {
    let n_sites = an.site_units.len();
    let budget = space.spares_budget;
    let options: Vec<Vec<PartOption>> = an
        .parts
        .iter()
        .map(|rules| {
            let mut v = Vec::new();
            for (r, f) in rules.iter().enumerate() {
                for (k, pt) in f.path.iter().enumerate() {
                    let down: Vec<f64> = (0..n_sites)
                        .map(|j| f.in_replacement[j] + pt.site_backorders[j])
                        .collect();
                    let mut cost = f.running + pt.holding;
                    if an.basis == CostBasis::Spend {
                        cost += pt.capital;
                    } else {
                        cost += an.penalty_per_unit_hour * an.horizon * down.iter().sum::<f64>();
                    }
                    let weighted = down.iter().zip(&an.weights).map(|(d, w)| d * w).sum();
                    v.push(PartOption {
                        rule: r,
                        step: k,
                        cost,
                        capital: pt.capital,
                        down,
                        weighted,
                    });
                }
            }
            let mut kept: Vec<PartOption> = layers(v, |o| (o.cost, o.weighted), DEPTH)
                .into_iter()
                .map(|(_, o)| o)
                .collect();
            kept.truncate(MAX_OPTIONS);
            kept
        })
        .collect();
    let mut layers_kept: Vec<Vec<Node>> = Vec::with_capacity(options.len());
    let mut prev: Vec<Node> = vec![Node {
        cost: 0.0,
        capital: 0.0,
        weighted: 0.0,
        down: vec![0.0; n_sites],
        parent: 0,
        option: 0,
    }];
    let mut scored = 0usize;
    for opts in &options {
        // Bound the work and memory of one merge: the cheapest layers of
        // the previous one first.
        prev.truncate((MAX_MERGED / opts.len().max(1)).max(1));
        let mut next: Vec<Node> = Vec::with_capacity(prev.len() * opts.len());
        for (i, node) in prev.iter().enumerate() {
            for (o, opt) in opts.iter().enumerate() {
                let capital = node.capital + opt.capital;
                if budget.is_some_and(|b| capital > b + 1e-9) {
                    continue;
                }
                next.push(Node {
                    cost: node.cost + opt.cost,
                    capital,
                    weighted: node.weighted + opt.weighted,
                    down: node
                        .down
                        .iter()
                        .zip(&opt.down)
                        .map(|(a, b)| a + b)
                        .collect(),
                    parent: i as u32,
                    option: o as u32,
                });
            }
        }
        scored += next.len();
        let mut stair: Vec<Node> = layers(next, |n| (n.cost, n.weighted), DEPTH)
            .into_iter()
            .map(|(_, n)| n)
            .collect();
        if stair.len() > MAX_NODES {
            stair.sort_by(|a, b| a.cost.total_cmp(&b.cost));
            let len = stair.len();
            let keep: Vec<usize> = (0..MAX_NODES)
                .map(|k| k * (len - 1) / (MAX_NODES - 1))
                .collect();
            let mut it = keep.into_iter().peekable();
            let mut idx = 0usize;
            stair.retain(|_| {
                let take = it.peek() == Some(&idx);
                if take {
                    while it.peek() == Some(&idx) {
                        it.next();
                    }
                }
                idx += 1;
                take
            });
        }
        layers_kept.push(std::mem::take(&mut prev));
        prev = stair;
    }
    // `layers_kept[0]` is the empty start; `layers_kept[p + 1]` holds part type p's
    // merged nodes and `prev` the last one's.
    let last = prev;
    let scored_nodes: Vec<(f64, f64, usize)> = last
        .iter()
        .enumerate()
        .map(|(i, n)| (n.cost, -an.score(&n.down), i))
        .collect();
    let ranked = layers(scored_nodes, |&(c, w, _)| (c, w), DEPTH + 1);
    let n_parts = options.len();
    let out = ranked
        .into_iter()
        .map(|(layer, (cost, _, i))| {
            let mut choice = vec![(0usize, 0usize); n_parts];
            let mut node = &last[i];
            for p in (0..n_parts).rev() {
                let opt = &options[p][node.option as usize];
                choice[p] = (opt.rule, opt.step);
                if p > 0 {
                    node = &layers_kept[p][node.parent as usize];
                }
            }
            Candidate {
                choice,
                cost,
                layer,
            }
        })
        .collect();
    (out, scored)
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
    let (candidates, scored) = analytic_frontier(&an, space);
    stats.seconds_screening = t_start.elapsed().as_secs_f64();
    if candidates.is_empty() {
        return Err(FrontierError::NothingFits(
            space.spares_budget.unwrap_or(0.0),
        ));
    }
    stats.surrogate_scored = scored;
    let t_search = std::time::Instant::now();
    let n = config.search_trials;
    let budget = config.max_full.max(2).min(candidates.len());
    progress.phase("search", budget as u64 * n);
    let policy_of = |choice: &[(usize, usize)]| Policy {
        name: String::new(),
        parts: choice
            .iter()
            .enumerate()
            .map(|(p, &(r, k))| PartPolicy {
                rule: an.parts[p][r].rule,
                stock: an.parts[p][r].path[k].stock.clone(),
            })
            .collect(),
    };
    // Simulated so far: index into `candidates` -> result.
    let mut done: BTreeMap<usize, Costed> = BTreeMap::new();
    let simulate = |i: usize, done: &mut BTreeMap<usize, Costed>| {
        let policy = policy_of(&candidates[i].choice);
        let s = crate::run::evaluate(model, &policy, 0..n, config.target, progress)
            .ok_or(FrontierError::Interrupted)?;
        done.insert(i, Costed::of(s, space.cost));
        Ok::<(), FrontierError>(())
    };
    // The analytic frontier is `candidates[..front]` (cheapest first).
    let front = candidates.iter().take_while(|c| c.layer == 0).count();
    let last = front - 1;
    let on_front = (budget * 2 / 3).clamp(2.min(front), front);
    // Evenly spaced first picks along the analytic frontier, the cheapest
    // and the dearest among them.
    let first = on_front.clamp(1, 6);
    for k in 0..first {
        let i = ((k * last) as f64 / (first - 1).max(1) as f64).round() as usize;
        if !done.contains_key(&i) {
            simulate(i, &mut done)?;
        }
    }
    // Then where the simulated frontier bends most: the middle of the
    // neighbouring pair with the largest gap in chance times gap in cost.
    while done.len() < on_front {
        let keys: Vec<usize> = done.keys().copied().collect();
        let mut best: Option<(f64, usize)> = None;
        for w in keys.windows(2) {
            let (a, b) = (w[0], w[1]);
            if b - a < 2 {
                continue;
            }
            let (ca, cb) = (&done[&a], &done[&b]);
            let dk = (cb.chance.value - ca.chance.value).max(0.0);
            let dc = (cb.cost.mean - ca.cost.mean).abs().max(1e-9);
            let gain = dk * dc;
            if gain > 0.0 && best.is_none_or(|x| gain > x.0) {
                best = Some((gain, (a + b) / 2));
            }
        }
        match best {
            Some((_, i)) => simulate(i, &mut done)?,
            None => break,
        }
    }
    // The rest of the budget: the next layers of the analytic frontier
    // (and what is left of it), within the analytic costs where the
    // simulated chance rises from below 0.02 to 0.995, spread evenly along
    // the cost, layer by layer.
    let lo = done
        .iter()
        .filter(|(_, c)| c.chance.value < 0.02)
        .map(|(&i, _)| candidates[i].cost)
        .fold(f64::NEG_INFINITY, f64::max);
    let hi = done
        .iter()
        .filter(|(_, c)| c.chance.value >= 0.995)
        .map(|(&i, _)| candidates[i].cost)
        .fold(f64::INFINITY, f64::min);
    let mut layer = 0;
    while done.len() < budget {
        let pool: Vec<usize> = (0..candidates.len())
            .filter(|&i| {
                candidates[i].layer == layer
                    && !done.contains_key(&i)
                    && candidates[i].cost >= lo
                    && candidates[i].cost <= hi
            })
            .collect();
        let room = budget - done.len();
        if pool.len() <= room {
            for i in pool {
                simulate(i, &mut done)?;
            }
        } else {
            let len = pool.len();
            for k in 0..room {
                let i = pool[(k * (len - 1)) / (room - 1).max(1)];
                if !done.contains_key(&i) {
                    simulate(i, &mut done)?;
                }
            }
        }
        layer += 1;
        if layer > DEPTH {
            break;
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
