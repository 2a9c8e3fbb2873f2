//! The validated fleet model: part types, unit types, the fleet, sites and
//! a depot, policies.
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
    /// Where a life fitted to records came from (file, failures,
    /// suspensions, the family and how it was chosen); `None` for a life
    /// given as parameters.
    pub life_source: Option<LifeSource>,
    /// The repair loop of a repairable part type (a rotable); `None` for a
    /// consumable part, scrapped at removal.
    pub repair: Option<Repair>,
}

/// Where a part type's fitted life came from, for `check` and the
/// warnings.
#[derive(Debug, Clone, PartialEq)]
pub struct LifeSource {
    /// The records file as the scenario names it.
    pub file: String,
    /// The part's name in the records.
    pub records_part: String,
    /// Failures (exact, in an interval or left-censored) in the fit.
    pub failures: usize,
    /// Suspensions (parts removed or still running unfailed).
    pub suspensions: usize,
    /// The family fitted, e.g. `weibull`.
    pub family: String,
    /// How the family was chosen, e.g. "asked for", "lowest AIC".
    pub how: String,
    /// A caution about the fit: why the lowest-AIC family was passed over,
    /// or why the chosen fit's standard errors are not to be trusted.
    pub caution: Option<String>,
}

impl PartType {
    /// True for a safety-critical part type.
    pub fn is_safety_critical(&self) -> bool {
        self.hard_limit.is_some()
    }

    /// True for a repairable part type (a rotable).
    pub fn is_repairable(&self) -> bool {
        self.repair.is_some()
    }

    /// Mean hours from a removal until a part is back on a shelf, for the
    /// mean-life plan: the mean repair time, or the mean lead time for the
    /// condemned share (`condemn` is the removal's condemnation chance).
    /// A consumable's is its mean lead time. The wait for a repair channel
    /// is left out.
    pub fn mean_return(&self, condemn: f64) -> Hours {
        match &self.repair {
            Some(r) => (1.0 - condemn) * r.time.mean() + condemn * self.lead_time.mean(),
            None => self.lead_time.mean(),
        }
    }
}

/// The repair loop of a repairable part type (MODEL.md, "Rotables"): a
/// removed part is condemned (scrapped, and a new one bought) with a chance,
/// else repaired to as good as new.
#[derive(Debug, Clone, PartialEq)]
pub struct Repair {
    /// Repair time of one part (the wait for a channel not included).
    pub time: LeadTime,
    /// Repair cost of a part removed at a planned replacement.
    pub cost_planned: Money,
    /// Repair cost of a part removed after a failure.
    pub cost_failed: Money,
    /// Chance that a part removed at a planned replacement is condemned.
    pub condemn_planned: f64,
    /// Chance that a failed part is condemned.
    pub condemn_failed: f64,
    /// Repair channels (parts repaired at once), first come first served;
    /// `None`: unlimited.
    pub channels: Option<u32>,
}

/// A place where units are kept and spares are held (a garage, a mine
/// site). A scenario without sites has one implicit site holding the whole
/// fleet.
#[derive(Debug, Clone, PartialEq)]
pub struct Site {
    pub name: String,
    /// True for the one site a scenario without `[sites]` has.
    pub implicit: bool,
}

/// A central store above the sites, resupplying them one for one.
#[derive(Debug, Clone, PartialEq)]
pub struct Depot {
    /// Transport time from the depot to each site, indexed by site.
    pub transport: Vec<LeadTime>,
    /// Money per shipment from the depot to a site.
    pub cost_per_shipment: Money,
}

/// Lateral supply: a failure that finds its site's shelf empty may take a
/// spare from another site.
#[derive(Debug, Clone, PartialEq)]
pub struct Lateral {
    /// Time for a spare to reach the failed unit from the giving site.
    pub transfer: LeadTime,
    /// Money per lateral transfer.
    pub cost_per_transfer: Money,
}

/// The ready-units target: at least `at_least[i]` units up at every site
/// `i` at once, for at least the share [`Model::target`] of the horizon.
#[derive(Debug, Clone, PartialEq)]
pub struct ReadyTarget {
    /// Per site, the units that must be up.
    pub at_least: Vec<u32>,
}

/// Which per-trial figure the target is of.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Measure {
    /// Fleet availability, against `A*`.
    Availability,
    /// Readiness (the share of the horizon with every site at its ready
    /// count), against the share `q`.
    Readiness,
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
    /// Index into [`Model::sites`].
    pub site: usize,
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
    /// Index into [`Model::sites`].
    pub site: usize,
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

/// The base-stock levels of one part type: one per site, and one at the
/// depot. Without sites it is the single level `S` of the one store.
///
/// The first site's level is kept apart from the others so that the
/// single-site case needs no allocation.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Stock {
    first: u32,
    /// Levels at sites 1, 2, ... (empty with one site).
    rest: Vec<u32>,
    depot: u32,
}

impl Stock {
    /// The level `S` of a scenario without sites or depot.
    pub fn single(s: u32) -> Self {
        Stock {
            first: s,
            rest: Vec::new(),
            depot: 0,
        }
    }

    /// Levels at each site (at least one) and at the depot (0 without one).
    ///
    /// # Panics
    /// When `sites` is empty (a bug).
    pub fn at_sites(sites: &[u32], depot: u32) -> Self {
        assert!(!sites.is_empty(), "at least one site");
        Stock {
            first: sites[0],
            rest: sites[1..].to_vec(),
            depot,
        }
    }

    /// Number of sites the levels are for.
    pub fn sites(&self) -> usize {
        1 + self.rest.len()
    }

    /// The level at site `i`.
    pub fn site(&self, i: usize) -> u32 {
        if i == 0 { self.first } else { self.rest[i - 1] }
    }

    /// The levels at each site, in site order.
    pub fn site_levels(&self) -> impl Iterator<Item = u32> + '_ {
        std::iter::once(self.first).chain(self.rest.iter().copied())
    }

    /// The level at the depot (0 without one).
    pub fn depot(&self) -> u32 {
        self.depot
    }

    /// True for the one level of a scenario without sites or depot.
    pub fn is_single(&self) -> bool {
        self.rest.is_empty() && self.depot == 0
    }

    /// All spares held at the start: every site and the depot.
    pub fn total(&self) -> u32 {
        self.site_levels().sum::<u32>() + self.depot
    }

    /// Add `n` to every level that is held (sites, and the depot if
    /// `depot`); for tests and searches.
    pub fn add(&mut self, n: u32, depot: bool) {
        self.first += n;
        for s in &mut self.rest {
            *s += n;
        }
        if depot {
            self.depot += n;
        }
    }
}

/// The one level, or the site levels separated by `/`, and `+ depot N`
/// when the depot holds any.
impl std::fmt::Display for Stock {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.first)?;
        for s in &self.rest {
            write!(f, "/{s}")?;
        }
        if self.depot > 0 {
            write!(f, " + depot {}", self.depot)?;
        }
        Ok(())
    }
}

/// What a policy sets for one part type.
#[derive(Debug, Clone, PartialEq)]
pub struct PartPolicy {
    pub rule: Rule,
    /// Base-stock levels `S` (per site and at the depot).
    pub stock: Stock,
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
            .map(|(p, t)| p.stock.total() as f64 * t.price)
            .sum()
    }

    /// A short code of what the policy sets, the same whatever its name,
    /// run, thread count or machine: six characters of Crockford's base 32
    /// taken from the FNV-1a hash of [`Policy::canonical`]. A policy quoted
    /// by its code can be found again in a later report of the same
    /// scenario, where its F-number may differ.
    pub fn code(&self, model: &Model) -> String {
        policy_code(&self.canonical(model))
    }

    /// The policy's content as text, part types in name order: for each,
    /// its name, rule, interval (shortest exact decimal of the hours) and
    /// stock per site and at the depot, e.g.
    /// `engine=age:11200/s2/d0;pump=run_to_failure/s4/d0`.
    pub fn canonical(&self, model: &Model) -> String {
        let mut parts: Vec<String> = self
            .parts
            .iter()
            .zip(&model.parts)
            .map(|(p, t)| {
                let rule = match p.rule.interval() {
                    Some(h) => format!("{}:{h}", p.rule.kind()),
                    None => p.rule.kind().to_string(),
                };
                let sites: Vec<String> = p.stock.site_levels().map(|l| l.to_string()).collect();
                format!(
                    "{}={rule}/s{}/d{}",
                    t.name,
                    sites.join(","),
                    p.stock.depot()
                )
            })
            .collect();
        parts.sort();
        parts.join(";")
    }

    /// Compact one-line form: `engine age 11200 h S2; pump RTF S4`.
    pub fn describe(&self, model: &Model) -> String {
        self.parts
            .iter()
            .zip(&model.parts)
            .map(|(p, t)| {
                let depot = if model.depot.is_some() && p.stock.depot() == 0 {
                    " + depot 0"
                } else {
                    ""
                };
                format!("{} {} S{}{depot}", t.name, p.rule.short(), p.stock)
            })
            .collect::<Vec<_>>()
            .join("; ")
    }
}

/// The FNV-1a 64-bit hash of `bytes` (Fowler, Noll and Vo; offset basis
/// 14695981039346656037, prime 1099511628211).
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// Six characters of Crockford's base 32 (digits and capitals without I,
/// L, O, U) from the top 30 bits of the FNV-1a hash of `text`.
pub fn policy_code(text: &str) -> String {
    const ALPHABET: &[u8; 32] = b"0123456789ABCDEFGHJKMNPQRSTVWXYZ";
    let h = fnv1a64(text.as_bytes());
    (0..6)
        .map(|k| char::from(ALPHABET[((h >> (59 - 5 * k)) & 31) as usize]))
        .collect()
}

/// Which cost the frontier minimises.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum CostBasis {
    /// Parts, labour, holding and the initial stock's capital (no penalty).
    Spend,
    /// Spend without capital plus the downtime penalty (MODEL.md's total).
    TotalWithPenalty,
    /// Present value of spend at the scenario's discount rate, the initial
    /// stock's capital counted in full at time 0 (needs `[money]`).
    PvSpend,
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
    /// Smallest and largest stock level, inclusive; with sites, of the
    /// total over the sites and the depot.
    pub stock_min: u32,
    pub stock_max: u32,
    /// With sites: the range of each site's level and of the depot's.
    pub locations: Option<StockRanges>,
}

impl PartSearch {
    /// Number of stock choices (saturating).
    pub fn stock_choices(&self) -> u128 {
        match &self.locations {
            None => (self.stock_max - self.stock_min + 1) as u128,
            Some(r) => r
                .sites
                .iter()
                .chain(std::iter::once(&r.depot))
                .fold(1u128, |acc, (a, b)| acc.saturating_mul((b - a + 1) as u128)),
        }
    }
}

/// The stock levels a search may try at each site and at the depot
/// (inclusive ranges; the depot's is `(0, 0)` without a depot).
#[derive(Debug, Clone, PartialEq)]
pub struct StockRanges {
    pub sites: Vec<(u32, u32)>,
    pub depot: (u32, u32),
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
            acc.saturating_mul((p.rules.len() as u128).saturating_mul(p.stock_choices()))
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
    /// The threshold of the target in force, in (0, 1]: the availability
    /// target `A*`, or with [`Model::ready`] the share `q` of the horizon.
    pub target: f64,
    /// The availability target `A*` as the scenario gives it (it may give
    /// none when a ready-units target is in force).
    pub availability_target: Option<f64>,
    /// The ready-units target; when given it is the target in force.
    pub ready: Option<ReadyTarget>,
    pub seed: u64,
    /// Default number of trials for `evaluate`.
    pub trials: u64,
    pub parts: Vec<PartType>,
    pub unit_types: Vec<UnitType>,
    pub groups: Vec<FleetGroup>,
    /// Every unit, flattened site by site, then in group order.
    pub units: Vec<Unit>,
    /// At least one; a scenario without `[sites]` has one implicit site.
    pub sites: Vec<Site>,
    /// The central store above the sites, if any.
    pub depot: Option<Depot>,
    /// Lateral supply between sites, if allowed.
    pub lateral: Option<Lateral>,
    pub policies: Vec<Policy>,
    pub search: Option<SearchSpace>,
    /// The currency label for reports.
    pub currency: String,
    /// Whether each trial draws its own life parameters for the part types
    /// with a [`PartType::life_uncertainty`] (from the trial's
    /// `Parameters` stream, so every policy sees the same draws); when off
    /// every trial uses the point estimates.
    pub parameter_uncertainty: bool,
    /// Money over time (`[money]`): years, discounting, budgets; `None`
    /// when the scenario gives none (no yearly money figures then).
    pub money: Option<MoneySettings>,
}

/// The year used to count stock-outs per year when the scenario gives no
/// `hours_per_year`: a calendar year of round-the-clock operation, 365 x 24
/// hours (a choice of ours, documented in docs/scenario-format.md).
pub const DEFAULT_YEAR_HOURS: Hours = 8760.0;

/// Money over time (MODEL.md, "Money over time"): the operating hours of a
/// year (the simulation clock), the discount rate, and the yearly budgets
/// of running spend.
#[derive(Debug, Clone, PartialEq)]
pub struct MoneySettings {
    /// Operating hours in a calendar year (> 0).
    pub hours_per_year: Hours,
    /// Discount rate per year as a fraction (0.06 for 6 %), above -1; 0 when
    /// the scenario gives none.
    pub discount_rate: f64,
    /// Yearly budget of the fleet's running spend (0 or more), if any.
    pub budget: Option<Money>,
    /// Per part type (indexed by part id): its own yearly budget, if any.
    pub part_budgets: Vec<Option<Money>>,
}

impl MoneySettings {
    /// Number of years the horizon touches (the last may be partial), at
    /// least 1.
    pub fn years(&self, horizon: Hours) -> usize {
        years_of(horizon, self.hours_per_year)
    }

    /// The share of a full year that year `y` (from 0) covers: 1 except for
    /// a partial last year.
    pub fn year_share(&self, y: usize, horizon: Hours) -> f64 {
        year_share(y, horizon, self.hours_per_year)
    }

    /// The continuous discount rate per hour, `ln(1 + r) / hours_per_year`,
    /// so that a cost at clock time `t` is worth `exp(-delta t)` of itself.
    pub fn delta_per_hour(&self) -> f64 {
        self.discount_rate.ln_1p() / self.hours_per_year
    }

    /// Present value of one unit of money spent evenly over `[0, horizon]`:
    /// `(1 - exp(-delta H)) / (delta H)` (the continuous uniform series;
    /// Park, Contemporary Engineering Economics, continuous compounding),
    /// 1 at rate 0.
    pub fn flat_pv_factor(&self, horizon: Hours) -> f64 {
        let x = self.delta_per_hour() * horizon;
        if x == 0.0 { 1.0 } else { -(-x).exp_m1() / x }
    }
}

/// Number of years of `year` hours the horizon touches, at least 1.
pub fn years_of(horizon: Hours, year: Hours) -> usize {
    let n = (horizon / year).ceil();
    if n.is_finite() && n >= 1.0 {
        n.min(1e6) as usize
    } else {
        1
    }
}

/// The share of a full year that year `y` (from 0) of a horizon covers.
pub fn year_share(y: usize, horizon: Hours, year: Hours) -> f64 {
    let start = y as f64 * year;
    ((horizon - start) / year).clamp(0.0, 1.0)
}

impl Model {
    /// The hours of a year for yearly figures: `[money] hours_per_year`, or
    /// [`DEFAULT_YEAR_HOURS`].
    pub fn year_hours(&self) -> Hours {
        self.money
            .as_ref()
            .map_or(DEFAULT_YEAR_HOURS, |m| m.hours_per_year)
    }

    /// Number of whole years of [`Model::year_hours`] within the horizon
    /// (0 when the horizon is shorter than a year).
    pub fn whole_years(&self) -> u32 {
        let n = (self.horizon / self.year_hours()).floor();
        if n.is_finite() && n >= 0.0 {
            n.min(1e6) as u32
        } else {
            0
        }
    }

    /// Whether trials draw their own life parameters: the switch is on and
    /// at least one part type's life is fitted to records (only those have
    /// a sampling distribution to draw from).
    pub fn draws_life_parameters(&self) -> bool {
        self.parameter_uncertainty && self.parts.iter().any(|p| p.life_uncertainty.is_some())
    }

    /// Values that are legal but suspicious, one sentence each, for a
    /// `warning:` line (the run goes ahead): a repair or lead time longer
    /// than the part type's mean life, a lognormal sigma above 3, a mean
    /// life shorter than a replacement takes or under 10 hours, a fitted
    /// life's caution (a family passed over, untrusted standard errors),
    /// and parameter uncertainty asked for with nothing fitted to draw.
    /// The thresholds are common practice, not from a published source.
    pub fn warnings(&self) -> Vec<String> {
        let mut out = Vec::new();
        let h = |x: f64| {
            if x >= 100.0 {
                format!("{x:.0} h")
            } else {
                format!("{} h", (x * 100.0).round() / 100.0)
            }
        };
        for p in &self.parts {
            let mean = p.life.mean();
            let who = format!("part type `{}`", p.name);
            if let Some(r) = &p.repair
                && r.time.mean() > mean
            {
                out.push(format!(
                    "{who}: its repair takes {} on average, longer than its mean life of {}; check the repair time and the life",
                    h(r.time.mean()),
                    h(mean)
                ));
            }
            if p.lead_time.mean() > mean {
                out.push(format!(
                    "{who}: its lead time is {} on average, longer than its mean life of {}; check the lead time and the life",
                    h(p.lead_time.mean()),
                    h(mean)
                ));
            }
            if let Life::Lognormal { sigma, .. } = p.life
                && sigma > 3.0
            {
                out.push(format!(
                    "{who}: lognormal sigma {sigma} is above 3, so one life in a hundred is over {:.0} times the median; check that sigma is the standard deviation of ln(hours), not of hours",
                    (2.326_347_874 * sigma).exp()
                ));
            }
            let longest = p.duration_planned.max(p.duration_unplanned);
            if mean < longest {
                out.push(format!(
                    "{who}: its mean life of {} is shorter than a replacement takes ({}); check the life's units (operating hours) and the durations",
                    h(mean),
                    h(longest)
                ));
            }
            if mean < 10.0 {
                out.push(format!(
                    "{who}: its mean life is {}, under 10 hours; check the life's parameters and their units (operating hours)",
                    h(mean)
                ));
            }
            if let Some(src) = &p.life_source
                && let Some(c) = &src.caution
            {
                out.push(format!("{who}: life fitted to {}: {c}", src.file));
            }
        }
        if self.parameter_uncertainty && !self.draws_life_parameters() {
            out.push(
                "parameter uncertainty is on, but no part type's life is fitted to records, so every trial uses the scenario's life parameters".to_string(),
            );
        }
        out
    }

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

    /// Build the flattened unit list from the groups: site by site (sites
    /// in index order), and within a site group by group in file order.
    /// Without sites (every group at site 0) this is the groups' order.
    pub fn flatten_units(unit_types: &[UnitType], groups: &[FleetGroup]) -> Vec<Unit> {
        let mut units = Vec::new();
        let sites = groups.iter().map(|g| g.site + 1).max().unwrap_or(1);
        for site in 0..sites {
            for (g, group) in groups.iter().enumerate() {
                if group.site != site {
                    continue;
                }
                let parts: Vec<PartId> = unit_types[group.unit_type]
                    .positions
                    .iter()
                    .map(|p| p.part)
                    .collect();
                for i in 0..group.count {
                    units.push(Unit {
                        group: g,
                        index_in_group: i,
                        site,
                        parts: parts.clone(),
                    });
                }
            }
        }
        units
    }

    /// Which figure the target in force is of.
    pub fn measure(&self) -> Measure {
        if self.ready.is_some() {
            Measure::Readiness
        } else {
            Measure::Availability
        }
    }

    /// True when the scenario names sites (so stock is per site).
    pub fn has_sites(&self) -> bool {
        !self.sites.iter().all(|s| s.implicit)
    }

    /// Units at each site.
    pub fn site_units(&self) -> Vec<usize> {
        let mut n = vec![0; self.sites.len()];
        for u in &self.units {
            n[u.site] += 1;
        }
        n
    }

    /// True when any part type is repairable.
    pub fn has_rotables(&self) -> bool {
        self.parts.iter().any(PartType::is_repairable)
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

    /// FNV-1a 64 test vectors from the algorithm's published description
    /// (Fowler, Noll and Vo; values from memory): the empty string gives
    /// the offset basis, "a" and "foobar" their listed hashes.
    #[test]
    fn fnv1a64_matches_published_vectors() {
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a64(b"foobar"), 0x8594_4171_f739_67e8);
    }

    /// A policy's code depends on what it sets, not on its name or the
    /// order of the part types in the file; it is six characters of
    /// Crockford's base 32, and a pinned value guards it across versions
    /// and machines (the code printed in an earlier report must still
    /// name the same policy).
    #[test]
    fn policy_code_follows_content_only() {
        // The demo as it stood when codes were introduced (kept as a fixture).
        let load = |text: &str| crate::scenario::parse("demo.toml", text).unwrap();
        let demo = include_str!("../tests/data/demo-2026.toml");
        let m = load(demo);
        let current = m.policy("current").unwrap();
        let code = current.code(&m);
        assert_eq!(code.len(), 6);
        assert!(
            code.bytes()
                .all(|b| b"0123456789ABCDEFGHJKMNPQRSTVWXYZ".contains(&b))
        );
        assert_eq!(
            current.canonical(&m),
            "brake_actuator=age:8000/s2/d0;door_drive=run_to_failure/s2/d0;hvac_compressor=run_to_failure/s1/d0;traction_motor=run_to_failure/s1/d0"
        );
        assert_eq!(code, policy_code(&current.canonical(&m)));
        // Pinned: computed once by this function; a change here renames every
        // policy in every report already written.
        assert_eq!(code, "1EAEAR");
        let renamed = Policy {
            name: "other".into(),
            ..current.clone()
        };
        assert_eq!(renamed.code(&m), code);
        let reference = m.policy("reference").unwrap();
        assert_ne!(reference.code(&m), code);
        let mut one_more = current.clone();
        one_more.parts[2].stock = Stock::single(3);
        assert_ne!(one_more.code(&m), code);
        let mut later = current.clone();
        later.parts[1].rule = Rule::Age(8000.5);
        assert_ne!(later.code(&m), code);
        // The same scenario with its part types in another order in the
        // file: the same code for the same settings.
        let (a, b) = (
            demo.find("# Door drive").unwrap(),
            demo.find("# HVAC").unwrap(),
        );
        let first = demo.find("# Traction motor").unwrap();
        let moved = format!(
            "{}{}{}{}",
            &demo[..first],
            &demo[a..b],
            &demo[first..a],
            &demo[b..]
        );
        let m2 = load(&moved);
        assert_ne!(m2.parts[0].name, m.parts[0].name);
        assert_eq!(m2.policy("current").unwrap().code(&m2), code);
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
