//! The mean-life plan's figure: what a plan that replaces every uncertain
//! life and lead time by its mean would predict.
//!
//! Owns: the deterministic steady-state arithmetic a planner would do in a
//! spreadsheet: each part lasts exactly its mean life (or is replaced at its
//! interval if that comes first), each order takes exactly the mean lead
//! time, demand flows evenly, and a stock of `S` covers `S / d` hours of
//! lead time at demand rate `d`. Initial ages are ignored (steady state).
//! May use: `model`, `serde` (a derive on the plan, which `result`
//! embeds). No randomness, no I/O.
//!
//! Per position, an operating cycle lasts `c` hours (the mean life, or the
//! interval `T` when `T` is shorter; for block replacement the same reading
//! of "no part fails before its mean"). With `F` fleet positions of a part
//! type, demand is `d = F / c` per up hour; each unplanned demand waits
//! `max(0, L - S / d)` hours for a spare (fluid queue), planned demands wait
//! with the old part still running, so they cost no down time. A unit's down
//! hours per up hour are `sum_i down_i / c_i`, and its availability is
//! `1 / (1 + sum_i down_i / c_i)`.
//!
//! With rotables, sites and a depot the plan pools every spare of a part
//! type (all sites and the depot together) against one pipeline: the mean
//! time for a removed part to come back (its repair time, or for the
//! condemned share the lead time; a consumable's lead time), plus with a
//! depot the mean transport time to a site (weighted by the sites'
//! positions). A rotable's demand costs its repair (or for the condemned
//! share its price) instead of a new part. A ready-units target is met when
//! every site's expected units up (the sum of its units' availabilities)
//! reach its count.
//!
//! Where the spares sit, the plan reads the same way store by store (the
//! deterministic picture of METRIC, Sherbrooke 1968, without its Poisson
//! spread): a site's pipeline is its own demand times the time a spare
//! takes to reach it (the transport time from the depot, or without a
//! depot the whole return time); the depot's is the whole fleet's demand
//! times the return time (repair or purchase). A rotable's number in repair
//! is its removals that are not condemned times its mean repair time (no
//! wait for a channel: the plan has no queues).

use crate::model::{Model, Money, Policy, Rule};

/// One part type in the mean-life plan.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PartPlan {
    /// Demands per operating hour of the fleet (removals for a rotable).
    pub demand_per_hour: f64,
    /// Hours from a demand until its spare is back on a site's shelf: the
    /// pipeline time the stock covers.
    pub resupply_hours: f64,
    /// Parts on their way back at any moment: demand x resupply time (for
    /// a rotable, its repair pipeline).
    pub pipeline: f64,
    /// With sites: per site, the spares on their way to it at any moment
    /// (its demand x the transport time from the depot, or without a depot
    /// x the resupply time).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub site_pipeline: Vec<f64>,
    /// With a depot: the spares on their way back to it at any moment
    /// (the fleet's demand x the return time by repair or purchase).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub depot_pipeline: Option<f64>,
    /// A rotable's parts in repair at any moment (removals not condemned x
    /// the mean repair time); `None` for a consumable.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub in_repair: Option<f64>,
}

/// One site in the mean-life plan (scenarios with sites).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SitePlan {
    /// Expected units up: the sum of the site's units' availabilities.
    pub units_up: f64,
    /// With a ready-units target: whether `units_up` reaches the count.
    pub meets_count: Option<bool>,
}

/// The mean-life plan's prediction for one policy.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MeanLifePlan {
    /// Fleet availability predicted.
    pub availability: f64,
    /// Total cost over the horizon with the downtime penalty, without capital
    /// (comparable to the simulated total).
    pub cost: Money,
    /// Spend over the horizon without capital.
    pub spend: Money,
    /// Predicted failures over the horizon, fleet-wide.
    pub failures: f64,
    /// Predicted planned replacements over the horizon.
    pub planned: f64,
    /// Whether the plan predicts meeting the target (it has no chances: yes or no).
    pub meets_target: bool,
    /// Per part type.
    pub parts: Vec<PartPlan>,
    /// Per site (empty without sites).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub sites: Vec<SitePlan>,
    /// With `[money]`: the running spend of a full year (a flat line: the
    /// plan spends at one rate), capital apart.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spend_per_year: Option<Money>,
    /// With `[money]`: the present value of that flat running spend over
    /// the horizon, capital apart.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pv_spend: Option<Money>,
}

/// Compute the mean-life plan's figures of `policy`.
pub fn mean_life_plan(model: &Model, policy: &Policy) -> MeanLifePlan {
    let n_parts = model.parts.len();
    // Per part type: cycle length, whether the cycle ends in a failure.
    let mut cycle = vec![0.0; n_parts];
    let mut fails = vec![true; n_parts];
    for (p, part) in model.parts.iter().enumerate() {
        let mean = part.life.mean();
        match policy.parts[p].rule {
            Rule::RunToFailure => cycle[p] = mean,
            Rule::Age(t) | Rule::Block(t) => {
                if t < mean {
                    cycle[p] = t;
                    fails[p] = false;
                } else {
                    cycle[p] = mean;
                }
            }
        }
    }
    let installed = model.installed_count();
    // The mean transport time from the depot, weighted by each site's
    // positions of the part type.
    let transport: Vec<f64> = (0..n_parts)
        .map(|p| match &model.depot {
            None => 0.0,
            Some(depot) => {
                let mut at = vec![0.0; model.sites.len()];
                for u in &model.units {
                    at[u.site] += u.parts.iter().filter(|&&q| q == p).count() as f64;
                }
                let n: f64 = at.iter().sum();
                if n > 0.0 {
                    at.iter()
                        .zip(&depot.transport)
                        .map(|(a, t)| a * t.mean())
                        .sum::<f64>()
                        / n
                } else {
                    0.0
                }
            }
        })
        .collect();
    // Resupply time per demand: the part's return (a rotable's repair, or
    // its lead time when condemned; a consumable's lead time), plus the
    // transport from the depot.
    let resupply: Vec<f64> = model
        .parts
        .iter()
        .enumerate()
        .map(|(p, part)| {
            let condemn = part.repair.as_ref().map_or(1.0, |r| {
                if fails[p] {
                    r.condemn_failed
                } else {
                    r.condemn_planned
                }
            });
            part.mean_return(condemn) + transport[p]
        })
        .collect();
    // Down hours per cycle, with the fluid-queue wait for unplanned demands.
    let mut down = vec![0.0; n_parts];
    for (p, part) in model.parts.iter().enumerate() {
        if fails[p] {
            let d = installed[p] as f64 / cycle[p];
            let cover = if d > 0.0 {
                policy.parts[p].stock.total() as f64 / d
            } else {
                f64::INFINITY
            };
            let wait = (resupply[p] - cover).max(0.0);
            down[p] = part.duration_unplanned + wait;
        } else {
            down[p] = part.duration_planned;
        }
    }
    let h = model.horizon;
    let mut up_total = 0.0;
    let mut up_per_unit = Vec::with_capacity(model.units.len());
    let mut site_up = vec![0.0; model.sites.len()];
    for unit in &model.units {
        let ratio: f64 = unit.parts.iter().map(|&p| down[p] / cycle[p]).sum();
        let a = 1.0 / (1.0 + ratio);
        up_per_unit.push(a * h);
        up_total += a * h;
        site_up[unit.site] += a;
    }
    let availability = up_total / (model.units.len() as f64 * h);
    let mut spend = 0.0;
    let mut penalty = 0.0;
    let mut failures = 0.0;
    let mut planned = 0.0;
    // Demands per part type over the horizon.
    let mut demands = vec![0.0; n_parts];
    for (unit, up) in model.units.iter().zip(&up_per_unit) {
        for &p in &unit.parts {
            demands[p] += up / cycle[p];
            penalty += up / cycle[p] * down[p] * model.downtime_penalty;
        }
    }
    // Demands per part type and site over the horizon (with sites).
    let has_sites = model.has_sites();
    let mut site_demands = vec![vec![0.0; model.sites.len()]; n_parts];
    if has_sites {
        for (unit, up) in model.units.iter().zip(&up_per_unit) {
            for &p in &unit.parts {
                site_demands[p][unit.site] += up / cycle[p];
            }
        }
    }
    let mut parts = Vec::with_capacity(n_parts);
    for (p, part) in model.parts.iter().enumerate() {
        let n = demands[p];
        let labour = if fails[p] {
            failures += n;
            part.labour_unplanned
        } else {
            planned += n;
            part.labour_planned
        };
        // A rotable's demand buys a part only when condemned; else it pays
        // the repair.
        let material = match &part.repair {
            Some(r) => {
                let (condemn, cost) = if fails[p] {
                    (r.condemn_failed, r.cost_failed)
                } else {
                    (r.condemn_planned, r.cost_planned)
                };
                condemn * part.price + (1.0 - condemn) * cost
            }
            None => part.price,
        };
        let shipping = model.depot.as_ref().map_or(0.0, |d| d.cost_per_shipment);
        let rate = n / h;
        let on_hand = (policy.parts[p].stock.total() as f64 - rate * resupply[p]).max(0.0);
        spend += n * (material + labour + shipping) + on_hand * part.holding_per_hour * h;
        let condemn = part.repair.as_ref().map_or(1.0, |r| {
            if fails[p] {
                r.condemn_failed
            } else {
                r.condemn_planned
            }
        });
        let site_pipeline = if has_sites {
            site_demands[p]
                .iter()
                .enumerate()
                .map(|(i, d)| {
                    let time = match &model.depot {
                        Some(depot) => depot.transport[i].mean(),
                        None => resupply[p],
                    };
                    d / h * time
                })
                .collect()
        } else {
            Vec::new()
        };
        parts.push(PartPlan {
            demand_per_hour: rate,
            resupply_hours: resupply[p],
            pipeline: rate * resupply[p],
            site_pipeline,
            depot_pipeline: model
                .depot
                .as_ref()
                .map(|_| rate * part.mean_return(condemn)),
            in_repair: part
                .repair
                .as_ref()
                .map(|r| rate * (1.0 - condemn) * r.time.mean()),
        });
    }
    let meets_target = match &model.ready {
        // Every site's expected units up reach its count.
        Some(r) => site_up
            .iter()
            .zip(&r.at_least)
            .all(|(&up, &k)| up >= k as f64),
        None => availability >= model.target,
    };
    let sites = if has_sites {
        site_up
            .iter()
            .enumerate()
            .map(|(i, &up)| SitePlan {
                units_up: up,
                meets_count: model.ready.as_ref().map(|r| up >= r.at_least[i] as f64),
            })
            .collect()
    } else {
        Vec::new()
    };
    let h = model.horizon;
    MeanLifePlan {
        availability,
        cost: spend + penalty,
        spend,
        failures,
        planned,
        meets_target,
        parts,
        sites,
        spend_per_year: model.money.as_ref().map(|m| spend / h * m.hours_per_year),
        pv_spend: model.money.as_ref().map(|m| spend * m.flat_pv_factor(h)),
    }
}
