//! The report's CSV files: `frontier.csv` (every point of the frontier
//! figure), `policies.csv` (one row per reported policy, every figure the
//! report quotes) and `trials.csv` (one row per trial of each reported
//! policy, with the cost components); with sites `sites.csv` (one row per
//! policy and site), `units-up.csv` (the hours by units up, long form) and
//! `stores.csv` (the stock at each store beside the mean-life plan's
//! pipeline there); with rotables `rotables.csv` (the repair loop per
//! policy and rotable).
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

use crate::model::{Measure, Model, Rule};
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
    // A ready-units target, rotables and a depot or lateral supply add
    // their columns after the others (a scenario without them keeps its
    // file as it was); `meets_target` is of the target in force.
    let ready = model.ready.is_some();
    let repair = model.has_rotables();
    let transport = model.depot.is_some() || model.lateral.is_some();
    let mut head: Vec<&str> = TRIAL_COLUMNS.to_vec();
    if ready {
        head.push("readiness");
    }
    if repair {
        head.push("repair");
    }
    if transport {
        head.push("transport");
    }
    w.write_record(&head).map_err(csv_err)?;
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
            let measured = match s.measure {
                Measure::Availability => o.availability,
                Measure::Readiness => o.readiness,
            };
            let mut record = vec![
                p.name().to_string(),
                p.code.clone(),
                t.to_string(),
                full(o.availability),
                u8::from(measured >= s.target).to_string(),
                cents(sum(|x| x.parts_cost)),
                cents(sum(|x| x.labour_planned)),
                cents(sum(|x| x.labour_unplanned)),
                cents(sum(|x| x.downtime_cost)),
                cents(sum(|x| x.holding)),
                cents(o.total()),
                cents(capital),
                cents(o.spend() + capital),
            ];
            if ready {
                record.push(full(o.readiness));
            }
            if repair {
                record.push(cents(sum(|x| x.repair_planned + x.repair_failed)));
            }
            if transport {
                record.push(cents(sum(|x| x.transport_cost)));
            }
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

/// `sites.csv`: one row per reported policy and site.
pub fn sites_csv(v: &View<'_>) -> Result<Vec<u8>, ReportError> {
    let model = v.model;
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record([
        "policy",
        "site",
        "units",
        "at_least",
        "share",
        "chance",
        "chance_lo",
        "chance_hi",
        "ready_share_mean",
        "units_up_mean",
        "availability",
        "plan_units_up",
        "plan_meets_count",
        "stockouts",
        "backorders_mean",
        "laterals_given",
        "laterals_taken",
    ])
    .map_err(csv_err)?;
    for p in &v.policies {
        for (i, site) in model.sites.iter().enumerate() {
            let Some(sv) = p.site(model, i) else { continue };
            let ch = sv.chance;
            w.write_record([
                p.name().to_string(),
                site.name.clone(),
                sv.units.to_string(),
                sv.at_least.map(|k| k.to_string()).unwrap_or_default(),
                if sv.at_least.is_some() {
                    full(p.summary.target)
                } else {
                    String::new()
                },
                ch.map(|c| full(c.value)).unwrap_or_default(),
                ch.map(|c| full(c.lo)).unwrap_or_default(),
                ch.map(|c| full(c.hi)).unwrap_or_default(),
                if sv.at_least.is_some() {
                    full(sv.ready_share)
                } else {
                    String::new()
                },
                full(sv.units_up_mean),
                if sv.units > 0 {
                    full(sv.units_up_mean / sv.units as f64)
                } else {
                    String::new()
                },
                full(sv.plan_units_up),
                sv.plan_meets.map(|m| m.to_string()).unwrap_or_default(),
                full(sv.stockouts),
                full(sv.backorders),
                full(sv.laterals_given),
                full(sv.laterals_taken),
            ])
            .map_err(csv_err)?;
        }
    }
    finish(w)
}

/// `units-up.csv`: per reported policy, the mean share of the horizon with
/// exactly `units_up` units up, fleet-wide (`site` empty) and per site.
pub fn units_up_csv(v: &View<'_>) -> Result<Vec<u8>, ReportError> {
    let model = v.model;
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(["policy", "site", "units_up", "share"])
        .map_err(csv_err)?;
    let h = model.horizon;
    for p in &v.policies {
        let n = p.summary.trials().max(1) as f64;
        for (m, x) in p.summary.acc.units_up.iter().enumerate() {
            w.write_record([
                p.name().to_string(),
                String::new(),
                m.to_string(),
                full(x / (n * h)),
            ])
            .map_err(csv_err)?;
        }
        for (i, site) in model.sites.iter().enumerate() {
            let Some(sv) = p.site(model, i) else { continue };
            for (m, x) in sv.shares.iter().enumerate() {
                w.write_record([
                    p.name().to_string(),
                    site.name.clone(),
                    m.to_string(),
                    full(*x),
                ])
                .map_err(csv_err)?;
            }
        }
    }
    finish(w)
}

/// `stores.csv`: per reported policy, part type and store (each site, and
/// `depot`), the stock held and the mean-life plan's spares on their way
/// to that store.
pub fn stores_csv(v: &View<'_>) -> Result<Vec<u8>, ReportError> {
    let model = v.model;
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(["policy", "part", "store", "stock", "plan_pipeline"])
        .map_err(csv_err)?;
    for p in &v.policies {
        for (k, part) in model.parts.iter().enumerate() {
            let pp = &p.policy.parts[k];
            let plan = &p.plan.parts[k];
            for (i, site) in model.sites.iter().enumerate() {
                w.write_record([
                    p.name().to_string(),
                    part.name.clone(),
                    site.name.clone(),
                    pp.stock.site(i).to_string(),
                    plan.site_pipeline
                        .get(i)
                        .map(|x| full(*x))
                        .unwrap_or_default(),
                ])
                .map_err(csv_err)?;
            }
            if model.depot.is_some() {
                w.write_record([
                    p.name().to_string(),
                    part.name.clone(),
                    "depot".to_string(),
                    pp.stock.depot().to_string(),
                    plan.depot_pipeline.map(full).unwrap_or_default(),
                ])
                .map_err(csv_err)?;
            }
        }
    }
    finish(w)
}

/// `rotables.csv`: per reported policy and rotable, the repair loop.
pub fn rotables_csv(v: &View<'_>) -> Result<Vec<u8>, ReportError> {
    let model = v.model;
    let h = model.horizon;
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record([
        "policy",
        "part",
        "pool",
        "channels",
        "removals",
        "repairs",
        "condemned",
        "in_repair_mean",
        "plan_in_repair",
        "repair_mean_hours",
        "turnaround_mean_hours",
        "channel_wait_mean_hours",
        "repair_cost",
    ])
    .map_err(csv_err)?;
    for p in &v.policies {
        for (k, part) in model.parts.iter().enumerate() {
            let Some(r) = &part.repair else { continue };
            let m = &p.summary.acc.per_part[k];
            let sent = m.repair_entries.mean();
            let turnaround = m.mean_turnaround();
            w.write_record([
                p.name().to_string(),
                part.name.clone(),
                p.policy.parts[k].stock.total().to_string(),
                r.channels.map(|c| c.to_string()).unwrap_or_default(),
                full(sent + m.condemned.mean()),
                full(m.repairs.mean()),
                full(m.condemned.mean()),
                full(m.repair_hours.mean() / h),
                full(p.plan.parts[k].in_repair.unwrap_or(0.0)),
                full(r.time.mean()),
                full(turnaround),
                full(if sent > 0.0 {
                    (turnaround - r.time.mean()).max(0.0)
                } else {
                    0.0
                }),
                full(m.repair_planned.mean() + m.repair_failed.mean()),
            ])
            .map_err(csv_err)?;
        }
    }
    finish(w)
}
