//! Machine-readable result shapes (the `--json` output and `result.json`).
//!
//! Owns: the serialisable form of an evaluation and of a frontier, built
//! from a [`Summary`] and a `FrontierResult`; domain types stay free of
//! serde, this layer converts (the small value types of `summary` and
//! `mean_life` it embeds as they are derive it themselves).
//! May use: `summary`, `mean_life`, `model`, `frontier`, `recost`, `text`
//! (the words of a named policy's standing and of the cheapest on total,
//! which the terminal and the report both print from here), `serde`.

use serde::Serialize;

use std::collections::BTreeMap;

use crate::frontier::Bound;
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
    /// With a ready-units target: the chance that this site alone has its
    /// count up for at least the share of the horizon, Wilson 95 % interval.
    pub chance: Option<Chance>,
    /// The mean-life plan's expected units up at the site (the sum of its
    /// units' availabilities), and whether that reaches its count.
    pub mean_life_units_up: f64,
    pub mean_life_meets_count: Option<bool>,
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
    /// Mean repair time of one part (the distribution's mean, no wait).
    pub repair_mean_hours: f64,
    /// The mean wait for a repair channel: turnaround less repair time
    /// (0 with unlimited channels, up to the noise of the estimate).
    pub channel_wait_mean_hours: f64,
    /// Repair channels; null: unlimited.
    pub channels: Option<u32>,
    /// The mean-life plan's parts in repair (no queue for channels).
    pub mean_life_in_repair: f64,
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
    /// Demands for a spare at the sites' stores (failures and planned
    /// replacements falling due).
    pub demands: f64,
    /// Fill rate: the share of demands served from the shelf at once
    /// (pooled over trials); null without demands.
    pub fill_rate: Option<f64>,
    /// The chance of at least one stock-out in a year (of
    /// `stockout_year_hours`): per trial the share of its whole years with
    /// one, averaged over trials; null when the horizon holds no whole
    /// year.
    pub stockout_year_chance: Option<MeanSe>,
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
    /// The policy's stable code (`Policy::code`).
    pub policy_code: String,
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
    /// The year of the per-part stock-out chance: `[money]
    /// hours_per_year`, or 8 760 h.
    pub stockout_year_hours: f64,
    /// Money over time (scenarios with `[money]`; absent otherwise).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub money: Option<MoneyJson>,
    /// Legal but suspicious inputs ([`Model::warnings`]); left out when
    /// there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

/// One part type's running spend in one year.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PartYearJson {
    pub name: String,
    pub mean: f64,
    pub se: f64,
    /// Its own budget for the year (a partial year's share), if any.
    pub budget: Option<f64>,
    /// Chance its spend stays within that budget, Wilson 95 %.
    pub within_budget: Option<Chance>,
}

/// One year's running spend (capital apart) across trials.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct YearJson {
    /// The year, from 1.
    pub year: u32,
    /// The share of a full year it covers (below 1 for a partial last year).
    pub share: f64,
    pub mean: f64,
    pub se: f64,
    pub p10: f64,
    pub p50: f64,
    pub p90: f64,
    /// The fleet's budget for the year (a partial year's share), if any.
    pub budget: Option<f64>,
    /// Chance the year's running spend stays within it, Wilson 95 %.
    pub within_budget: Option<Chance>,
    pub per_part: Vec<PartYearJson>,
}

/// Money over time (MODEL.md, "Money over time") for one policy.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct MoneyJson {
    pub hours_per_year: f64,
    /// Per year, as a fraction (0.06 for 6 %).
    pub discount_rate: f64,
    pub yearly_budget: Option<f64>,
    /// Year 0: the initial stock's capital, apart from running spend.
    pub capital_year0: f64,
    pub years: Vec<YearJson>,
    /// Chance that every year stays within the fleet's budget, Wilson 95 %.
    pub within_budget_every_year: Option<Chance>,
    /// Per part type with its own budget: the same chance.
    pub per_part_within_budget_every_year: BTreeMap<String, Chance>,
    /// Present value of spend, capital at time 0 included: mean, se, P10,
    /// P50, P90.
    pub pv_spend: crate::summary::SpreadFigures,
    /// The mean-life plan's flat line: its running spend in a full year,
    /// and its present value with capital.
    pub mean_life_plan_spend_per_year: Option<f64>,
    pub mean_life_plan_pv_spend: Option<f64>,
}

impl MoneyJson {
    /// Build from a summary of a scenario with `[money]` (else `None`).
    pub fn new(model: &Model, s: &Summary, plan: &MeanLifePlan) -> Option<Self> {
        let m = model.money.as_ref()?;
        let f = s.money()?;
        let names = |p: usize| model.parts[p].name.clone();
        Some(MoneyJson {
            hours_per_year: m.hours_per_year,
            discount_rate: m.discount_rate,
            yearly_budget: m.budget,
            capital_year0: f.capital,
            years: f
                .years
                .iter()
                .map(|y| YearJson {
                    year: y.year,
                    share: y.share,
                    mean: y.spend.mean,
                    se: y.spend.se,
                    p10: y.spend.p10,
                    p50: y.spend.p50,
                    p90: y.spend.p90,
                    budget: y.budget,
                    within_budget: y.within_budget,
                    per_part: y
                        .parts
                        .iter()
                        .enumerate()
                        .map(|(p, q)| PartYearJson {
                            name: names(p),
                            mean: q.spend.mean,
                            se: q.spend.se,
                            budget: q.budget,
                            within_budget: q.within_budget,
                        })
                        .collect(),
                })
                .collect(),
            within_budget_every_year: f.within_every_year,
            per_part_within_budget_every_year: f
                .part_within_every_year
                .iter()
                .enumerate()
                .filter_map(|(p, c)| c.map(|c| (names(p), c)))
                .collect(),
            pv_spend: f.pv_spend,
            mean_life_plan_spend_per_year: plan.spend_per_year,
            mean_life_plan_pv_spend: plan.pv_spend.map(|x| x + s.initial_stock_capital),
        })
    }
}

/// Per part type: the fill rate and the chance of a stock-out in a year.
fn stores_figures(s: &Summary, p: usize) -> (Option<f64>, Option<MeanSe>) {
    let m = &s.acc.per_part[p];
    let chance = (s.acc.whole_years > 0).then(|| MeanSe::from(&m.stockout_year_share));
    (m.fill_rate(), chance)
}

fn ms(m: &crate::summary::Moments) -> MeanSe {
    MeanSe::from(m)
}

impl EvaluateJson {
    /// Build from a summary and its mean-life plan figures.
    pub fn new(model: &Model, s: &Summary, plan: &MeanLifePlan) -> Self {
        let in_repair = |p: usize| plan.parts.get(p).and_then(|pp| pp.in_repair);
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
            policy_code: policy.code(model),
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
            sites: sites(model, s, plan),
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
                .enumerate()
                .map(|(pid, ((pt, m), pp))| PartJson {
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
                    pipeline: pt.repair.as_ref().map(|r| PipelineJson {
                        removals: m.repair_entries.mean() + m.condemned.mean(),
                        repairs: m.repairs.mean(),
                        condemned: m.condemned.mean(),
                        in_repair_mean: m.repair_hours.mean() / model.horizon,
                        turnaround_mean_hours: m.mean_turnaround(),
                        repair_mean_hours: r.time.mean(),
                        channel_wait_mean_hours: if m.repair_entries.mean() > 0.0 {
                            (m.mean_turnaround() - r.time.mean()).max(0.0)
                        } else {
                            0.0
                        },
                        channels: r.channels,
                        mean_life_in_repair: in_repair(pid).unwrap_or(0.0),
                    }),
                    demands: m.demands.mean(),
                    fill_rate: stores_figures(s, pid).0,
                    stockout_year_chance: stores_figures(s, pid).1,
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
            stockout_year_hours: model.year_hours(),
            money: MoneyJson::new(model, s, plan),
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
fn sites(model: &Model, s: &Summary, plan: &MeanLifePlan) -> Vec<SiteJson> {
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
                chance: at_least.and_then(|_| s.site_chance_at(i, s.target, h)),
                mean_life_units_up: plan.sites.get(i).map_or(0.0, |p| p.units_up),
                mean_life_meets_count: plan.sites.get(i).and_then(|p| p.meets_count),
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
    /// Six characters derived from what the policy sets (`Policy::code`):
    /// the same in every run of the scenario, whatever its F-number.
    pub code: String,
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
    /// Money over time (scenarios with `[money]`; absent otherwise).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub money: Option<MoneyJson>,
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
    /// How many search-frontier policies were re-costed, and why.
    pub recosted: RecostedJson,
    /// The scenario's named policies re-costed on the same validation
    /// trials, and where each stands against the frontier (empty without
    /// a search).
    pub named_policies: Vec<NamedJson>,
    /// Search bounds that frontier policies sit at.
    pub bounds_reached: Vec<BoundJson>,
    /// The frontier policy with the least mean total with the downtime
    /// penalty (without capital); null for an empty frontier.
    pub cheapest_on_total: Option<CheapestOnTotalJson>,
    /// Legal but suspicious inputs ([`Model::warnings`]); left out when
    /// there are none.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub warnings: Vec<String>,
}

/// The re-costing's count and its reasons.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct RecostedJson {
    /// Policies re-costed from the search (or the list given).
    pub total: usize,
    /// Non-dominated on the search trials (0 for a list given).
    pub search_frontier: usize,
    /// Kept by the even spread over the chance range.
    pub spread: usize,
    /// Kept besides, near the chance levels the report quotes.
    pub near_levels: usize,
    /// Kept besides, as the cheaper neighbour of a kept policy within the
    /// noise.
    pub near_neighbours: usize,
    /// The same in words.
    pub why: String,
}

/// A move from a named policy to a frontier policy (frontier minus named,
/// paired on the same trials).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct MoveJson {
    pub policy: String,
    pub code: String,
    pub cost_diff: MeanSe,
    pub chance_diff: MeanSe,
    pub cost_within_noise: bool,
    pub chance_within_noise: bool,
}

/// A named policy of the scenario against the frontier.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct NamedJson {
    pub name: String,
    pub code: String,
    pub describe: String,
    /// The cost measure over the horizon.
    pub cost: MeanSe,
    pub chance: Chance,
    pub total_with_penalty: f64,
    pub spend: f64,
    /// The frontier policy that sets exactly the same.
    pub same_as: Option<String>,
    /// The frontier policy that dominates it, saving most.
    pub dominated_by: Option<String>,
    /// The cheapest frontier policy with at least its chance.
    pub up: Option<MoveJson>,
    /// The frontier policy with the most chance costing no more.
    pub down: Option<MoveJson>,
    /// Its standing and the moves in words (the terminal and the report
    /// print these).
    pub words: String,
}

/// A search bound that frontier policies sit at.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct BoundJson {
    pub part: String,
    /// `stock_max`, `stock_min`, `interval_max` or `interval_min`.
    pub bound: &'static str,
    /// The rule the interval is of (`age`, `block`), null for stock.
    pub rule: Option<&'static str>,
    /// The stock level or the interval in hours.
    pub value: f64,
    pub policies: Vec<String>,
    pub words: String,
}

/// The frontier policy cheapest on the total with the downtime penalty.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CheapestOnTotalJson {
    pub policy: String,
    pub code: String,
    pub total_with_penalty: f64,
    pub spend: f64,
    pub chance: f64,
    pub words: String,
}

/// A policy's name and code: `F3 (1EAEAR)`.
pub fn labelled(name: &str, code: &str) -> String {
    format!("{name} ({code})")
}

/// A chance difference in points, signed: `+2.1 points`.
fn points_words(d: f64) -> String {
    let p = 100.0 * d;
    let s = format!("{:.1}", p.abs());
    let unit = if s == "1.0" { "point" } else { "points" };
    if p >= 0.05 {
        format!("+{s} {unit}")
    } else if p <= -0.05 {
        format!("-{s} {unit}")
    } else {
        "no change".to_string()
    }
}

/// What moving from a named policy to a frontier policy costs and gains.
fn move_words(m: &MoveJson, cur: &str) -> String {
    let d = m.cost_diff.mean;
    let cost = if d > 0.0 {
        format!("costs {}{cur} more", crate::text::money(d))
    } else if d < 0.0 {
        format!("saves {}{cur}", crate::text::money(-d))
    } else {
        "costs the same".to_string()
    };
    let noise = match (m.cost_within_noise, m.chance_within_noise) {
        (true, true) => " (both within the noise of the trials)",
        (true, false) => " (the cost difference within the noise)",
        (false, true) => " (the chance difference within the noise)",
        (false, false) => "",
    };
    format!(
        "{} {cost} for {} of chance{noise}",
        labelled(&m.policy, &m.code),
        points_words(m.chance_diff.mean)
    )
}

/// A named policy's standing in words.
fn standing_words(n: &NamedJson, cur: &str) -> String {
    let me = format!("`{}` ({})", n.name, n.code);
    if let Some(f) = &n.same_as {
        return format!("{me} = {f} on the frontier: it sets exactly what {f} sets.");
    }
    let mut s = match (&n.dominated_by, &n.up) {
        (Some(f), Some(up)) => format!(
            "{me} is dominated by {f}: {} of chance for {}{cur} less.",
            points_words(up.chance_diff.mean),
            crate::text::money(-up.cost_diff.mean)
        ),
        _ => format!("{me} is not dominated by any frontier policy found."),
    };
    let moves: Vec<String> = [("up", &n.up), ("down", &n.down)]
        .iter()
        .filter_map(|(_, m)| m.as_ref())
        .map(|m| move_words(m, cur))
        .collect();
    let moves = {
        let mut v = moves;
        v.dedup();
        v
    };
    if !moves.is_empty() {
        s.push_str(&format!(
            " Moving to the nearest frontier policies: {}.",
            moves.join("; ")
        ));
    }
    s
}

/// A paired difference as JSON.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct DiffJson {
    /// Mean of the per-trial differences and its standard error.
    pub diff: MeanSe,
    /// |diff| at most two standard errors.
    pub within_noise: bool,
}

impl From<crate::recost::PairedDiff> for DiffJson {
    fn from(d: crate::recost::PairedDiff) -> Self {
        DiffJson {
            diff: d.diff,
            within_noise: d.within_noise,
        }
    }
}

/// One policy of a comparison.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ComparedJson {
    pub name: String,
    pub code: String,
    pub describe: String,
    /// Chance of meeting the target in force.
    pub chance: Chance,
    pub availability: MeanSe,
    /// With the downtime penalty, without capital.
    pub total: MeanSe,
    /// Parts, labour, holding and the initial stock's capital.
    pub spend: MeanSe,
    pub initial_stock_capital: f64,
}

/// One policy against the first, paired on the same trials (this one
/// minus the first).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PairJson {
    pub policy: String,
    pub against: String,
    pub total: DiffJson,
    pub spend: DiffJson,
    pub chance: DiffJson,
    pub availability: DiffJson,
}

/// The result of `wearout evaluate --policy A --policy B ...`.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CompareJson {
    pub scenario: String,
    pub trials: u64,
    pub first_trial: u64,
    pub seed: u64,
    pub target: f64,
    /// What the target in force is of: `availability` or `readiness`.
    pub target_measure: &'static str,
    pub parameter_uncertainty: bool,
    pub policies: Vec<ComparedJson>,
    /// Every policy after the first against the first.
    pub differences: Vec<PairJson>,
}

impl CompareJson {
    /// Build from summaries of the same trials, the first the baseline.
    pub fn new(model: &Model, summaries: &[Summary]) -> Self {
        let first = &summaries[0];
        let policies = summaries
            .iter()
            .map(|s| ComparedJson {
                name: s.policy.name.clone(),
                code: s.policy.code(model),
                describe: s.policy.describe(model),
                chance: s.chance(),
                availability: MeanSe::from(&s.acc.availability),
                total: MeanSe::from(&s.acc.total),
                spend: MeanSe {
                    mean: s.acc.spend.mean() + s.initial_stock_capital,
                    se: s.acc.spend.se(),
                },
                initial_stock_capital: s.initial_stock_capital,
            })
            .collect();
        let differences = summaries[1..]
            .iter()
            .map(|s| {
                let p = crate::recost::paired(first, s);
                PairJson {
                    policy: s.policy.name.clone(),
                    against: first.policy.name.clone(),
                    total: p.total.into(),
                    spend: p.spend.into(),
                    chance: p.chance.into(),
                    availability: p.availability.into(),
                }
            })
            .collect();
        CompareJson {
            scenario: model.name.clone(),
            trials: first.trials(),
            first_trial: first.first_trial,
            seed: model.seed,
            target: first.target,
            target_measure: match first.measure {
                Measure::Availability => "availability",
                Measure::Readiness => "readiness",
            },
            parameter_uncertainty: model.parameter_uncertainty,
            policies,
            differences,
        }
    }
}

/// Why the re-costed policies are the ones they are, in words.
pub fn recosted_words(r: &crate::frontier::FrontierResult) -> String {
    let st = &r.stats;
    if r.search_trials == 0 {
        return format!("the {} given policies", st.recosted);
    }
    if st.recosted == r.search_frontier.len()
        && st.recosted_near_levels == 0
        && st.recosted_near_neighbours == 0
    {
        return format!("all {} search-frontier policies", st.recosted);
    }
    let mut s = format!(
        "{} of the {} search-frontier policies: {} spread over the chance range",
        st.recosted,
        r.search_frontier.len(),
        st.recosted_spread
    );
    if st.recosted_near_levels > 0 {
        s.push_str(&format!(
            ", {} more near the chance levels quoted (50 to 99 %) so the cheapest for each is not missed",
            st.recosted_near_levels
        ));
    }
    if st.recosted_near_neighbours > 0 {
        s.push_str(&format!(
            ", {} more whose chance is within the noise of a dearer kept one",
            st.recosted_near_neighbours
        ));
    }
    s
}

/// A short label of a cost measure: `spend (mean)`.
pub fn cost_measure_label(m: crate::model::CostMeasure) -> String {
    let basis = match m.basis {
        crate::model::CostBasis::Spend => "spend",
        crate::model::CostBasis::TotalWithPenalty => "total",
        crate::model::CostBasis::PvSpend => "pv_spend",
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
                    code: c.policy.code(model),
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
                    money: MoneyJson::new(
                        model,
                        &c.summary,
                        &crate::mean_life::mean_life_plan(model, &c.policy),
                    ),
                }
            })
            .collect();
        let cur = crate::text::currency(&model.currency, " ", "");
        let st = &r.stats;
        let recosted = RecostedJson {
            total: st.recosted,
            search_frontier: r.search_frontier.len(),
            spread: st.recosted_spread,
            near_levels: st.recosted_near_levels,
            near_neighbours: st.recosted_near_neighbours,
            why: recosted_words(r),
        };
        let mv = |m: &crate::recost::Move| {
            let p = &r.points[m.to].costed.policy;
            MoveJson {
                policy: p.name.clone(),
                code: p.code(model),
                cost_diff: m.diff.cost_diff,
                chance_diff: m.diff.chance_diff,
                cost_within_noise: m.diff.cost_within_noise,
                chance_within_noise: m.diff.chance_within_noise,
            }
        };
        let named_policies = r
            .named
            .iter()
            .map(|n| {
                let c = &n.costed;
                let mut j = NamedJson {
                    name: c.policy.name.clone(),
                    code: c.policy.code(model),
                    describe: c.policy.describe(model),
                    cost: c.cost,
                    chance: c.chance,
                    total_with_penalty: c.summary.acc.total.mean(),
                    spend: c.summary.acc.spend.mean() + c.summary.initial_stock_capital,
                    same_as: n.same_as.map(|i| r.points[i].costed.policy.name.clone()),
                    dominated_by: n
                        .dominated_by(&r.points)
                        .map(|i| r.points[i].costed.policy.name.clone()),
                    up: n.up.as_ref().map(mv),
                    down: n.down.as_ref().map(mv),
                    words: String::new(),
                };
                j.words = standing_words(&j, &cur);
                j
            })
            .collect();
        let bounds_reached = r
            .bounds
            .iter()
            .map(|b| {
                let part = model.parts[b.part].name.clone();
                let (rule, what) = match b.bound {
                    Bound::StockMax(s) => (None, format!("the largest stock searched ({s})")),
                    Bound::StockMin(s) => (None, format!("the smallest stock searched ({s})")),
                    Bound::IntervalMax(k, t) => (
                        Some(k),
                        format!("the longest {k} interval searched ({} h)", crate::text::num(t, 0)),
                    ),
                    Bound::IntervalMin(k, t) => (
                        Some(k),
                        format!("the shortest {k} interval searched ({} h)", crate::text::num(t, 0)),
                    ),
                };
                let wider = match b.bound {
                    Bound::StockMax(_) | Bound::IntervalMax(..) => "widen the range upwards",
                    Bound::StockMin(_) | Bound::IntervalMin(..) => "widen the range downwards",
                };
                let n = b.policies.len();
                BoundJson {
                    words: format!(
                        "{part}: {n} of the {} frontier policies {} at {what} ({}); a wider search may reach a higher chance more cheaply: {wider} in [search.parts.{part}].",
                        r.points.len(),
                        if n == 1 { "sits" } else { "sit" },
                        b.policies.join(", ")
                    ),
                    part,
                    bound: b.bound.key(),
                    rule,
                    value: b.bound.value(),
                    policies: b.policies.clone(),
                }
            })
            .collect();
        let cheapest_on_total = r
            .points
            .iter()
            .min_by(|a, b| {
                a.costed
                    .summary
                    .acc
                    .total
                    .mean()
                    .total_cmp(&b.costed.summary.acc.total.mean())
            })
            .map(|pt| {
                let c = &pt.costed;
                let total = c.summary.acc.total.mean();
                let spend = c.summary.acc.spend.mean() + c.summary.initial_stock_capital;
                let code = c.policy.code(model);
                CheapestOnTotalJson {
                    words: format!(
                        "Cheapest on the total with the downtime penalty: {}, {}{cur} (spend {}{cur}, chance {:.1} %).",
                        labelled(&c.policy.name, &code),
                        crate::text::money(total),
                        crate::text::money(spend),
                        100.0 * c.chance.value
                    ),
                    policy: c.policy.name.clone(),
                    code,
                    total_with_penalty: total,
                    spend,
                    chance: c.chance.value,
                }
            });
        FrontierJson {
            recosted,
            named_policies,
            bounds_reached,
            cheapest_on_total,
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
