//! Machine-readable result shapes (the `--json` output and `result.json`).
//!
//! Owns: the serialisable form of an evaluation, built from a [`Summary`];
//! domain types stay free of serde, this layer converts.
//! May use: `summary`, `averages`, `model`, `serde`.

use serde::Serialize;

use crate::averages::AveragesPlan;
use crate::model::{Model, Policy};
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
}

/// Counts per trial (means).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CountsJson {
    pub failures: f64,
    pub planned: f64,
    pub stockouts: f64,
    pub orders: f64,
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
    pub stock: u32,
    pub failures: f64,
    pub planned: f64,
    pub stockouts: f64,
    pub orders: f64,
    pub down_hours: f64,
    pub cost: PartCostJson,
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
}

/// Plan-on-averages figures beside the simulated ones.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct AveragesJson {
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
    pub availability: AvailabilityFigures,
    pub chance: Chance,
    pub cost: CostJson,
    pub initial_stock_capital: f64,
    pub counts: CountsJson,
    pub down_hours: DownJson,
    pub plan_on_averages: AveragesJson,
    pub per_part: Vec<PartJson>,
}

fn ms(m: &crate::summary::Moments) -> MeanSe {
    MeanSe::from(m)
}

impl EvaluateJson {
    /// Build from a summary and its plan-on-averages figures.
    pub fn new(model: &Model, s: &Summary, plan: &AveragesPlan) -> Self {
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
            availability: s.availability(),
            chance: s.chance(),
            cost: CostJson {
                total: ms(&a.total),
                spend,
                parts: ms(&a.parts_cost),
                planned_labour: ms(&a.labour_planned),
                unplanned_labour: ms(&a.labour_unplanned),
                downtime: ms(&a.downtime_cost),
                holding: ms(&a.holding),
            },
            initial_stock_capital: s.initial_stock_capital,
            counts: CountsJson {
                failures: a.failures.mean(),
                planned: a.planned.mean(),
                stockouts: a.stockouts.mean(),
                orders: a.orders.mean(),
            },
            down_hours: DownJson {
                waiting_for_spare: ms(&a.down_waiting),
                unplanned_work: ms(&a.down_unplanned),
                planned_work: ms(&a.down_planned),
            },
            plan_on_averages: AveragesJson {
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
                    stock: pp.stock,
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
                    },
                })
                .collect(),
        }
    }
}
