//! What the report shows, gathered once from the results: one row per
//! policy (the frontier's points, or the one evaluated policy), which of
//! them the figures single out, and the number formats people read.
//!
//! Owns: the report's view of a result and its formatting helpers.
//! May use: `model`, `summary`, `recost`, `result` (a frontier's JSON,
//! for the words the terminal prints too), `mean_life`, `analytic`,
//! `dist`, `text`.
//! No simulation, no I/O.

use crate::analytic::PoissonPipeline;
use crate::dist::LeadTime;
use crate::mean_life::{MeanLifePlan, mean_life_plan};
use crate::model::{CostBasis, CostMeasure, Model, Policy, Rule};
use crate::recost::NoiseFlags;
use crate::result::FrontierJson;
use crate::summary::{Chance, MeanSe, Summary, percentile_sorted, sorted};
use crate::text::{currency, num};

/// Chance levels the words and the level table speak of.
pub const LEVELS: [f64; 7] = crate::recost::CHANCE_LEVELS;

/// The levels whose cheapest policies the summary names and the figures
/// single out.
pub const CHOSEN_LEVELS: [f64; 2] = [0.5, 0.9];

/// One policy as the report shows it.
#[derive(Debug, Clone)]
pub struct PolicyView<'a> {
    pub policy: &'a Policy,
    /// Its stable code ([`Policy::code`]).
    pub code: String,
    pub summary: &'a Summary,
    /// The cost measure and its standard error.
    pub cost: MeanSe,
    pub chance: Chance,
    pub plan: MeanLifePlan,
    pub noise: Option<NoiseFlags>,
}

impl PolicyView<'_> {
    pub fn name(&self) -> &str {
        &self.policy.name
    }

    /// Its name and code for a table cell: `F3 (1EAEAR)`.
    pub fn labelled(&self) -> String {
        crate::result::labelled(self.name(), &self.code)
    }

    /// Mean total with the downtime penalty (without capital).
    pub fn total(&self) -> f64 {
        self.summary.acc.total.mean()
    }

    /// Mean spend with the initial stock's capital.
    pub fn spend(&self) -> f64 {
        self.summary.acc.spend.mean() + self.summary.initial_stock_capital
    }

    /// Per-trial costs on the measure's basis (capital in spend).
    pub fn trial_costs(&self, basis: CostBasis) -> Vec<f64> {
        self.summary.trial_costs(basis)
    }

    /// The mean-life plan's cost on the measure's basis, comparable with
    /// the simulated mean (capital in spend).
    pub fn plan_cost(&self, basis: CostBasis) -> f64 {
        match basis {
            CostBasis::Spend => self.plan.spend + self.summary.initial_stock_capital,
            CostBasis::TotalWithPenalty => self.plan.cost,
            CostBasis::PvSpend => {
                self.plan.pv_spend.unwrap_or(self.plan.spend) + self.summary.initial_stock_capital
            }
        }
    }

    /// Mean cost of part type `p` on the basis (capital in spend).
    pub fn part_cost(&self, model: &Model, p: usize, basis: CostBasis) -> f64 {
        let m = &self.summary.acc.per_part[p];
        match basis {
            CostBasis::Spend => {
                m.parts_cost.mean()
                    + m.labour_planned.mean()
                    + m.labour_unplanned.mean()
                    + m.holding.mean()
                    + self.policy.parts[p].stock.total() as f64 * model.parts[p].price
            }
            CostBasis::TotalWithPenalty => m.total.mean(),
            CostBasis::PvSpend => {
                m.pv_spend.mean() + self.policy.parts[p].stock.total() as f64 * model.parts[p].price
            }
        }
    }

    /// Mean demands per trial of part type `p` (failures and planned
    /// replacements; each places one order).
    pub fn demands(&self, p: usize) -> f64 {
        let m = &self.summary.acc.per_part[p];
        m.failures.mean() + m.planned.mean()
    }

    /// Expected demand during one mean lead time of part type `p`, from
    /// the simulated demand rate over the horizon.
    pub fn lead_time_demand(&self, model: &Model, p: usize) -> f64 {
        self.demands(p) / model.horizon * model.parts[p].lead_time.mean()
    }

    /// The number of part type `p`'s spares in resupply in the steady
    /// state: Poisson with mean [`PolicyView::lead_time_demand`] (Palm's
    /// theorem, whatever the lead-time distribution); `None` if that mean
    /// is not a number of at least 0.
    pub fn pipeline(&self, model: &Model, p: usize) -> Option<PoissonPipeline> {
        PoissonPipeline::new(self.lead_time_demand(model, p)).ok()
    }

    /// Chance that availability reaches at least `level` (whatever the
    /// target in force: the levels the report reads are availabilities).
    pub fn chance_at(&self, level: f64) -> f64 {
        self.summary.availability_chance_at(level).value
    }

    /// Site `i`'s figures, when the scenario names sites.
    pub fn site(&self, model: &Model, i: usize) -> Option<SiteView> {
        if !model.has_sites() {
            return None;
        }
        let m = self.summary.acc.per_site.get(i)?;
        let h = model.horizon;
        let n = self.summary.trials().max(1) as f64;
        let units = model.site_units()[i];
        let shares: Vec<f64> = m.units_up.iter().map(|x| x / (n * h)).collect();
        let at_least = model.ready.as_ref().map(|r| r.at_least[i]);
        Some(SiteView {
            units,
            at_least,
            chance: self.summary.site_chance_at(i, self.summary.target, h),
            ready_share: m.ready_hours.mean() / h,
            units_up_mean: if units > 0 {
                m.up_hours.mean() / h
            } else {
                0.0
            },
            plan_units_up: self.plan.sites.get(i).map_or(f64::NAN, |p| p.units_up),
            plan_meets: self.plan.sites.get(i).and_then(|p| p.meets_count),
            stockouts: m.stockouts.mean(),
            backorders: m.backorder_hours.mean() / h,
            laterals_given: m.laterals_given.mean(),
            laterals_taken: m.laterals_taken.mean(),
            shares,
        })
    }
}

/// One site's figures for one policy (means per trial).
#[derive(Debug, Clone)]
pub struct SiteView {
    pub units: usize,
    /// The ready count, with a ready-units target.
    pub at_least: Option<u32>,
    /// Chance that the site alone holds its count for the share of the
    /// horizon (with a ready-units target).
    pub chance: Option<Chance>,
    /// Mean share of the horizon with at least the count up.
    pub ready_share: f64,
    /// Time-average units up.
    pub units_up_mean: f64,
    /// The mean-life plan's expected units up, and whether it meets the count.
    pub plan_units_up: f64,
    pub plan_meets: Option<bool>,
    pub stockouts: f64,
    /// Time-average demands waiting for a spare at the site.
    pub backorders: f64,
    pub laterals_given: f64,
    pub laterals_taken: f64,
    /// Mean share of the horizon with exactly `m` units up (empty when the
    /// run did not count units up).
    pub shares: Vec<f64>,
}

/// What kind of run the report describes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    Frontier,
    Evaluate,
}

/// The whole view of a result.
#[derive(Debug, Clone)]
pub struct View<'a> {
    pub model: &'a Model,
    pub kind: Kind,
    pub target: f64,
    pub measure: CostMeasure,
    /// Cheapest first.
    pub policies: Vec<PolicyView<'a>>,
    /// Indices into `policies` of those singled out, cheapest first.
    pub chosen: Vec<usize>,
    /// The cheapest policy the mean-life plan says meets the target.
    pub planner_pick: Option<usize>,
    /// Every policy simulated in the search (frontier runs only), on the
    /// search trials.
    pub searched: &'a [(Policy, MeanSe, Chance)],
    pub search_trials: u64,
    /// A frontier's JSON, whose words (named policies, bounds reached, the
    /// cheapest on total, the re-costing) the report prints as the
    /// terminal does.
    pub answer: Option<&'a FrontierJson>,
}

impl<'a> View<'a> {
    /// Build the view; `policies` cheapest first.
    pub fn new(
        model: &'a Model,
        kind: Kind,
        target: f64,
        measure: CostMeasure,
        rows: Vec<(&'a Policy, &'a Summary, MeanSe, Chance, Option<NoiseFlags>)>,
        searched: &'a [(Policy, MeanSe, Chance)],
        search_trials: u64,
    ) -> Self {
        let policies: Vec<PolicyView<'a>> = rows
            .into_iter()
            .map(|(policy, summary, cost, chance, noise)| PolicyView {
                code: policy.code(model),
                policy,
                summary,
                cost,
                chance,
                plan: mean_life_plan(model, policy),
                noise,
            })
            .collect();
        let planner_pick = policies.iter().position(|p| p.plan.meets_target);
        let chosen = match kind {
            Kind::Frontier => choose(&policies, planner_pick),
            Kind::Evaluate => vec![0],
        };
        View {
            answer: None,
            model,
            kind,
            target,
            measure,
            policies,
            chosen,
            planner_pick,
            searched,
            search_trials,
        }
    }

    /// The cheapest policy with at least `level` chance, if any.
    pub fn cheapest_at(&self, level: f64) -> Option<usize> {
        cheapest_at(&self.policies, level)
    }

    /// The chosen policies' views.
    pub fn chosen_views(&self) -> impl Iterator<Item = &PolicyView<'a>> {
        self.chosen.iter().map(|&i| &self.policies[i])
    }

    /// The target in force in a few words: `95 % availability`, or `the
    /// ready-units target`.
    pub fn target_words(&self) -> String {
        match &self.model.ready {
            None => format!("{} availability", pct_trim(self.target, 1)),
            Some(_) => "the ready-units target".to_string(),
        }
    }

    /// The target in force in full: `at least 95 % fleet availability`, or
    /// `at least 18 units ready at north, 14 at east and 10 at south, all
    /// at once, for at least 95 % of the horizon`.
    pub fn target_in_full(&self) -> String {
        match &self.model.ready {
            None => format!("at least {} fleet availability", pct_trim(self.target, 1)),
            Some(r) => {
                let bits: Vec<String> = self
                    .model
                    .sites
                    .iter()
                    .zip(&r.at_least)
                    .enumerate()
                    .map(|(i, (s, k))| {
                        if i == 0 {
                            format!("{k} units ready at {}", display(&s.name))
                        } else {
                            format!("{k} at {}", display(&s.name))
                        }
                    })
                    .collect();
                let list = match bits.split_last() {
                    Some((last, rest)) if !rest.is_empty() => {
                        format!("{} and {last}", rest.join(", "))
                    }
                    _ => bits.join(""),
                };
                format!(
                    "at least {list}{}, for at least {} of the horizon",
                    if bits.len() > 1 { ", all at once" } else { "" },
                    pct_trim(self.target, 1)
                )
            }
        }
    }

    /// The currency, with a leading space, or nothing.
    pub fn cur(&self) -> String {
        currency(&self.model.currency, "\u{a0}", "")
    }

    /// The currency in brackets, with a leading space, or nothing.
    pub fn cur_paren(&self) -> String {
        currency(&self.model.currency, " (", ")")
    }
}

/// The policy with the best chance (the cheapest of any tie).
fn safest(policies: &[PolicyView<'_>]) -> usize {
    (0..policies.len())
        .max_by(|&a, &b| {
            policies[a]
                .chance
                .value
                .total_cmp(&policies[b].chance.value)
                .then(b.cmp(&a))
        })
        .unwrap_or(0)
}

/// The policy with the least mean total with the downtime penalty (the
/// first of any tie).
fn cheapest_on_total(policies: &[PolicyView<'_>]) -> usize {
    (0..policies.len())
        .min_by(|&a, &b| policies[a].total().total_cmp(&policies[b].total()))
        .unwrap_or(0)
}

impl View<'_> {
    /// The policy with the best chance.
    pub fn safest(&self) -> usize {
        safest(&self.policies)
    }

    /// The policy cheapest on the total with the downtime penalty.
    pub fn cheapest_on_total(&self) -> usize {
        cheapest_on_total(&self.policies)
    }
}

fn cheapest_at(policies: &[PolicyView<'_>], level: f64) -> Option<usize> {
    policies
        .iter()
        .position(|p| p.chance.value >= level - 1e-12)
}

/// The policies the figures single out, which are the ones the summary
/// names: the cheapest, the cheapest reaching each of [`CHOSEN_LEVELS`],
/// the one with the best chance, the mean-life plan's pick and the one
/// cheapest on the total with the downtime penalty; cheapest first.
fn choose(policies: &[PolicyView<'_>], planner_pick: Option<usize>) -> Vec<usize> {
    if policies.is_empty() {
        return Vec::new();
    }
    let mut picks = vec![0];
    // The summary names the levels' picks up to the first level no policy
    // reaches.
    for &l in &CHOSEN_LEVELS {
        match cheapest_at(policies, l) {
            Some(i) => picks.push(i),
            None => break,
        }
    }
    picks.push(safest(policies));
    picks.extend(planner_pick);
    picks.push(cheapest_on_total(policies));
    picks.sort_unstable();
    picks.dedup();
    picks
}

/// Availability (or any figure) percentiles of a per-trial vector.
pub fn percentiles(xs: &[f64], ps: &[f64]) -> Vec<f64> {
    let s = sorted(xs);
    ps.iter().map(|&p| percentile_sorted(&s, p)).collect()
}

// ---------------------------------------------------------------------------
// Formats
// ---------------------------------------------------------------------------

/// Money in short form: `2.79 M`, `18.5 k`, `950`.
pub fn money_short(x: f64) -> String {
    let a = x.abs();
    let sign = if x < 0.0 { "-" } else { "" };
    if !x.is_finite() {
        "-".to_string()
    } else if a >= 1e9 {
        format!("{sign}{:.2}\u{a0}G", a / 1e9)
    } else if a >= 1e6 {
        format!("{sign}{:.2}\u{a0}M", a / 1e6)
    } else if a >= 1e5 {
        format!("{sign}{:.0}\u{a0}k", a / 1e3)
    } else if a >= 1e3 {
        format!("{sign}{:.1}\u{a0}k", a / 1e3)
    } else {
        format!("{sign}{a:.0}")
    }
}

/// A chance as a percentage: whole percent, one decimal near 0 and 100.
pub fn chance_pct(x: f64) -> String {
    if !x.is_finite() {
        return "-".to_string();
    }
    // Rounded to a tenth first, so 1e-18 reads 0 % and 0.99999 reads 100 %.
    let p = (1000.0 * x).round() / 10.0;
    if (p > 0.0 && p < 1.0) || (p > 99.0 && p < 100.0) {
        format!("{p:.1}\u{a0}%")
    } else {
        format!("{p:.0}\u{a0}%")
    }
}

/// A chance with its 95 % interval: `76 % [73 % to 79 %]`.
pub fn chance_with_interval(c: &Chance) -> String {
    format!(
        "{} [{} to {}]",
        chance_pct(c.value),
        chance_pct(c.lo),
        chance_pct(c.hi)
    )
}

/// An availability (or share) as a percentage with one decimal.
pub fn pct1(x: f64) -> String {
    if !x.is_finite() {
        return "-".to_string();
    }
    format!("{:.1}\u{a0}%", 100.0 * x)
}

/// A share as a percentage with `d` decimals, trailing zeros trimmed:
/// `92 %`, `92.5 %`.
pub fn pct_trim(x: f64, d: usize) -> String {
    let s = format!("{:.*}", d, 100.0 * x);
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    format!("{s}\u{a0}%")
}

/// Hours with separators: `8,000 h`.
pub fn hours(x: f64) -> String {
    format!("{}\u{a0}h", num(x, 0))
}

/// A scenario name for people: underscores read as spaces.
pub fn display(name: &str) -> String {
    name.replace('_', " ")
}

/// Small counts in words: `one`, `two`, ..., then digits.
pub fn count_words(n: u32) -> String {
    const W: [&str; 11] = [
        "no", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine", "ten",
    ];
    W.get(n as usize)
        .map(|s| s.to_string())
        .unwrap_or_else(|| n.to_string())
}

/// A rule in words: `run to failure`, `age replacement at 8,000 h`,
/// `block replacement every 6,000 h`.
pub fn rule_words(r: Rule) -> String {
    match r {
        Rule::RunToFailure => "run to failure".to_string(),
        Rule::Age(t) => format!("age replacement at {}", hours(t)),
        Rule::Block(t) => format!("block replacement every {}", hours(t)),
    }
}

/// A rule in a table cell: `RTF`, `age 8,000 h`, `block 6,000 h`.
pub fn rule_short(r: Rule) -> String {
    match r {
        Rule::RunToFailure => "run\u{a0}to\u{a0}failure".to_string(),
        Rule::Age(t) => format!("age\u{a0}{}", hours(t)),
        Rule::Block(t) => format!("block\u{a0}{}", hours(t)),
    }
}

/// A lead-time distribution in words.
pub fn lead_time_words(l: &LeadTime) -> String {
    match *l {
        LeadTime::Fixed { hours: h } => format!("always {}", hours(h)),
        LeadTime::Lognormal { median, log_sd } => format!(
            "lognormal, median {}, mean {} (log-sd {})",
            hours(median),
            hours(l.mean()),
            trim(log_sd, 2)
        ),
        LeadTime::Gamma { mean, cv } => {
            format!(
                "gamma, mean {} (coefficient of variation {})",
                hours(mean),
                trim(cv, 2)
            )
        }
    }
}

/// A number with at most `d` decimals, trailing zeros trimmed.
pub fn trim(x: f64, d: usize) -> String {
    let s = format!("{x:.d$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        // Units are joined by a no-break space, shown here as `~`.
        let f = |s: String| s.replace('\u{a0}', "~");
        assert_eq!(f(money_short(2_791_450.0)), "2.79~M");
        assert_eq!(f(money_short(18_530.0)), "18.5~k");
        assert_eq!(f(money_short(380_400.0)), "380~k");
        assert_eq!(f(money_short(-950.0)), "-950");
        assert_eq!(f(chance_pct(0.7604)), "76~%");
        assert_eq!(f(chance_pct(0.9966)), "99.7~%");
        assert_eq!(f(chance_pct(1.0)), "100~%");
        assert_eq!(f(chance_pct(8.7e-19)), "0~%");
        assert_eq!(f(chance_pct(0.004)), "0.4~%");
        assert_eq!(f(pct_trim(0.925, 1)), "92.5~%");
        assert_eq!(f(pct_trim(0.92, 1)), "92~%");
        assert_eq!(f(hours(8000.0)), "8,000~h");
        assert_eq!(num(1234567.0, 0), "1,234,567");
        assert_eq!(count_words(2), "two");
        assert_eq!(count_words(12), "12");
    }
}
