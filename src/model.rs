//! The validated fleet model: part types, unit types, the fleet, policies.
//!
//! Owns: the types every later stage reads. A value of these types has been
//! checked (by `scenario`, or by a constructor in tests), so the simulation
//! never re-checks parameters.
//! May use: `dist`, `uncertainty`. Knows nothing of TOML, serde or the
//! command line.

use crate::dist::{Hours, LeadTime, Life};
use crate::uncertainty::LifeUncertainty;

/// Relative slack when comparing an interval with a hard life limit, so an
/// interval given as a fraction that rounds a hair above the limit is not
/// refused.
pub const LIMIT_SLACK: f64 = 1e-9;

/// Index of a part type in [`Model::parts`].
pub type PartId = usize;

/// Money, in the scenario's currency.
pub type Money = f64;

/// A kind of part: how long it lives, what it costs, how it is resupplied.
#[derive(Debug, Clone, PartialEq)]
pub struct PartType {
    pub name: String,
    pub life: Life,
    /// Price of one spare.
    pub price: Money,
    /// Labour cost of a planned (preventive) replacement.
    pub labour_planned: Money,
    /// Labour cost of an unplanned (corrective) replacement.
    pub labour_unplanned: Money,
    /// Hours the unit is down for a planned replacement.
    pub duration_planned: Hours,
    /// Hours the unit is down for an unplanned replacement.
    pub duration_unplanned: Hours,
    /// Resupply lead time of one order.
    pub lead_time: LeadTime,
    /// Holding cost per spare on hand per hour.
    pub holding_per_hour: Money,
    /// Hard life limit for a safety-critical part: never run to failure,
    /// never kept in service past this age.
    pub hard_limit: Option<Hours>,
    /// The sampling uncertainty of `life` when it was fitted to records
    /// (`life` is then its point estimate); `None` for a life given as
    /// parameters. Drawn per trial when [`Model::parameter_uncertainty`] is on.
    pub life_uncertainty: Option<LifeUncertainty>,
}

impl PartType {
    /// True for a safety-critical part type.
    pub fn is_safety_critical(&self) -> bool {
        self.hard_limit.is_some()
    }
}

/// How a part's age at time 0 is set.
#[derive(Debug, Clone, PartialEq)]
pub enum InitialAge {
    /// Every part new (age 0).
    New,
    /// Every part the same age.
    Fixed(Hours),
    /// Uniform between two ages.
    Uniform { low: Hours, high: Hours },
    /// One age per unit of the fleet group, in unit order.
    List(Vec<Hours>),
}

/// One position of a unit type, holding one part of a part type.
#[derive(Debug, Clone, PartialEq)]
pub struct Position {
    pub name: String,
    pub part: PartId,
}

/// A kind of machine: a series system of positions.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitType {
    pub name: String,
    pub positions: Vec<Position>,
}

/// A group of identical units in the fleet.
#[derive(Debug, Clone, PartialEq)]
pub struct FleetGroup {
    /// Index into [`Model::unit_types`].
    pub unit_type: usize,
    pub count: usize,
    /// Initial age for each part type of the unit type (indexed by part id;
    /// only the part types the unit holds are read).
    pub initial_age: Vec<InitialAge>,
}

/// One machine of the fleet, flattened from the groups.
#[derive(Debug, Clone, PartialEq)]
pub struct Unit {
    pub group: usize,
    /// Index of this unit within its group.
    pub index_in_group: usize,
    /// Part id of each position.
    pub parts: Vec<PartId>,
}

/// A replacement rule for one part type.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Rule {
    /// Replace only when it fails.
    RunToFailure,
    /// Replace when the part's own age reaches the interval, or at failure.
    Age(Hours),
    /// Replace at unit operating hours `T, 2T, ...`, whatever the part's age.
    Block(Hours),
}

impl Rule {
    /// Short machine name: `run_to_failure`, `age` or `block`.
    pub fn kind(&self) -> &'static str {
        match self {
            Rule::RunToFailure => "run_to_failure",
            Rule::Age(_) => "age",
            Rule::Block(_) => "block",
        }
    }

    /// The interval, if the rule has one.
    pub fn interval(&self) -> Option<Hours> {
        match *self {
            Rule::RunToFailure => None,
            Rule::Age(t) | Rule::Block(t) => Some(t),
        }
    }

    /// Operating-hour reading of the unit at which a part installed when the
    /// unit read `installed_at`, already `age` hours old, falls due for a
    /// planned replacement; `None` when it never does.
    pub fn due_at(&self, installed_at: Hours, age: Hours) -> Option<Hours> {
        match *self {
            Rule::RunToFailure => None,
            // A part already past T is due at once.
            Rule::Age(t) => Some(installed_at + (t - age).max(0.0)),
            // The first grid point strictly after installation.
            Rule::Block(t) => {
                let mut k = (installed_at / t).floor() + 1.0;
                // Guard against rounding: the grid point must be strictly later.
                while k * t <= installed_at {
                    k += 1.0;
                }
                Some(k * t)
            }
        }
    }

    /// Compact form for tables: `RTF`, `A11200`, `B6000` (hours with one
    /// decimal when not whole).
    pub fn short(&self) -> String {
        match *self {
            Rule::RunToFailure => "RTF".to_string(),
            Rule::Age(t) => format!("A{}", fmt_hours(t)),
            Rule::Block(t) => format!("B{}", fmt_hours(t)),
        }
    }

    /// Human-readable form, e.g. `age 11200 h`.
    pub fn describe(&self) -> String {
        match *self {
            Rule::RunToFailure => "run to failure".to_string(),
            Rule::Age(t) => format!("age {} h", fmt_hours(t)),
            Rule::Block(t) => format!("block {} h", fmt_hours(t)),
        }
    }
}

fn fmt_hours(t: Hours) -> String {
    if (t - t.round()).abs() < 1e-9 {
        format!("{}", t.round() as i64)
    } else {
        format!("{t:.1}")
    }
}

/// What a policy sets for one part type.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PartPolicy {
    pub rule: Rule,
    /// Base-stock level `S`.
    pub stock: u32,
}

/// A maintenance-and-spares policy: one [`PartPolicy`] per part type.
#[derive(Debug, Clone, PartialEq)]
pub struct Policy {
    pub name: String,
    /// Indexed by part id.
    pub parts: Vec<PartPolicy>,
}

impl Policy {
    /// Capital tied up in the initial stock.
    pub fn initial_stock_capital(&self, model: &Model) -> Money {
        self.parts
            .iter()
            .zip(&model.parts)
            .map(|(p, t)| p.stock as f64 * t.price)
            .sum()
    }

    /// Compact one-line form: `engine age 11200 h S2; pump RTF S4`.
    pub fn describe(&self, model: &Model) -> String {
        self.parts
            .iter()
            .zip(&model.parts)
            .map(|(p, t)| format!("{} {} S{}", t.name, p.rule.short(), p.stock))
            .collect::<Vec<_>>()
            .join("; ")
    }
}

/// Which cost the frontier minimises.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CostBasis {
    /// Parts, labour, holding and the initial stock's capital (no penalty).
    Spend,
    /// Spend without capital plus the downtime penalty (MODEL.md's total).
    TotalWithPenalty,
}

/// The statistic of the cost taken across trials.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CostStatistic {
    Mean,
    /// A percentile in (0, 100), e.g. 90 for P90.
    Percentile(f64),
}

/// The cost measure of the frontier.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CostMeasure {
    pub basis: CostBasis,
    pub statistic: CostStatistic,
}

impl Default for CostMeasure {
    fn default() -> Self {
        CostMeasure {
            basis: CostBasis::Spend,
            statistic: CostStatistic::Mean,
        }
    }
}

/// The choices the frontier search may make for one part type.
#[derive(Debug, Clone, PartialEq)]
pub struct PartSearch {
    /// Candidate rules (each with its interval).
    pub rules: Vec<Rule>,
    /// Smallest and largest stock level, inclusive.
    pub stock_min: u32,
    pub stock_max: u32,
}

/// The search space of the frontier.
#[derive(Debug, Clone, PartialEq)]
pub struct SearchSpace {
    /// Indexed by part id.
    pub parts: Vec<PartSearch>,
    /// Upper bound on the initial stock's capital, if any.
    pub spares_budget: Option<Money>,
    pub cost: CostMeasure,
    /// Trials the search runs on (default 2000).
    pub search_trials: u64,
    /// Fresh trials the frontier is re-costed on (default 10000).
    pub validate_trials: u64,
}

impl SearchSpace {
    /// Number of policies in the space (saturating).
    pub fn size(&self) -> u128 {
        self.parts.iter().fold(1u128, |acc, p| {
            acc.saturating_mul(p.rules.len() as u128 * (p.stock_max - p.stock_min + 1) as u128)
        })
    }
}

/// A whole validated scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct Model {
    pub name: String,
    pub description: String,
    pub horizon: Hours,
    /// Downtime penalty per unit-hour down.
    pub downtime_penalty: Money,
    /// Availability target `A*` in (0, 1].
    pub target: f64,
    pub seed: u64,
    /// Default number of trials for `evaluate`.
    pub trials: u64,
    pub parts: Vec<PartType>,
    pub unit_types: Vec<UnitType>,
    pub groups: Vec<FleetGroup>,
    /// Every unit, flattened in group order.
    pub units: Vec<Unit>,
    pub policies: Vec<Policy>,
    pub search: Option<SearchSpace>,
    /// The currency label for reports.
    pub currency: String,
    /// Whether each trial draws its own life parameters for the part types
    /// with a [`PartType::life_uncertainty`] (from the trial's
    /// `Parameters` stream, so every policy sees the same draws); when off
    /// every trial uses the point estimates.
    pub parameter_uncertainty: bool,
}

impl Model {
    /// Part id by name.
    pub fn part_id(&self, name: &str) -> Option<PartId> {
        self.parts.iter().position(|p| p.name == name)
    }

    /// Policy by name.
    pub fn policy(&self, name: &str) -> Option<&Policy> {
        self.policies.iter().find(|p| p.name == name)
    }

    /// Number of positions of each part type across the fleet.
    pub fn installed_count(&self) -> Vec<usize> {
        let mut n = vec![0; self.parts.len()];
        for u in &self.units {
            for &p in &u.parts {
                n[p] += 1;
            }
        }
        n
    }

    /// Build the flattened unit list from the groups.
    pub fn flatten_units(unit_types: &[UnitType], groups: &[FleetGroup]) -> Vec<Unit> {
        let mut units = Vec::new();
        for (g, group) in groups.iter().enumerate() {
            let parts: Vec<PartId> = unit_types[group.unit_type]
                .positions
                .iter()
                .map(|p| p.part)
                .collect();
            for i in 0..group.count {
                units.push(Unit {
                    group: g,
                    index_in_group: i,
                    parts: parts.clone(),
                });
            }
        }
        units
    }

    /// Check that a policy respects the safety-critical limits; returns a
    /// message for the first part that does not.
    pub fn safety_violation(&self, policy: &Policy) -> Option<String> {
        for (pp, part) in policy.parts.iter().zip(&self.parts) {
            if let Some(limit) = part.hard_limit {
                match pp.rule {
                    Rule::RunToFailure => {
                        return Some(format!(
                            "part type `{}` is safety-critical (hard life limit {} h) and may not be run to failure; use age or block replacement at or below the limit",
                            part.name,
                            fmt_hours(limit)
                        ));
                    }
                    Rule::Age(t) | Rule::Block(t) if t > limit * (1.0 + LIMIT_SLACK) => {
                        return Some(format!(
                            "part type `{}` is safety-critical: interval {} h is past its hard life limit of {} h; allowed: an interval of at most {} h",
                            part.name,
                            fmt_hours(t),
                            fmt_hours(limit),
                            fmt_hours(limit)
                        ));
                    }
                    _ => {}
                }
            }
        }
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn block_due_is_first_grid_point_after_installation() {
        let r = Rule::Block(100.0);
        assert_eq!(r.due_at(0.0, 0.0), Some(100.0));
        assert_eq!(r.due_at(100.0, 0.0), Some(200.0));
        assert_eq!(r.due_at(150.0, 0.0), Some(200.0));
        // Grid points reached by rounding: always strictly after installation.
        let t = 507.72;
        for k in 1..5000 {
            let x = k as f64 * t;
            assert!(Rule::Block(t).due_at(x, 0.0).unwrap() > x);
        }
    }

    #[test]
    fn age_due_counts_initial_age() {
        let r = Rule::Age(100.0);
        assert_eq!(r.due_at(0.0, 30.0), Some(70.0));
        // Already past T: due at once.
        assert_eq!(r.due_at(10.0, 130.0), Some(10.0));
        assert_eq!(Rule::RunToFailure.due_at(0.0, 0.0), None);
    }
}
