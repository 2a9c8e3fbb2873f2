//! `wearout evaluate`: cost one policy on shared trials.

use std::io::Write;
use std::path::Path;

use super::progress::Bar;
use super::text::{pct, pct2, table};
use super::{RunOpts, UserError, check_target, io};
use crate::averages::plan_on_averages;
use crate::model::Model;
use crate::result::EvaluateJson;
use crate::run::evaluate;
use crate::scenario::load_or_demo;
use crate::text::{CAUTION, money, num};

pub fn run(
    file: Option<&Path>,
    policy: Option<&str>,
    trials: Option<u64>,
    opts: &RunOpts,
    report: Option<Option<&Path>>,
    out: &mut dyn Write,
) -> Result<(), UserError> {
    let loaded = load_or_demo(file)?;
    let mut model = loaded.model;
    opts.apply(&mut model);
    let target = check_target(opts.target, model.target)?;
    let trials = trials.unwrap_or(model.trials);
    if trials == 0 {
        return Err(UserError("--trials must be at least 1".into()));
    }
    let names: Vec<&str> = model.policies.iter().map(|p| p.name.as_str()).collect();
    let pol = match policy {
        Some(name) => model.policy(name).ok_or_else(|| {
            let hint = crate::scenario::suggest(name, names.iter().copied())
                .map(|c| format!(" (did you mean `{c}`?)"))
                .unwrap_or_default();
            UserError(format!(
                "the scenario has no policy named `{name}`{hint}; policies: {}",
                if names.is_empty() {
                    "(none)".to_string()
                } else {
                    names.join(", ")
                }
            ))
        })?,
        None => model.policies.first().ok_or_else(|| {
            UserError("the scenario names no policies; add a [policies.NAME] table".into())
        })?,
    }
    .clone();
    if super::shards::wants_shard(opts) {
        if report.is_some() {
            return Err(UserError(
                "--report does not go with --shard/--out: pass --report to `wearout merge`".into(),
            ));
        }
        return super::shards::evaluate_shard(
            &loaded.source,
            &model,
            &pol,
            trials,
            target,
            opts,
            out,
        );
    }
    super::shards::guard_evaluate(&model, &pol, trials)?;
    let bar = Bar::new("evaluate", trials);
    let summary = evaluate(&model, &pol, 0..trials, target, &bar)
        .ok_or_else(|| UserError("interrupted".into()))?;
    bar.finish();
    let plan = plan_on_averages(&model, &pol);
    let json = EvaluateJson::new(&model, &summary, &plan);
    if opts.json {
        let s = serde_json::to_string_pretty(&json).map_err(|e| UserError(e.to_string()))?;
        writeln!(out, "{s}").map_err(io)?;
    } else {
        write!(out, "{}", render(&model, &json)).map_err(io)?;
    }
    super::write_report(report, &model.name, |progress| {
        crate::report::evaluate_report(&model, &summary, &json, progress)
    })
}

/// The readable table of an evaluation.
pub fn render(model: &Model, j: &EvaluateJson) -> String {
    let cur = if model.currency.is_empty() {
        String::new()
    } else {
        format!(" ({})", model.currency)
    };
    let mut s = String::new();
    s.push_str(&format!(
        "Scenario `{}`, policy `{}`: {} trials (seed {}), {} units over {} h{}\n\n",
        j.scenario,
        j.policy,
        num(j.trials as f64, 0),
        j.seed,
        j.units,
        num(j.horizon_hours, 0),
        if j.parameter_uncertainty {
            "; life parameters drawn per trial from their fits"
        } else {
            ""
        }
    ));
    let a = &j.availability;
    s.push_str("Fleet availability\n");
    s.push_str(&table(&[
        vec!["mean".into(), format!("{} ± {}", pct2(a.mean), pct2(a.se))],
        vec![
            "P5 / P10 / P50 / P90 / P95".into(),
            format!(
                "{} / {} / {} / {} / {}",
                pct2(a.p05),
                pct2(a.p10),
                pct2(a.p50),
                pct2(a.p90),
                pct2(a.p95)
            ),
        ],
        vec![
            format!("chance of at least {}", pct(j.target)),
            format!(
                "{} (95 % interval {} to {})",
                pct(j.chance.value),
                pct(j.chance.lo),
                pct(j.chance.hi)
            ),
        ],
        vec![
            "plan on averages says".into(),
            format!(
                "{} ({})",
                pct2(j.plan_on_averages.availability),
                if j.plan_on_averages.meets_target {
                    "target met for certain"
                } else {
                    "target missed for certain"
                }
            ),
        ],
    ]));
    s.push_str(&format!(
        "\nCost over the horizon{cur}, mean ± standard error\n"
    ));
    let c = &j.cost;
    let row = |name: &str, m: &crate::summary::MeanSe| {
        vec![
            name.to_string(),
            money(m.mean),
            format!("± {}", money(m.se)),
        ]
    };
    s.push_str(&table(&[
        row("parts bought", &c.parts),
        row("planned labour", &c.planned_labour),
        row("unplanned labour", &c.unplanned_labour),
        row("holding", &c.holding),
        row("downtime penalty", &c.downtime),
        row("total", &c.total),
        vec![
            "plan on averages: total".into(),
            money(j.plan_on_averages.cost),
            String::new(),
        ],
        vec![
            "initial stock capital (apart)".into(),
            money(j.initial_stock_capital),
            String::new(),
        ],
        row("spend (no penalty, with capital)", &c.spend),
    ]));
    s.push_str("\nPer trial (means)\n");
    let d = &j.down_hours;
    s.push_str(&table(&[
        vec!["failures".into(), num(j.counts.failures, 2)],
        vec!["planned replacements".into(), num(j.counts.planned, 2)],
        vec![
            "demands finding the store empty".into(),
            num(j.counts.stockouts, 2),
        ],
        vec!["resupply orders".into(), num(j.counts.orders, 2)],
        vec![
            "unit-hours down waiting for a spare".into(),
            num(d.waiting_for_spare.mean, 1),
        ],
        vec![
            "unit-hours down in unplanned work".into(),
            num(d.unplanned_work.mean, 1),
        ],
        vec![
            "unit-hours down in planned work".into(),
            num(d.planned_work.mean, 1),
        ],
    ]));
    s.push_str("\nPer part type (means per trial)\n");
    let mut rows = vec![vec![
        "part type".to_string(),
        "rule".into(),
        "stock".into(),
        "failures".into(),
        "planned".into(),
        "store empty".into(),
        "down h".into(),
        format!("cost{cur}"),
    ]];
    for p in &j.per_part {
        let rule = match p.interval {
            Some(t) => format!("{} {} h", p.rule, num(t, 0)),
            None => p.rule.replace('_', " "),
        };
        rows.push(vec![
            p.name.clone(),
            rule,
            p.stock.to_string(),
            num(p.failures, 2),
            num(p.planned, 2),
            num(p.stockouts, 2),
            num(p.down_hours, 0),
            money(p.cost.total),
        ]);
    }
    s.push_str(&table(&rows));
    s.push_str(&format!("\n{CAUTION}\n"));
    s
}
