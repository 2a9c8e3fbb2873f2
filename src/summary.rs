//! Summaries across trials: means with standard errors, percentiles, the
//! chance of meeting the target in force (availability, or readiness by
//! ready units) with its Wilson interval, the hours by units up, per-site
//! and rotable figures.
//!
//! Owns: the statistics of a set of trial outcomes, always folded in trial
//! order so a summary is bit-for-bit the same however the trials were run.
//! May use: `outcome`, `model`, `serde` (a derive on the small value types
//! that `result` embeds). No I/O.

use crate::model::{CostBasis, CostMeasure, CostStatistic, Measure, Model, Money, Policy};
use crate::outcome::{SiteOutcome, TrialOutcome};

/// Running mean and variance (Welford 1962), folded in a fixed order.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Moments {
    pub n: u64,
    mean: f64,
    m2: f64,
}

impl Moments {
    /// Add one observation.
    pub fn push(&mut self, x: f64) {
        self.n += 1;
        let d = x - self.mean;
        self.mean += d / self.n as f64;
        self.m2 += d * (x - self.mean);
    }

    /// Sample mean (0 with no data).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Sample standard deviation (n - 1 denominator).
    pub fn sd(&self) -> f64 {
        if self.n < 2 {
            0.0
        } else {
            (self.m2 / (self.n - 1) as f64).sqrt()
        }
    }

    /// Standard error of the mean.
    pub fn se(&self) -> f64 {
        if self.n == 0 {
            0.0
        } else {
            self.sd() / (self.n as f64).sqrt()
        }
    }
}

/// A mean and its standard error.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct MeanSe {
    pub mean: f64,
    pub se: f64,
}

impl From<&Moments> for MeanSe {
    fn from(m: &Moments) -> Self {
        MeanSe {
            mean: m.mean(),
            se: m.se(),
        }
    }
}

/// Percentile of sorted data by linear interpolation between order
/// statistics (Hyndman & Fan 1996, definition 7; the default of R and numpy).
pub fn percentile_sorted(sorted: &[f64], p: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let h = (sorted.len() - 1) as f64 * (p / 100.0).clamp(0.0, 1.0);
    let lo = h.floor() as usize;
    let hi = h.ceil() as usize;
    sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
}

/// Sorted copy (NaN-free data assumed; NaN sorts last).
pub fn sorted(xs: &[f64]) -> Vec<f64> {
    let mut v = xs.to_vec();
    v.sort_by(|a, b| a.total_cmp(b));
    v
}

/// A share with its Wilson score interval (Wilson 1927, JASA 22:209-212).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Chance {
    pub value: f64,
    pub lo: f64,
    pub hi: f64,
}

/// Wilson 95 % interval for `successes` out of `n`.
pub fn wilson(successes: u64, n: u64) -> Chance {
    if n == 0 {
        return Chance {
            value: f64::NAN,
            lo: 0.0,
            hi: 1.0,
        };
    }
    let z = 1.959_963_984_540_054;
    let n_f = n as f64;
    let p = successes as f64 / n_f;
    let denom = 1.0 + z * z / n_f;
    let centre = (p + z * z / (2.0 * n_f)) / denom;
    let half = z * (p * (1.0 - p) / n_f + z * z / (4.0 * n_f * n_f)).sqrt() / denom;
    // At 0 (or n) successes the lower (upper) bound is exactly 0 (1); the
    // subtraction leaves a rounding remainder (e.g. 1.08e-19), so the
    // bound is set, not computed.
    Chance {
        value: p,
        lo: if successes == 0 {
            0.0
        } else {
            (centre - half).max(0.0)
        },
        hi: if successes >= n {
            1.0
        } else {
            (centre + half).min(1.0)
        },
    }
}

/// Running sums of one part type's figures.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PartMoments {
    pub failures: Moments,
    pub planned: Moments,
    pub stockouts: Moments,
    pub orders: Moments,
    pub down_hours: Moments,
    pub parts_cost: Moments,
    pub labour_planned: Moments,
    pub labour_unplanned: Moments,
    pub downtime_cost: Moments,
    pub holding: Moments,
    pub total: Moments,
    pub repairs: Moments,
    pub condemned: Moments,
    pub repair_entries: Moments,
    pub requests: Moments,
    pub shipments: Moments,
    pub laterals: Moments,
    pub repair_planned: Moments,
    pub repair_failed: Moments,
    pub transport_cost: Moments,
    pub repair_hours: Moments,
    pub turnaround_hours: Moments,
    pub backorder_hours: Moments,
    pub depot_backorder_hours: Moments,
    pub shelf_hours: Moments,
    /// Demands at the sites' stores.
    pub demands: Moments,
    /// Present value of the running spend (with `[money]`).
    pub pv_spend: Moments,
    /// Per trial: the share of its whole years with at least one stock-out
    /// (trials folded only when the horizon holds a whole year).
    pub stockout_year_share: Moments,
}

impl PartMoments {
    /// Fill rate: the share of demands served from the shelf at once,
    /// pooled over trials (all demands met at once over all demands); `None`
    /// without demands.
    pub fn fill_rate(&self) -> Option<f64> {
        let d = self.demands.mean();
        (d > 0.0).then(|| 1.0 - self.stockouts.mean() / d)
    }

    /// Mean turnaround of a part sent to repair (the wait for a channel
    /// included): all turnarounds over all parts sent, across trials.
    pub fn mean_turnaround(&self) -> f64 {
        let n = self.repair_entries.mean();
        if n > 0.0 {
            self.turnaround_hours.mean() / n
        } else {
            0.0
        }
    }
}

/// Running sums of one site's figures.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SiteMoments {
    pub up_hours: Moments,
    pub stockouts: Moments,
    pub laterals_given: Moments,
    pub laterals_taken: Moments,
    pub ready_hours: Moments,
    pub backorder_hours: Moments,
    /// Sum over trials of the hours with exactly `m` units up.
    pub units_up: Vec<f64>,
    /// Per trial, in trial order: the hours with at least the site's ready
    /// count of units up (kept under a ready-units target; else empty).
    pub trial_ready_hours: Vec<f64>,
}

impl SiteMoments {
    fn push(&mut self, s: &SiteOutcome) {
        self.up_hours.push(s.up_hours);
        self.stockouts.push(s.stockouts as f64);
        self.laterals_given.push(s.laterals_given as f64);
        self.laterals_taken.push(s.laterals_taken as f64);
        self.ready_hours.push(s.ready_hours);
        self.backorder_hours.push(s.backorder_hours);
        add_hours(&mut self.units_up, &s.units_up);
    }
}

/// Add hours by units up into running sums.
fn add_hours(sum: &mut Vec<f64>, hours: &[f64]) {
    if sum.len() < hours.len() {
        sum.resize(hours.len(), 0.0);
    }
    for (s, h) in sum.iter_mut().zip(hours) {
        *s += h;
    }
}

/// Everything kept across trials: moments of every figure, and three
/// numbers per trial (availability, total cost, spend; and the readiness
/// under a ready-units target) for percentiles, chances and paired
/// comparisons.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Accumulator {
    /// Keep each trial's readiness (a ready-units target is in force).
    pub ready: bool,
    pub availability: Moments,
    pub down_waiting: Moments,
    pub down_unplanned: Moments,
    pub down_planned: Moments,
    pub failures: Moments,
    pub planned: Moments,
    pub stockouts: Moments,
    pub orders: Moments,
    pub parts_cost: Moments,
    pub labour_planned: Moments,
    pub labour_unplanned: Moments,
    pub downtime_cost: Moments,
    pub holding: Moments,
    pub total: Moments,
    pub spend: Moments,
    pub repair_planned: Moments,
    pub repair_failed: Moments,
    pub transport_cost: Moments,
    pub readiness: Moments,
    /// Sum over trials of the hours with exactly `m` units of the fleet up.
    pub units_up: Vec<f64>,
    pub per_part: Vec<PartMoments>,
    /// Per site (scenarios with sites).
    pub per_site: Vec<SiteMoments>,
    /// Per trial, in trial order.
    pub trial_availability: Vec<f64>,
    /// Per trial: total cost with the downtime penalty, without capital.
    pub trial_total: Vec<f64>,
    /// Per trial: spend without capital.
    pub trial_spend: Vec<f64>,
    /// Per trial: readiness (scenarios with a ready-units target; else
    /// empty).
    pub trial_readiness: Vec<f64>,
    /// Whole years of the horizon for the yearly stock-out share (0: the
    /// horizon is shorter than a year, and no share is kept).
    pub whole_years: u32,
    /// Present value of the running spend (with `[money]`; else zeros).
    pub pv_spend: Moments,
    /// The yearly money figures (scenarios with `[money]`).
    pub money: Option<YearBooks>,
}

/// Running figures of the money books across trials: the running spend per
/// year (fleet and part type), the trials within the yearly budgets, each
/// trial's spend per year (for percentiles) and present value.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct YearBooks {
    /// Years the horizon touches (the last may be partial).
    pub years: usize,
    /// Per year: the share of a full year it covers.
    pub shares: Vec<f64>,
    /// The fleet's yearly budget, and each part type's.
    pub budget: Option<Money>,
    pub part_budgets: Vec<Option<Money>>,
    /// Per year: the fleet's running spend.
    pub spend: Vec<Moments>,
    /// Per year and part type (index `year * parts + part`).
    pub part_spend: Vec<Moments>,
    /// Per trial and year (index `trial * years + year`), in trial order.
    pub trial_spend: Vec<f64>,
    /// Per trial: present value of the running spend (capital apart).
    pub trial_pv: Vec<f64>,
    /// Trials whose running spend stayed within the budget in every year,
    /// and per year.
    pub within_every_year: u64,
    pub within_year: Vec<u64>,
    /// Per part type with a budget: the same counts (index `year * parts +
    /// part` for the years).
    pub part_within_every_year: Vec<u64>,
    pub part_within_year: Vec<u64>,
}

impl YearBooks {
    fn for_model(model: &Model) -> Option<Self> {
        let m = model.money.as_ref()?;
        let years = m.years(model.horizon);
        let np = model.parts.len();
        Some(YearBooks {
            years,
            shares: (0..years).map(|y| m.year_share(y, model.horizon)).collect(),
            budget: m.budget,
            part_budgets: m.part_budgets.clone(),
            spend: vec![Moments::default(); years],
            part_spend: vec![Moments::default(); years * np],
            within_year: vec![0; years],
            part_within_every_year: vec![0; np],
            part_within_year: vec![0; years * np],
            ..Default::default()
        })
    }

    /// The budget of year `y` (from 0): the yearly budget times the year's
    /// share (a partial last year against its share).
    pub fn budget_of_year(&self, budget: Money, y: usize) -> Money {
        budget * self.shares.get(y).copied().unwrap_or(1.0)
    }

    fn push(&mut self, o: &TrialOutcome) {
        let np = o.parts.len();
        let mut all = true;
        let mut part_all = vec![true; np];
        for y in 0..self.years {
            let row = o.year_spend.get(y * np..(y + 1) * np).unwrap_or(&[]);
            let total: f64 = row.iter().sum();
            self.spend[y].push(total);
            self.trial_spend.push(total);
            if let Some(b) = self.budget {
                if total <= self.budget_of_year(b, y) {
                    self.within_year[y] += 1;
                } else {
                    all = false;
                }
            }
            for (p, &x) in row.iter().enumerate() {
                self.part_spend[y * np + p].push(x);
                if let Some(b) = self.part_budgets.get(p).copied().flatten() {
                    if x <= self.budget_of_year(b, y) {
                        self.part_within_year[y * np + p] += 1;
                    } else {
                        part_all[p] = false;
                    }
                }
            }
        }
        if all && self.budget.is_some() {
            self.within_every_year += 1;
        }
        for (p, ok) in part_all.into_iter().enumerate() {
            if ok && self.part_budgets.get(p).copied().flatten().is_some() {
                self.part_within_every_year[p] += 1;
            }
        }
        self.trial_pv.push(o.pv_spend());
    }

    /// The running spend of year `y` in trial order.
    pub fn year_trials(&self, y: usize) -> Vec<f64> {
        self.trial_spend
            .iter()
            .skip(y)
            .step_by(self.years.max(1))
            .copied()
            .collect()
    }
}

impl Accumulator {
    /// An empty accumulator for `n_parts` part types.
    pub fn new(n_parts: usize) -> Self {
        Accumulator {
            per_part: vec![PartMoments::default(); n_parts],
            ..Default::default()
        }
    }

    /// An empty accumulator for `model`'s trials (keeps each trial's
    /// readiness when a ready-units target is in force).
    pub fn for_model(model: &Model) -> Self {
        Accumulator {
            ready: model.ready.is_some(),
            whole_years: model.whole_years(),
            money: YearBooks::for_model(model),
            ..Self::new(model.parts.len())
        }
    }

    /// Fold one trial (call in trial order).
    pub fn push(&mut self, o: &TrialOutcome) {
        self.availability.push(o.availability);
        self.down_waiting.push(o.down_waiting);
        self.down_unplanned.push(o.down_unplanned);
        self.down_planned.push(o.down_planned);
        self.failures.push(o.sum(|p| p.failures as f64));
        self.planned.push(o.sum(|p| p.planned as f64));
        self.stockouts.push(o.sum(|p| p.stockouts as f64));
        self.orders.push(o.sum(|p| p.orders as f64));
        self.parts_cost.push(o.sum(|p| p.parts_cost));
        self.labour_planned.push(o.sum(|p| p.labour_planned));
        self.labour_unplanned.push(o.sum(|p| p.labour_unplanned));
        self.downtime_cost.push(o.sum(|p| p.downtime_cost));
        self.holding.push(o.sum(|p| p.holding));
        self.repair_planned.push(o.sum(|p| p.repair_planned));
        self.repair_failed.push(o.sum(|p| p.repair_failed));
        self.transport_cost.push(o.sum(|p| p.transport_cost));
        self.readiness.push(o.readiness);
        add_hours(&mut self.units_up, &o.units_up);
        if self.per_site.len() < o.sites.len() {
            self.per_site.resize(o.sites.len(), SiteMoments::default());
        }
        for (m, s) in self.per_site.iter_mut().zip(&o.sites) {
            m.push(s);
            if self.ready {
                m.trial_ready_hours.push(s.ready_hours);
            }
        }
        let total = o.total();
        let spend = o.spend();
        self.total.push(total);
        self.spend.push(spend);
        for (m, p) in self.per_part.iter_mut().zip(&o.parts) {
            m.failures.push(p.failures as f64);
            m.planned.push(p.planned as f64);
            m.stockouts.push(p.stockouts as f64);
            m.orders.push(p.orders as f64);
            m.down_hours.push(p.down_hours);
            m.parts_cost.push(p.parts_cost);
            m.labour_planned.push(p.labour_planned);
            m.labour_unplanned.push(p.labour_unplanned);
            m.downtime_cost.push(p.downtime_cost);
            m.holding.push(p.holding);
            m.total.push(p.total());
            m.repairs.push(p.repairs as f64);
            m.condemned.push(p.condemned as f64);
            m.repair_entries.push(p.repair_entries as f64);
            m.requests.push(p.requests as f64);
            m.shipments.push(p.shipments as f64);
            m.laterals.push(p.laterals as f64);
            m.repair_planned.push(p.repair_planned);
            m.repair_failed.push(p.repair_failed);
            m.transport_cost.push(p.transport_cost);
            m.repair_hours.push(p.repair_hours);
            m.turnaround_hours.push(p.turnaround_hours);
            m.backorder_hours.push(p.backorder_hours);
            m.depot_backorder_hours.push(p.depot_backorder_hours);
            m.shelf_hours.push(p.shelf_hours);
            m.demands.push(p.demands as f64);
            m.pv_spend.push(p.pv_spend);
            if self.whole_years > 0 {
                m.stockout_year_share
                    .push(f64::from(p.stockout_years) / f64::from(self.whole_years));
            }
        }
        self.pv_spend.push(o.pv_spend());
        if let Some(books) = &mut self.money {
            books.push(o);
        }
        if self.ready {
            self.trial_readiness.push(o.readiness);
        }
        self.trial_availability.push(o.availability);
        self.trial_total.push(total);
        self.trial_spend.push(spend);
    }

    /// Number of trials folded.
    pub fn n(&self) -> u64 {
        self.availability.n
    }
}

/// Mean, standard error and percentiles of a per-trial figure.
fn figures(m: &Moments, per_trial: &[f64]) -> AvailabilityFigures {
    let s = sorted(per_trial);
    AvailabilityFigures {
        mean: m.mean(),
        se: m.se(),
        p05: percentile_sorted(&s, 5.0),
        p10: percentile_sorted(&s, 10.0),
        p50: percentile_sorted(&s, 50.0),
        p90: percentile_sorted(&s, 90.0),
        p95: percentile_sorted(&s, 95.0),
    }
}

/// The availability (or readiness) distribution in figures.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct AvailabilityFigures {
    pub mean: f64,
    pub se: f64,
    pub p05: f64,
    pub p10: f64,
    pub p50: f64,
    pub p90: f64,
    pub p95: f64,
}

/// Mean, standard error and the P10, P50 and P90 of a money figure.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct SpreadFigures {
    pub mean: f64,
    pub se: f64,
    pub p10: f64,
    pub p50: f64,
    pub p90: f64,
}

impl From<AvailabilityFigures> for SpreadFigures {
    fn from(f: AvailabilityFigures) -> Self {
        SpreadFigures {
            mean: f.mean,
            se: f.se,
            p10: f.p10,
            p50: f.p50,
            p90: f.p90,
        }
    }
}

/// One part type's running spend in one year.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct PartYearFigures {
    pub spend: MeanSe,
    /// Its budget for the year (a partial year's share), if it has one.
    pub budget: Option<Money>,
    /// Chance its spend stays within that budget (Wilson 95 %).
    pub within_budget: Option<Chance>,
}

/// One year's running spend across trials.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct YearFigures {
    /// The year, from 1.
    pub year: u32,
    /// The share of a full year it covers (below 1 for a partial last year).
    pub share: f64,
    pub spend: SpreadFigures,
    /// The fleet's budget for the year (a partial year's share), if any.
    pub budget: Option<Money>,
    /// Chance the year's running spend stays within it (Wilson 95 %).
    pub within_budget: Option<Chance>,
    /// Per part type, in part order.
    pub parts: Vec<PartYearFigures>,
}

/// The money figures of a policy (MODEL.md, "Money over time").
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct MoneyFigures {
    pub years: Vec<YearFigures>,
    /// Chance that every year stays within the fleet's budget (Wilson 95 %).
    pub within_every_year: Option<Chance>,
    /// Per part type: chance that every year stays within its own budget.
    pub part_within_every_year: Vec<Option<Chance>>,
    /// Present value of spend, the initial capital at time 0 included.
    pub pv_spend: SpreadFigures,
    /// The initial stock's capital (year 0), in the present value.
    pub capital: Money,
}

/// A policy's results across a set of trials.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    pub policy: Policy,
    pub first_trial: u64,
    pub acc: Accumulator,
    /// The threshold of the target in force.
    pub target: f64,
    /// Which per-trial figure the target is of.
    pub measure: Measure,
    pub initial_stock_capital: Money,
}

impl Summary {
    /// Build from an accumulator.
    pub fn new(
        model: &Model,
        policy: &Policy,
        first_trial: u64,
        acc: Accumulator,
        target: f64,
    ) -> Self {
        Summary {
            policy: policy.clone(),
            first_trial,
            initial_stock_capital: policy.initial_stock_capital(model),
            measure: if acc.ready {
                model.measure()
            } else {
                Measure::Availability
            },
            acc,
            target,
        }
    }

    /// Number of trials.
    pub fn trials(&self) -> u64 {
        self.acc.n()
    }

    /// Availability mean, standard error and percentiles.
    pub fn availability(&self) -> AvailabilityFigures {
        figures(&self.acc.availability, &self.acc.trial_availability)
    }

    /// Readiness mean, standard error and percentiles (a ready-units
    /// target in force).
    pub fn readiness(&self) -> AvailabilityFigures {
        figures(&self.acc.readiness, &self.acc.trial_readiness)
    }

    /// Each trial's figure the target in force is of.
    pub fn trial_measure(&self) -> &[f64] {
        match self.measure {
            Measure::Availability => &self.acc.trial_availability,
            Measure::Readiness => &self.acc.trial_readiness,
        }
    }

    /// Chance that a trial's figure of the target in force (availability,
    /// or readiness) is at least `target`.
    pub fn chance_at(&self, target: f64) -> Chance {
        let k = self
            .trial_measure()
            .iter()
            .filter(|&&a| a >= target)
            .count() as u64;
        wilson(k, self.trials())
    }

    /// Chance that a trial's availability is at least `target`, whatever
    /// the target in force.
    pub fn availability_chance_at(&self, target: f64) -> Chance {
        let k = self
            .acc
            .trial_availability
            .iter()
            .filter(|&&a| a >= target)
            .count() as u64;
        wilson(k, self.trials())
    }

    /// Chance that site `site` alone has at least its ready count of
    /// units up for at least the share `share` of a `horizon`-hour trial
    /// (a ready-units target in force; `None` otherwise).
    pub fn site_chance_at(&self, site: usize, share: f64, horizon: f64) -> Option<Chance> {
        let m = self.acc.per_site.get(site)?;
        if !self.acc.ready || m.trial_ready_hours.len() as u64 != self.trials() {
            return None;
        }
        let k = m
            .trial_ready_hours
            .iter()
            .filter(|&&h| h / horizon >= share)
            .count() as u64;
        Some(wilson(k, self.trials()))
    }

    /// Chance of meeting the scenario's target.
    pub fn chance(&self) -> Chance {
        self.chance_at(self.target)
    }

    /// Per-trial cost on a basis (capital included in spend).
    pub fn trial_costs(&self, basis: CostBasis) -> Vec<f64> {
        match basis {
            CostBasis::Spend => self
                .acc
                .trial_spend
                .iter()
                .map(|s| s + self.initial_stock_capital)
                .collect(),
            CostBasis::TotalWithPenalty => self.acc.trial_total.clone(),
            CostBasis::PvSpend => match &self.acc.money {
                Some(books) => books
                    .trial_pv
                    .iter()
                    .map(|s| s + self.initial_stock_capital)
                    .collect(),
                // Only a scenario with [money] may ask for it; without, the
                // present value at rate 0 is the spend.
                None => self.trial_costs(CostBasis::Spend),
            },
        }
    }

    /// The yearly money figures (scenarios with `[money]`).
    pub fn money(&self) -> Option<MoneyFigures> {
        let b = self.acc.money.as_ref()?;
        let n = self.trials();
        let np = self.acc.per_part.len();
        let years = (0..b.years)
            .map(|y| {
                let f = figures(&b.spend[y], &b.year_trials(y));
                YearFigures {
                    year: y as u32 + 1,
                    share: b.shares[y],
                    spend: SpreadFigures::from(f),
                    budget: b.budget.map(|x| b.budget_of_year(x, y)),
                    within_budget: b.budget.map(|_| wilson(b.within_year[y], n)),
                    parts: (0..np)
                        .map(|p| {
                            let m = &b.part_spend[y * np + p];
                            PartYearFigures {
                                spend: MeanSe::from(m),
                                budget: b.part_budgets[p].map(|x| b.budget_of_year(x, y)),
                                within_budget: b.part_budgets[p]
                                    .map(|_| wilson(b.part_within_year[y * np + p], n)),
                            }
                        })
                        .collect(),
                }
            })
            .collect();
        let capital = self.initial_stock_capital;
        let pv: Vec<f64> = b.trial_pv.iter().map(|x| x + capital).collect();
        let mut pv_m = Moments::default();
        pv.iter().for_each(|&x| pv_m.push(x));
        Some(MoneyFigures {
            years,
            within_every_year: b.budget.map(|_| wilson(b.within_every_year, n)),
            part_within_every_year: b
                .part_budgets
                .iter()
                .zip(&b.part_within_every_year)
                .map(|(bud, &k)| bud.map(|_| wilson(k, n)))
                .collect(),
            pv_spend: SpreadFigures::from(figures(&pv_m, &pv)),
            capital,
        })
    }

    /// The cost measure: its value and standard error.
    ///
    /// For a percentile the standard error is the order-statistic
    /// (Maritz-Jarrett style) approximation from the binomial: the spread of
    /// the percentiles at `p +- sqrt(p (1 - p) / n)`, halved.
    pub fn cost_measure(&self, measure: CostMeasure) -> MeanSe {
        let costs = self.trial_costs(measure.basis);
        match measure.statistic {
            CostStatistic::Mean => {
                let mut m = Moments::default();
                for c in &costs {
                    m.push(*c);
                }
                MeanSe::from(&m)
            }
            CostStatistic::Percentile(p) => {
                let s = sorted(&costs);
                let n = s.len().max(1) as f64;
                let q = p / 100.0;
                let d = (q * (1.0 - q) / n).sqrt() * 100.0;
                let hi = percentile_sorted(&s, (p + d).min(100.0));
                let lo = percentile_sorted(&s, (p - d).max(0.0));
                MeanSe {
                    mean: percentile_sorted(&s, p),
                    se: 0.5 * (hi - lo),
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wilson_matches_published_example() {
        // Newcombe (1998), Statistics in Medicine 17:857-872, Table I (figures
        // from memory, cross-checked by the formula by hand):
        // 81 of 263 gives the Wilson interval 0.2553 to 0.3662.
        let c = wilson(81, 263);
        assert!((c.lo - 0.2553).abs() < 5e-5, "{c:?}");
        assert!((c.hi - 0.3662).abs() < 5e-5, "{c:?}");
        // 0 of 10: 0 to 0.2775 (same table).
        let c = wilson(0, 10);
        assert!(c.lo == 0.0 && (c.hi - 0.2775).abs() < 5e-5, "{c:?}");
        // The bounds at the ends are exactly 0 and 1 (the interval's
        // definition: at p = 0 the lower root of the score equation is 0),
        // not a rounding remainder, for every n.
        for n in [1, 7, 400, 10_000, 123_457] {
            assert_eq!(wilson(0, n).lo, 0.0, "n = {n}");
            assert_eq!(wilson(n, n).hi, 1.0, "n = {n}");
        }
    }

    #[test]
    fn percentile_type7() {
        // numpy.percentile([1,2,3,4], 25) = 1.75 (linear, numpy's default).
        assert_eq!(percentile_sorted(&[1.0, 2.0, 3.0, 4.0], 25.0), 1.75);
        assert_eq!(percentile_sorted(&[1.0, 2.0, 3.0, 4.0], 100.0), 4.0);
    }

    #[test]
    fn welford_matches_two_pass() {
        let xs = [1e8 + 1.0, 1e8 + 2.0, 1e8 + 4.0, 1e8 + 7.0];
        let mut m = Moments::default();
        xs.iter().for_each(|&x| m.push(x));
        // Exact by hand: mean 1e8 + 3.5, sample variance (6.25 + 2.25 +
        // 0.25 + 12.25) / 3 = 7. The naive sum-of-squares formula loses
        // every digit here; Welford's keeps them.
        assert!((m.mean() - (1e8 + 3.5)).abs() < 1e-6);
        assert!((m.sd() - 7f64.sqrt()).abs() < 1e-7, "{}", m.sd());
    }
}
