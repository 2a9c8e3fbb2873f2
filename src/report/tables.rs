//! The report's CSV files: `frontier.csv` (every point of the frontier
//! figure), `policies.csv` (one row per reported policy, every figure the
//! report quotes) and `trials.csv` (one row per trial of each reported
//! policy, with the cost components).
//!
//! Owns: the CSV columns and the re-run of the reported trials.
//! May use: `csv`, `sim`, `run`, `outcome`, `result`, `model`,
//! `super::view`.
//!
//! `Summary` keeps three numbers per trial (availability, total, spend),
//! not the cost components, so `trials.csv` re-runs the reported trials
//! through [`Simulator::run`] with the same trial numbers (a trial is a
//! pure function of the seed and its number, so this reproduces them
//! exactly) and checks every re-run trial's availability and total against
//! the kept ones bit for bit. This costs one more pass over the reported
//! trials but keeps memory flat for every other run.

use crate::model::{Model, Rule};
use crate::result::cost_measure_label;
use crate::run::{Progress, for_each_trial};
use crate::sim::Simulator;

use super::ReportError;
use super::view::{Kind, View};

fn csv_err(e: impl std::fmt::Display) -> ReportError {
    ReportError::Csv(e.to_string())
}

fn finish(w: csv::Writer<Vec<u8>>) -> Result<Vec<u8>, ReportError> {
    w.into_inner().map_err(csv_err)
}

/// A float as Rust prints it: the shortest text that reads back to the
/// same number.
fn full(x: f64) -> String {
    if x.is_finite() {
        format!("{x}")
    } else {
        String::new()
    }
}

/// Money to the cent.
fn cents(x: f64) -> String {
    format!("{x:.2}")
}

/// `frontier.csv`: every point of the frontier figure. `set` is
/// `searched` (every policy simulated in full during the search, on the
/// search trials), `frontier` (the re-costed non-dominated policies, on
/// the validation trials) or `evaluated` (an evaluate report's policy).
pub fn frontier_csv(v: &View<'_>) -> Result<Vec<u8>, ReportError> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record([
        "set",
        "policy",
        "code",
        "trials",
        "first_trial",
        "cost_measure",
        "cost",
        "cost_se",
        "chance",
        "chance_lo",
        "chance_hi",
        "describe",
    ])
    .map_err(csv_err)?;
    let measure = cost_measure_label(v.measure);
    for (p, cost, chance) in v.searched {
        w.write_record([
            "searched".to_string(),
            p.name.clone(),
            p.code(v.model),
            v.search_trials.to_string(),
            "0".to_string(),
            measure.clone(),
            full(cost.mean),
            full(cost.se),
            full(chance.value),
            full(chance.lo),
            full(chance.hi),
            p.describe(v.model),
        ])
        .map_err(csv_err)?;
    }
    let set = match v.kind {
        Kind::Frontier => "frontier",
        Kind::Evaluate => "evaluated",
    };
    for p in &v.policies {
        w.write_record([
            set.to_string(),
            p.name().to_string(),
            p.code.clone(),
            p.summary.trials().to_string(),
            p.summary.first_trial.to_string(),
            measure.clone(),
            full(p.cost.mean),
            full(p.cost.se),
            full(p.chance.value),
            full(p.chance.lo),
            full(p.chance.hi),
            p.policy.describe(v.model),
        ])
        .map_err(csv_err)?;
    }
    finish(w)
}

fn rule_kind(r: Rule) -> &'static str {
    r.kind()
}

/// `policies.csv`: one row per reported policy.
pub fn policies_csv(v: &View<'_>) -> Result<Vec<u8>, ReportError> {
    let model = v.model;
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut head: Vec<String> = vec!["policy".into(), "code".into(), "describe".into()];
    for part in &model.parts {
        head.push(format!("{}_rule", part.name));
        head.push(format!("{}_interval_hours", part.name));
        head.push(format!("{}_stock", part.name));
    }
    for h in [
        "trials",
        "first_trial",
        "target",
        "cost_measure",
        "cost",
        "cost_se",
        "chance",
        "chance_lo",
        "chance_hi",
        "availability_mean",
        "availability_se",
        "availability_p05",
        "availability_p10",
        "availability_p50",
        "availability_p90",
        "availability_p95",
        "spend",
        "total_with_penalty",
        "parts",
        "planned_labour",
        "unplanned_labour",
        "downtime",
        "holding",
        "initial_stock_capital",
        "failures",
        "planned",
        "stockouts",
        "orders",
        "plan_availability",
        "plan_total_with_penalty",
        "plan_spend",
        "plan_meets_target",
    ] {
        head.push(h.into());
    }
    w.write_record(&head).map_err(csv_err)?;
    let measure = cost_measure_label(v.measure);
    for p in &v.policies {
        let s = p.summary;
        let a = &s.acc;
        let av = s.availability();
        let mut row: Vec<String> = vec![
            p.name().to_string(),
            p.code.clone(),
            p.policy.describe(model),
        ];
        for pp in &p.policy.parts {
            row.push(rule_kind(pp.rule).to_string());
            row.push(pp.rule.interval().map(full).unwrap_or_default());
            row.push(pp.stock.to_string());
        }
        row.extend([
            s.trials().to_string(),
            s.first_trial.to_string(),
            full(s.target),
            measure.clone(),
            full(p.cost.mean),
            full(p.cost.se),
            full(p.chance.value),
            full(p.chance.lo),
            full(p.chance.hi),
            full(av.mean),
            full(av.se),
            full(av.p05),
            full(av.p10),
            full(av.p50),
            full(av.p90),
            full(av.p95),
            full(a.spend.mean() + s.initial_stock_capital),
            full(a.total.mean()),
            full(a.parts_cost.mean()),
            full(a.labour_planned.mean()),
            full(a.labour_unplanned.mean()),
            full(a.downtime_cost.mean()),
            full(a.holding.mean()),
            full(s.initial_stock_capital),
            full(a.failures.mean()),
            full(a.planned.mean()),
            full(a.stockouts.mean()),
            full(a.orders.mean()),
            full(p.plan.availability),
            full(p.plan.cost),
            full(p.plan.spend + s.initial_stock_capital),
            p.plan.meets_target.to_string(),
        ]);
        w.write_record(&row).map_err(csv_err)?;
    }
    finish(w)
}

/// The columns of `trials.csv`.
pub const TRIAL_COLUMNS: [&str; 13] = [
    "policy",
    "code",
    "trial",
    "availability",
    "meets_target",
    "parts",
    "planned_labour",
    "unplanned_labour",
    "downtime",
    "holding",
    "total",
    "initial_stock_capital",
    "spend",
];

/// `trials.csv`: every trial of every reported policy, re-run (see the
/// module comment). `total` = parts + both labours + holding + downtime
/// (no capital); `spend` = parts + both labours + holding + the initial
/// stock's capital; money to the cent, availability in full.
pub fn trials_csv(
    model: &Model,
    v: &View<'_>,
    progress: &dyn Progress,
) -> Result<Vec<u8>, ReportError> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(TRIAL_COLUMNS).map_err(csv_err)?;
    let total: u64 = v.policies.iter().map(|p| p.summary.trials()).sum();
    progress.phase("report", total);
    for p in &v.policies {
        let s = p.summary;
        let first = s.first_trial;
        let n = s.trials();
        let capital = s.initial_stock_capital;
        let sim = Simulator::new(model, p.policy);
        let mut failed: Option<ReportError> = None;
        let done = for_each_trial(&sim, first..first + n, progress, |t, o| {
            if failed.is_some() {
                return;
            }
            let i = (t - first) as usize;
            let same = s
                .acc
                .trial_availability
                .get(i)
                .is_some_and(|a| a.to_bits() == o.availability.to_bits())
                && s.acc
                    .trial_total
                    .get(i)
                    .is_some_and(|x| x.to_bits() == o.total().to_bits());
            if !same {
                failed = Some(ReportError::Mismatch {
                    policy: p.name().to_string(),
                    trial: t,
                });
                return;
            }
            let sum = |f: fn(&crate::outcome::PartOutcome) -> f64| o.sum(f);
            let record = [
                p.name().to_string(),
                p.code.clone(),
                t.to_string(),
                full(o.availability),
                u8::from(o.availability >= s.target).to_string(),
                cents(sum(|x| x.parts_cost)),
                cents(sum(|x| x.labour_planned)),
                cents(sum(|x| x.labour_unplanned)),
                cents(sum(|x| x.downtime_cost)),
                cents(sum(|x| x.holding)),
                cents(o.total()),
                cents(capital),
                cents(o.spend() + capital),
            ];
            if let Err(e) = w.write_record(&record) {
                failed = Some(csv_err(e));
            }
        });
        if let Some(e) = failed {
            return Err(e);
        }
        if !done {
            return Err(ReportError::Interrupted);
        }
    }
    finish(w)
}
