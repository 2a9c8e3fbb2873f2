//! Machine-readable result shapes (the `--json` output and `result.json`).
//!
//! Owns: the serialisable form of an evaluation and of a frontier, built
//! from a [`Summary`] and a `FrontierResult`; domain types stay free of
//! serde, this layer converts (the small value types of `summary` and
//! `mean_life` it embeds as they are derive it themselves).
//! May use: `summary`, `mean_life`, `model`, `frontier`, `recost`, `serde`.

use serde::Serialize;

use std::collections::BTreeMap;

use crate::mean_life::MeanLifePlan;
use crate::model::{Measure, Model, Policy};
use crate::summary::{AvailabilityFigures, Chance, MeanSe, Summary};

/// Mean only.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct Mean {
    pub mean: f64,
}

/// Cost figures: each component's mean, the total with its standard error.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CostJson {
    /// With the downtime penalty, without the initial stock's capital.
    pub total: MeanSe,
    /// Parts, labour and holding plus the initial stock's capital.
    pub spend: MeanSe,
    pub parts: MeanSe,
    pub planned_labour: MeanSe,
    pub unplanned_labour: MeanSe,
    pub downtime: MeanSe,
    pub holding: MeanSe,
    /// Repair of parts removed at planned replacements, and of failed parts.
    pub repair_planned: MeanSe,
    pub repair_failed: MeanSe,
    /// Shipments from the depot and lateral transfers.
    pub transport: MeanSe,
}

/// Counts per trial (means).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CountsJson {
    pub failures: f64,
    pub planned: f64,
    pub stockouts: f64,
    pub orders: f64,
    /// Repairs started (repairable part types).
    pub repairs: f64,
    /// Removed parts condemned (and bought anew).
    pub condemned: f64,
    /// Requests from the sites to the depot.
    pub requests: f64,
    /// Shipments from the depot to the sites.
    pub shipments: f64,
    /// Lateral transfers between sites.
    pub laterals: f64,
}

/// The ready-units target and the readiness across trials.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ReadinessJson {
    /// Per site (the fleet's name without sites): units that must be up.
    pub at_least: BTreeMap<String, u32>,
    /// The share `q` of the horizon.
    pub share: f64,
    /// Readiness: the share of the horizon with every site at its count.
    #[serde(flatten)]
    pub figures: AvailabilityFigures,
    /// Chance that readiness is at least the share, Wilson 95 % interval.
    pub chance: Chance,
}

/// One site's figures (means per trial).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct SiteJson {
    pub name: String,
    pub units: usize,
    /// Up unit-hours of the site's units over their scheduled unit-hours.
    pub availability: f64,
    /// With a ready-units target: its count, and the share of the horizon
    /// with at least that many of its units up.
    pub at_least: Option<u32>,
    pub ready_share: Option<MeanSe>,
    /// Demands at the site that found its shelf empty.
    pub stockouts: f64,
    /// Time-average demands waiting for a spare at the site (all part types).
    pub backorders_mean: f64,
    pub laterals_given: f64,
    pub laterals_taken: f64,
    /// Mean share of the horizon with exactly `m` of its units up, `m = 0..=units`.
    pub units_up: Vec<f64>,
}

/// A rotable's repair loop (means per trial).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PipelineJson {
    /// Parts removed: sent to repair, or condemned.
    pub removals: f64,
    pub repairs: f64,
    pub condemned: f64,
    /// Time-average number of parts in the repair shop (waiting for a
    /// channel or under repair).
    pub in_repair_mean: f64,
    /// Mean turnaround of a part sent to repair, the wait for a channel
    /// included, hours.
    pub turnaround_mean_hours: f64,
}

/// Unit-hours down per trial by cause (means with standard errors).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct DownJson {
    pub waiting_for_spare: MeanSe,
    pub unplanned_work: MeanSe,
    pub planned_work: MeanSe,
}

/// One part type's figures (means per trial).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PartJson {
    pub name: String,
    pub rule: String,
    pub interval: Option<f64>,
    /// All spares held at the start (with sites: every site and the depot).
    pub stock: u32,
    /// With sites: the level at each site and at the depot (`depot`).
    pub stock_at: Option<BTreeMap<String, u32>>,
    pub failures: f64,
    pub planned: f64,
    pub stockouts: f64,
    pub orders: f64,
    pub down_hours: f64,
    pub cost: PartCostJson,
    pub requests: f64,
    pub shipments: f64,
    pub laterals: f64,
    /// Time-average demands waiting for a spare at the sites' stores.
    pub backorders_mean: f64,
    /// Time-average requests waiting at the depot.
    pub depot_backorders_mean: f64,
    /// Time-average spares on hand at every store.
    pub on_hand_mean: f64,
    /// The repair loop of a repairable part type; null for a consumable.
    pub pipeline: Option<PipelineJson>,
}

/// One part type's cost means.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PartCostJson {
    pub total: f64,
    pub parts: f64,
    pub planned_labour: f64,
    pub unplanned_labour: f64,
    pub downtime: f64,
    pub holding: f64,
    pub repair_planned: f64,
    pub repair_failed: f64,
    pub transport: f64,
}

/// Mean-life plan figures beside the simulated ones.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct MeanLifeJson {
    pub availability: f64,
    /// Total with the downtime penalty, without capital.
    pub cost: f64,
    pub spend: f64,
    pub meets_target: bool,
}

/// The result of `wearout evaluate`.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct EvaluateJson {
    pub scenario: String,
    pub trials: u64,
    pub first_trial: u64,
    pub seed: u64,
    pub policy: String,
    pub target: f64,
    pub horizon_hours: f64,
    pub units: usize,
    /// Whether each trial drew its own life parameters from their fits.
    pub parameter_uncertainty: bool,
    /// What the target in force is of: `availability` or `readiness`.
    pub target_measure: &'static str,
    pub availability: AvailabilityFigures,
    /// Chance of meeting the target in force (`target` is its threshold).
    pub chance: Chance,
    /// The availability target as the scenario gives it, and with a
    /// ready-units target in force the chance of availability at least it.
    pub availability_target: Option<f64>,
    pub availability_chance: Option<Chance>,
    /// The ready-units target and readiness; null without one.
    pub readiness: Option<ReadinessJson>,
    /// Mean share of the horizon with exactly `m` units of the fleet up,
    /// `m = 0..=units` (empty if the run did not count units up).
    pub units_up: Vec<f64>,
    /// Per site (empty without sites).
    pub sites: Vec<SiteJson>,
    pub cost: CostJson,
    pub initial_stock_capital: f64,
    pub counts: CountsJson,
    pub down_hours: DownJson,
    pub mean_life_plan: MeanLifeJson,
    pub per_part: Vec<PartJson>,
    /// Legal but suspicious inputs ([`Model::warnings`]); left out when
    /// there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

fn ms(m: &crate::summary::Moments) -> MeanSe {
    MeanSe::from(m)
}

impl EvaluateJson {
    /// Build from a summary and its mean-life plan figures.
    pub fn new(model: &Model, s: &Summary, plan: &MeanLifePlan) -> Self {
        let a = &s.acc;
        let policy: &Policy = &s.policy;
        let spend = MeanSe {
            mean: a.spend.mean() + s.initial_stock_capital,
            se: a.spend.se(),
        };
        EvaluateJson {
            scenario: model.name.clone(),
            trials: s.trials(),
            first_trial: s.first_trial,
            seed: model.seed,
            policy: policy.name.clone(),
            target: s.target,
            horizon_hours: model.horizon,
            units: model.units.len(),
            parameter_uncertainty: model.parameter_uncertainty,
            target_measure: match s.measure {
                Measure::Availability => "availability",
                Measure::Readiness => "readiness",
            },
            availability: s.availability(),
            chance: s.chance(),
            availability_target: model.availability_target,
            availability_chance: match (s.measure, model.availability_target) {
                (Measure::Readiness, Some(t)) => Some(s.availability_chance_at(t)),
                _ => None,
            },
            readiness: match (&model.ready, s.measure) {
                (Some(r), Measure::Readiness) => Some(ReadinessJson {
                    at_least: model
                        .sites
                        .iter()
                        .zip(&r.at_least)
                        .map(|(site, &k)| (site.name.clone(), k))
                        .collect(),
                    share: s.target,
                    figures: s.readiness(),
                    chance: s.chance(),
                }),
                _ => None,
            },
            units_up: shares(&a.units_up, a.n(), model.horizon),
            sites: sites(model, s),
            cost: CostJson {
                total: ms(&a.total),
                spend,
                parts: ms(&a.parts_cost),
                planned_labour: ms(&a.labour_planned),
                unplanned_labour: ms(&a.labour_unplanned),
                downtime: ms(&a.downtime_cost),
                holding: ms(&a.holding),
                repair_planned: ms(&a.repair_planned),
                repair_failed: ms(&a.repair_failed),
                transport: ms(&a.transport_cost),
            },
            initial_stock_capital: s.initial_stock_capital,
            counts: CountsJson {
                failures: a.failures.mean(),
                planned: a.planned.mean(),
                stockouts: a.stockouts.mean(),
                orders: a.orders.mean(),
                repairs: a.per_part.iter().map(|m| m.repairs.mean()).sum(),
                condemned: a.per_part.iter().map(|m| m.condemned.mean()).sum(),
                requests: a.per_part.iter().map(|m| m.requests.mean()).sum(),
                shipments: a.per_part.iter().map(|m| m.shipments.mean()).sum(),
                laterals: a.per_part.iter().map(|m| m.laterals.mean()).sum(),
            },
            down_hours: DownJson {
                waiting_for_spare: ms(&a.down_waiting),
                unplanned_work: ms(&a.down_unplanned),
                planned_work: ms(&a.down_planned),
            },
            mean_life_plan: MeanLifeJson {
                availability: plan.availability,
                cost: plan.cost,
                spend: plan.spend + s.initial_stock_capital,
                meets_target: plan.meets_target,
            },
            per_part: model
                .parts
                .iter()
                .zip(&a.per_part)
                .zip(&policy.parts)
                .map(|((pt, m), pp)| PartJson {
                    name: pt.name.clone(),
                    rule: pp.rule.kind().to_string(),
                    interval: pp.rule.interval(),
                    stock: pp.stock.total(),
                    stock_at: stock_at(model, &pp.stock),
                    requests: m.requests.mean(),
                    shipments: m.shipments.mean(),
                    laterals: m.laterals.mean(),
                    backorders_mean: m.backorder_hours.mean() / model.horizon,
                    depot_backorders_mean: m.depot_backorder_hours.mean() / model.horizon,
                    on_hand_mean: m.shelf_hours.mean() / model.horizon,
                    pipeline: pt.repair.as_ref().map(|_| PipelineJson {
                        removals: m.repair_entries.mean() + m.condemned.mean(),
                        repairs: m.repairs.mean(),
                        condemned: m.condemned.mean(),
                        in_repair_mean: m.repair_hours.mean() / model.horizon,
                        turnaround_mean_hours: m.mean_turnaround(),
                    }),
                    failures: m.failures.mean(),
                    planned: m.planned.mean(),
                    stockouts: m.stockouts.mean(),
                    orders: m.orders.mean(),
                    down_hours: m.down_hours.mean(),
                    cost: PartCostJson {
                        total: m.total.mean(),
                        parts: m.parts_cost.mean(),
                        planned_labour: m.labour_planned.mean(),
                        unplanned_labour: m.labour_unplanned.mean(),
                        downtime: m.downtime_cost.mean(),
                        holding: m.holding.mean(),
                        repair_planned: m.repair_planned.mean(),
                        repair_failed: m.repair_failed.mean(),
                        transport: m.transport_cost.mean(),
                    },
                })
                .collect(),
            warnings: model.warnings(),
        }
    }
}

/// Mean shares of the horizon from summed hours over `n` trials.
fn shares(hours: &[f64], n: u64, horizon: f64) -> Vec<f64> {
    let d = n.max(1) as f64 * horizon;
    hours.iter().map(|h| h / d).collect()
}

/// The levels of a stock at each site and the depot, named (with sites).
fn stock_at(model: &Model, stock: &crate::model::Stock) -> Option<BTreeMap<String, u32>> {
    if !model.has_sites() {
        return None;
    }
    let mut m: BTreeMap<String, u32> = model
        .sites
        .iter()
        .zip(stock.site_levels())
        .map(|(s, l)| (s.name.clone(), l))
        .collect();
    if model.depot.is_some() {
        m.insert("depot".to_string(), stock.depot());
    }
    Some(m)
}

/// Per-site figures (scenarios with sites).
fn sites(model: &Model, s: &Summary) -> Vec<SiteJson> {
    let units = model.site_units();
    let h = model.horizon;
    s.acc
        .per_site
        .iter()
        .zip(&model.sites)
        .zip(&units)
        .enumerate()
        .map(|(i, ((m, site), &n))| {
            let at_least = model.ready.as_ref().map(|r| r.at_least[i]);
            SiteJson {
                name: site.name.clone(),
                units: n,
                availability: if n > 0 {
                    m.up_hours.mean() / (n as f64 * h)
                } else {
                    1.0
                },
                at_least,
                ready_share: at_least.map(|_| MeanSe {
                    mean: m.ready_hours.mean() / h,
                    se: m.ready_hours.se() / h,
                }),
                stockouts: m.stockouts.mean(),
                backorders_mean: m.backorder_hours.mean() / h,
                laterals_given: m.laterals_given.mean(),
                laterals_taken: m.laterals_taken.mean(),
                units_up: shares(&m.units_up, s.trials(), h),
            }
        })
        .collect()
}

/// One part type's rule in a frontier policy.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct RuleJson {
    pub rule: String,
    pub interval: Option<f64>,
}

/// Availability percentiles of a frontier policy.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct AvailabilityPercentiles {
    pub p10: f64,
    pub p50: f64,
    pub p90: f64,
}

/// Paired comparison with the previous (cheaper) frontier policy.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct NoiseJson {
    pub chance_within_noise: bool,
    pub cost_within_noise: bool,
    pub chance_diff: MeanSe,
    pub cost_diff: MeanSe,
}

/// One non-dominated policy, re-costed on the validation trials.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct FrontierPolicyJson {
    pub name: String,
    /// Compact human-readable form.
    pub describe: String,
    pub rules: std::collections::BTreeMap<String, RuleJson>,
    pub stock: std::collections::BTreeMap<String, u32>,
    /// The cost measure over the horizon.
    pub cost: MeanSe,
    pub chance: Chance,
    pub availability: AvailabilityPercentiles,
    pub availability_mean: f64,
    pub initial_stock_capital: f64,
    /// Mean total with the downtime penalty, without capital.
    pub total_with_penalty: f64,
    /// Mean spend with capital.
    pub spend: f64,
    /// Against the previous row; null for the cheapest.
    pub versus_previous: Option<NoiseJson>,
}

/// The result of `wearout frontier`.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct FrontierJson {
    pub scenario: String,
    pub policies: Vec<FrontierPolicyJson>,
    /// Policies simulated in full on the search trials.
    pub evaluated: usize,
    /// Policies in the search space (a whole number).
    pub space_size: u128,
    pub search_trials: u64,
    pub validate_trials: u64,
    /// First validation trial index (search trials start at 0).
    pub validate_first_trial: u64,
    pub target: f64,
    pub seed: u64,
    /// Whether each trial drew its own life parameters from their fits.
    pub parameter_uncertainty: bool,
    /// `spend` or `total`, with `mean` or `pNN`.
    pub cost_measure: String,
    pub screening_runs: usize,
    pub surrogate_scored: usize,
    pub linear_programs: usize,
    pub seconds: f64,
    pub seconds_screening: f64,
    pub seconds_search: f64,
    pub seconds_validation: f64,
    pub exhaustive: bool,
    /// Legal but suspicious inputs ([`Model::warnings`]); left out when
    /// there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

/// A short label of a cost measure: `spend (mean)`.
pub fn cost_measure_label(m: crate::model::CostMeasure) -> String {
    let basis = match m.basis {
        crate::model::CostBasis::Spend => "spend",
        crate::model::CostBasis::TotalWithPenalty => "total",
    };
    match m.statistic {
        crate::model::CostStatistic::Mean => format!("{basis} (mean)"),
        crate::model::CostStatistic::Percentile(p) => format!("{basis} (p{p})"),
    }
}

impl FrontierJson {
    /// Build from a frontier result.
    pub fn new(model: &Model, r: &crate::frontier::FrontierResult, exhaustive: bool) -> Self {
        let policies = r
            .points
            .iter()
            .map(|pt| {
                let c = &pt.costed;
                let a = c.summary.availability();
                let mut rules = std::collections::BTreeMap::new();
                let mut stock = std::collections::BTreeMap::new();
                for (pp, part) in c.policy.parts.iter().zip(&model.parts) {
                    rules.insert(
                        part.name.clone(),
                        RuleJson {
                            rule: pp.rule.kind().to_string(),
                            interval: pp.rule.interval(),
                        },
                    );
                    stock.insert(part.name.clone(), pp.stock.total());
                }
                FrontierPolicyJson {
                    name: c.policy.name.clone(),
                    describe: c.policy.describe(model),
                    rules,
                    stock,
                    cost: c.cost,
                    chance: c.chance,
                    availability: AvailabilityPercentiles {
                        p10: a.p10,
                        p50: a.p50,
                        p90: a.p90,
                    },
                    availability_mean: a.mean,
                    initial_stock_capital: c.summary.initial_stock_capital,
                    total_with_penalty: c.summary.acc.total.mean(),
                    spend: c.summary.acc.spend.mean() + c.summary.initial_stock_capital,
                    versus_previous: pt.noise.map(|n| NoiseJson {
                        chance_within_noise: n.chance_within_noise,
                        cost_within_noise: n.cost_within_noise,
                        chance_diff: n.chance_diff,
                        cost_diff: n.cost_diff,
                    }),
                }
            })
            .collect();
        FrontierJson {
            scenario: model.name.clone(),
            policies,
            evaluated: r.stats.evaluated,
            space_size: r.space_size,
            search_trials: r.search_trials,
            validate_trials: r.validate_trials,
            validate_first_trial: crate::recost::VALIDATION_OFFSET,
            target: r.target,
            seed: model.seed,
            parameter_uncertainty: model.parameter_uncertainty,
            cost_measure: cost_measure_label(r.cost),
            screening_runs: r.stats.screening_runs,
            surrogate_scored: r.stats.surrogate_scored,
            linear_programs: r.stats.lps,
            seconds: r.stats.seconds_screening
                + r.stats.seconds_search
                + r.stats.seconds_validation,
            seconds_screening: r.stats.seconds_screening,
            seconds_search: r.stats.seconds_search,
            seconds_validation: r.stats.seconds_validation,
            exhaustive,
            warnings: model.warnings(),
        }
    }
}
