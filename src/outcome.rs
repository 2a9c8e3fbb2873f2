//! Per-trial outcomes: what one future of the fleet yields under one policy.
//!
//! Owns: the outcome types and their cost arithmetic (totals, spend).
//! May use: `model` (for the cost measure), `dist` (its units). No I/O.

use crate::dist::Hours;
use crate::model::{CostBasis, Money};

/// One part type's share of a trial.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct PartOutcome {
    pub failures: u32,
    /// Planned replacements started.
    pub planned: u32,
    /// Demands that found the store empty.
    pub stockouts: u32,
    /// Resupply orders placed before the horizon.
    pub orders: u32,
    /// Unit-hours down charged to this part type.
    pub down_hours: Hours,
    pub parts_cost: Money,
    pub labour_planned: Money,
    pub labour_unplanned: Money,
    pub downtime_cost: Money,
    pub holding: Money,
}

impl PartOutcome {
    /// Parts, labour and holding: what is spent, without penalty or capital.
    pub fn spend(&self) -> Money {
        self.parts_cost + self.labour_planned + self.labour_unplanned + self.holding
    }

    /// Spend plus the downtime penalty.
    pub fn total(&self) -> Money {
        self.spend() + self.downtime_cost
    }

    /// The cost on the given basis; `capital` is the initial stock's
    /// capital (counted in spend only).
    pub fn cost(&self, basis: CostBasis, capital: Money) -> Money {
        match basis {
            CostBasis::Spend => self.spend() + capital,
            CostBasis::TotalWithPenalty => self.total(),
        }
    }
}

/// The outcome of one trial of the whole fleet.
#[derive(Debug, Clone, PartialEq)]
pub struct TrialOutcome {
    /// Up unit-hours over scheduled unit-hours.
    pub availability: f64,
    pub up_hours: Hours,
    pub down_waiting: Hours,
    pub down_unplanned: Hours,
    pub down_planned: Hours,
    /// Indexed by part id.
    pub parts: Vec<PartOutcome>,
    /// Events the simulation handled (for speed figures).
    pub events: u64,
}

impl TrialOutcome {
    /// An empty outcome for `n_parts` part types.
    pub fn zeroed(n_parts: usize) -> Self {
        TrialOutcome {
            availability: 1.0,
            up_hours: 0.0,
            down_waiting: 0.0,
            down_unplanned: 0.0,
            down_planned: 0.0,
            parts: vec![PartOutcome::default(); n_parts],
            events: 0,
        }
    }

    /// Unit-hours down, all causes.
    pub fn down_hours(&self) -> Hours {
        self.down_waiting + self.down_unplanned + self.down_planned
    }

    /// Sum over part types of a field.
    pub fn sum(&self, f: impl Fn(&PartOutcome) -> f64) -> f64 {
        self.parts.iter().map(f).sum()
    }

    /// Total cost with the downtime penalty, without the initial capital.
    pub fn total(&self) -> Money {
        self.sum(PartOutcome::total)
    }

    /// Spend without the initial capital.
    pub fn spend(&self) -> Money {
        self.sum(PartOutcome::spend)
    }

    /// The cost on the given basis; `capital` is the initial stock's capital
    /// (counted in spend only).
    pub fn cost(&self, basis: CostBasis, capital: Money) -> Money {
        match basis {
            CostBasis::Spend => self.spend() + capital,
            CostBasis::TotalWithPenalty => self.total(),
        }
    }
}
