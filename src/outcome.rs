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
    /// Demands for a spare at the sites' stores (failures and planned
    /// replacements falling due; a planned demand that fails while it
    /// waits is not counted again).
    pub demands: u32,
    /// Resupply orders placed before the horizon.
    pub orders: u32,
    /// Unit-hours down charged to this part type.
    pub down_hours: Hours,
    pub parts_cost: Money,
    pub labour_planned: Money,
    pub labour_unplanned: Money,
    pub downtime_cost: Money,
    pub holding: Money,
    /// Repairs started before the horizon (repairable part types).
    pub repairs: u32,
    /// Removed parts condemned (each bought anew: in `orders`).
    pub condemned: u32,
    /// Removed parts sent to the repair shop (their repair started or not).
    pub repair_entries: u32,
    /// Requests from the sites to the depot.
    pub requests: u32,
    /// Shipments from the depot to the sites.
    pub shipments: u32,
    /// Lateral transfers between sites.
    pub laterals: u32,
    /// Repair cost of parts removed at planned replacements.
    pub repair_planned: Money,
    /// Repair cost of failed parts.
    pub repair_failed: Money,
    /// Cost of shipments and lateral transfers.
    pub transport_cost: Money,
    /// Part-hours in the repair shop (waiting for a channel or under
    /// repair) within the horizon: divided by it, the mean number in repair.
    pub repair_hours: Hours,
    /// Sum of the turnarounds (wait for a channel plus repair time) of the
    /// parts sent to repair.
    pub turnaround_hours: Hours,
    /// Demand-hours waiting for a spare at the sites' stores (backorders x
    /// hours).
    pub backorder_hours: Hours,
    /// Request-hours waiting at the depot.
    pub depot_backorder_hours: Hours,
    /// Spare-hours on hand at every store (the holding cost's base).
    pub shelf_hours: Hours,
    /// Present value of this part type's running spend (parts, labour,
    /// holding, repair, transport) at the scenario's discount rate, the
    /// initial capital apart; 0 without `[money]`.
    pub pv_spend: Money,
    /// Whole years of the horizon (of [`Model::year_hours`]) in which at
    /// least one demand found its shelf empty.
    ///
    /// [`Model::year_hours`]: crate::model::Model::year_hours
    pub stockout_years: u32,
}

impl PartOutcome {
    /// Parts, labour, holding, repair and transport: what is spent, without
    /// penalty or capital.
    pub fn spend(&self) -> Money {
        // The first part's terms come first, in their first order, so a
        // scenario without rotables or a depot adds only zeros after them.
        self.parts_cost
            + self.labour_planned
            + self.labour_unplanned
            + self.holding
            + self.repair_planned
            + self.repair_failed
            + self.transport_cost
    }

    /// Repair cost, planned and failed removals.
    pub fn repair_cost(&self) -> Money {
        self.repair_planned + self.repair_failed
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
            CostBasis::PvSpend => self.pv_spend + capital,
        }
    }
}

/// One site's share of a trial (scenarios with sites).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SiteOutcome {
    /// Up unit-hours of the site's units.
    pub up_hours: Hours,
    /// Demands at the site that found its shelf empty.
    pub stockouts: u32,
    /// Lateral transfers the site gave to, and took from, other sites.
    pub laterals_given: u32,
    pub laterals_taken: u32,
    /// Hours with at least the site's ready count of units up (0 without a
    /// ready-units target).
    pub ready_hours: Hours,
    /// Demand-hours waiting for a spare at the site's stores (all part
    /// types): its backorders x hours.
    pub backorder_hours: Hours,
    /// Hours with exactly `m` of the site's units up, `m = 0..=units`
    /// (empty unless the trial counted units up).
    pub units_up: Vec<Hours>,
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
    /// Share of the horizon with every site at its ready count of units
    /// up (0 without a ready-units target).
    pub readiness: f64,
    /// Hours with exactly `m` units of the fleet up, `m = 0..=units` (empty
    /// unless the trial counted units up).
    pub units_up: Vec<Hours>,
    /// Per site, for scenarios that name sites (else empty).
    pub sites: Vec<SiteOutcome>,
    /// Running spend per year and part type, year by year (index
    /// `year * parts + part`), for scenarios with `[money]` (else empty).
    /// The initial capital is apart.
    pub year_spend: Vec<Money>,
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
            readiness: 0.0,
            units_up: Vec::new(),
            sites: Vec::new(),
            year_spend: Vec::new(),
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
            CostBasis::PvSpend => self.pv_spend() + capital,
        }
    }

    /// Present value of the running spend, without the initial capital.
    pub fn pv_spend(&self) -> Money {
        self.sum(|p| p.pv_spend)
    }

    /// The running spend of year `y` (from 0), all part types (0 without
    /// `[money]`).
    pub fn spend_in_year(&self, y: usize) -> Money {
        let n = self.parts.len();
        self.year_spend
            .get(y * n..(y + 1) * n)
            .map_or(0.0, |s| s.iter().sum())
    }

    /// Number of years in [`TrialOutcome::year_spend`].
    pub fn years(&self) -> usize {
        self.year_spend
            .len()
            .checked_div(self.parts.len())
            .unwrap_or(0)
    }
}
