//! `wearout evaluate`: cost one policy on shared trials.

use std::io::Write;
use std::path::Path;

use super::progress::Bar;
use super::text::{money, num, pct, pct2, table};
use super::{RunOpts, UserError, check_target, io};
use crate::averages::plan_on_averages;
use crate::model::Model;
use crate::result::EvaluateJson;
use crate::run::evaluate_counting_units;
use crate::scenario::load_or_demo;

/// The caution printed with every result.
pub const CAUTION: &str = "Decision support only: these figures come from a model of your fleet. They do not replace \
regulator-approved maintenance programmes, manufacturers' hard life limits, local codes or the judgement of licensed \
engineers. Safety-critical parts are never planned to run to failure.";

pub fn run(
    file: Option<&Path>,
    policy: Option<&str>,
    trials: Option<u64>,
    opts: &RunOpts,
    report: Option<Option<&Path>>,
    out: &mut dyn Write,
) -> Result<(), UserError> {
    let (mut model, _shown) = load_or_demo(file)?;
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
        return super::shards::evaluate_shard(file, &model, &pol, trials, target, opts, out);
    }
    super::shards::guard_evaluate(&model, &pol, trials)?;
    let bar = Bar::new("evaluate", trials);
    let summary = evaluate_counting_units(&model, &pol, 0..trials, target, &bar)
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
    let verdict = if j.plan_on_averages.meets_target {
        "target met for certain"
    } else {
        "target missed for certain"
    };
    let spread = |a: &crate::summary::AvailabilityFigures| {
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
        ]
    };
    let chance_row = |target: f64, c: &crate::summary::Chance| {
        vec![
            format!("chance of at least {}", pct(target)),
            format!(
                "{} (95 % interval {} to {})",
                pct(c.value),
                pct(c.lo),
                pct(c.hi)
            ),
        ]
    };
    if let Some(r) = &j.readiness {
        // In site order (the JSON map is sorted by name).
        let counts: Vec<String> = model
            .sites
            .iter()
            .filter_map(|site| r.at_least.get(&site.name).map(|k| (site, k)))
            .map(|(site, k)| {
                if model.has_sites() {
                    format!("{} at least {k} up", site.name)
                } else {
                    format!("at least {k} units up")
                }
            })
            .collect();
        s.push_str(&format!(
            "Ready units: the target is {} at once, for {} of the horizon\n",
            counts.join(", "),
            pct(r.share)
        ));
        let f = &r.figures;
        s.push_str(&table(&[
            vec![
                "readiness (share of the horizon ready), mean".into(),
                format!("{} ± {}", pct2(f.mean), pct2(f.se)),
            ],
            spread(f),
            chance_row(r.share, &r.chance),
            vec![
                "plan on averages says".into(),
                format!(
                    "availability {} ({verdict})",
                    pct2(j.plan_on_averages.availability)
                ),
            ],
        ]));
        s.push('\n');
    }
    let a = &j.availability;
    s.push_str("Fleet availability\n");
    let mut rows = vec![
        vec!["mean".into(), format!("{} ± {}", pct2(a.mean), pct2(a.se))],
        spread(a),
    ];
    if j.readiness.is_none() {
        rows.push(chance_row(j.target, &j.chance));
        rows.push(vec![
            "plan on averages says".into(),
            format!("{} ({verdict})", pct2(j.plan_on_averages.availability)),
        ]);
    } else if let (Some(t), Some(c)) = (j.availability_target, &j.availability_chance) {
        rows.push(chance_row(t, c));
    }
    s.push_str(&table(&rows));
    if !j.units_up.is_empty() {
        s.push_str("\nUnits up: share of the horizon with exactly this many units up\n");
        s.push_str(&table(&units_up_rows(&j.units_up)));
    }
    if !j.sites.is_empty() {
        s.push_str("\nPer site (means per trial)\n");
        let mut rows = vec![vec![
            "site".to_string(),
            "units".into(),
            "availability".into(),
            "ready share".into(),
            "store empty".into(),
            "lateral given / taken".into(),
            "most often up".into(),
        ]];
        for site in &j.sites {
            let mode = site
                .units_up
                .iter()
                .enumerate()
                .max_by(|a, b| a.1.total_cmp(b.1))
                .map_or(String::new(), |(m, x)| format!("{m} ({})", pct(*x)));
            rows.push(vec![
                site.name.clone(),
                site.units.to_string(),
                pct2(site.availability),
                match (site.at_least, site.ready_share) {
                    (Some(k), Some(r)) => format!("{} (at least {k})", pct2(r.mean)),
                    _ => "-".into(),
                },
                num(site.stockouts, 2),
                format!(
                    "{} / {}",
                    num(site.laterals_given, 2),
                    num(site.laterals_taken, 2)
                ),
                mode,
            ]);
        }
        s.push_str(&table(&rows));
    }
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
    let network = j.per_part.iter().any(|p| p.pipeline.is_some()) || !j.sites.is_empty();
    let mut cost_rows = vec![
        row("parts bought", &c.parts),
        row("planned labour", &c.planned_labour),
        row("unplanned labour", &c.unplanned_labour),
    ];
    if network {
        cost_rows.push(row("repair, planned removals", &c.repair_planned));
        cost_rows.push(row("repair, failed parts", &c.repair_failed));
        cost_rows.push(row("transport", &c.transport));
    }
    cost_rows.extend([
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
    ]);
    s.push_str(&table(&cost_rows));
    s.push_str("\nPer trial (means)\n");
    let d = &j.down_hours;
    let mut count_rows = vec![
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
    ];
    if network {
        for (name, x) in [
            ("repairs started", j.counts.repairs),
            ("removed parts condemned", j.counts.condemned),
            ("requests to the depot", j.counts.requests),
            ("shipments from the depot", j.counts.shipments),
            ("lateral transfers", j.counts.laterals),
        ] {
            count_rows.push(vec![name.into(), num(x, 2)]);
        }
    }
    s.push_str(&table(&count_rows));
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
    s.push_str("\nStores and repair shops (means over the horizon)\n");
    let mut rows = vec![vec![
        "part type".to_string(),
        "stock".into(),
        "waiting for a spare".into(),
        "spares on hand".into(),
        "in repair".into(),
        "turnaround h".into(),
        "repairs".into(),
        "condemned".into(),
    ]];
    for p in &j.per_part {
        // Sites in their order, then the depot.
        let stock = match &p.stock_at {
            Some(at) => model
                .sites
                .iter()
                .map(|site| site.name.as_str())
                .chain(std::iter::once("depot"))
                .filter_map(|k| at.get(k).map(|v| format!("{k} {v}")))
                .collect::<Vec<_>>()
                .join(", "),
            None => p.stock.to_string(),
        };
        let (in_repair, turnaround, repairs, condemned) = match &p.pipeline {
            Some(q) => (
                num(q.in_repair_mean, 2),
                num(q.turnaround_mean_hours, 0),
                num(q.repairs, 2),
                num(q.condemned, 2),
            ),
            None => ("-".into(), "-".into(), "-".into(), "-".into()),
        };
        rows.push(vec![
            p.name.clone(),
            stock,
            num(p.backorders_mean, 3),
            num(p.on_hand_mean, 2),
            in_repair,
            turnaround,
            repairs,
            condemned,
        ]);
    }
    s.push_str(&table(&rows));
    s.push_str(&format!("\n{CAUTION}\n"));
    s
}

/// The units-up shares as rows, from all units up downwards, until all but
/// a thousandth of the horizon is shown; the rest in one row.
fn units_up_rows(shares: &[f64]) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    let mut shown = 0.0;
    for m in (0..shares.len()).rev() {
        if shown >= 0.999 {
            rows.push(vec![
                format!("{m} or fewer"),
                pct2(shares[..=m].iter().sum::<f64>()),
            ]);
            break;
        }
        rows.push(vec![format!("{m}"), pct2(shares[m])]);
        shown += shares[m];
    }
    rows
}
