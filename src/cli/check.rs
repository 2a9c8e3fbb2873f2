//! `wearout check`: validate a scenario and summarise it.

use std::io::Write;
use std::path::Path;

use super::text::{money, num, pct2, table};
use super::{UserError, io};
use crate::averages::plan_on_averages;
use crate::scenario::load_or_demo;

pub fn run(file: Option<&Path>, out: &mut dyn Write) -> Result<(), UserError> {
    let (model, shown) = load_or_demo(file)?;
    let mut s = String::new();
    s.push_str(&format!("{shown}: valid scenario `{}`\n", model.name));
    if !model.description.is_empty() {
        s.push_str(&format!("{}\n", model.description));
    }
    let target = match &model.ready {
        Some(r) => format!(
            "ready-units target: {} at once, for {} of the horizon{}",
            model
                .sites
                .iter()
                .zip(&r.at_least)
                .map(|(site, k)| if model.has_sites() {
                    format!("{} at least {k} up", site.name)
                } else {
                    format!("at least {k} units up")
                })
                .collect::<Vec<_>>()
                .join(", "),
            pct2(model.target),
            model.availability_target.map_or(String::new(), |a| format!(
                " (availability target {} reported beside)",
                pct2(a)
            ))
        ),
        None => format!("target availability {}", pct2(model.target)),
    };
    s.push_str(&format!(
        "\nHorizon {} h, {target}, downtime penalty {} per unit-hour, seed {}, {} trials by default\n",
        num(model.horizon, 0),
        money(model.downtime_penalty),
        model.seed,
        model.trials
    ));
    s.push_str("\nFleet\n");
    let sites = model.has_sites();
    let mut head = vec!["unit type".to_string(), "count".into()];
    if sites {
        head.push("site".into());
    }
    head.push("positions".into());
    let mut rows = vec![head];
    for g in &model.groups {
        let ut = &model.unit_types[g.unit_type];
        let pos: Vec<&str> = ut.positions.iter().map(|p| p.name.as_str()).collect();
        let mut row = vec![ut.name.clone(), g.count.to_string()];
        if sites {
            row.push(model.sites[g.site].name.clone());
        }
        row.push(pos.join(", "));
        rows.push(row);
    }
    s.push_str(&table(&rows));
    if sites {
        s.push_str(&format!(
            "\nSites{}\n",
            if model.depot.is_some() {
                ", each resupplied by the depot"
            } else {
                ", each resupplied directly (no depot)"
            }
        ));
        let units = model.site_units();
        let mut head = vec!["site".to_string(), "units".into()];
        if model.ready.is_some() {
            head.push("ready count".into());
        }
        if model.depot.is_some() {
            head.push("transport from depot, mean h".into());
        }
        let mut rows = vec![head];
        for (i, site) in model.sites.iter().enumerate() {
            let mut row = vec![site.name.clone(), units[i].to_string()];
            if let Some(r) = &model.ready {
                row.push(r.at_least[i].to_string());
            }
            if let Some(d) = &model.depot {
                row.push(num(d.transport[i].mean(), 1));
            }
            rows.push(row);
        }
        s.push_str(&table(&rows));
        if let Some(d) = &model.depot
            && d.cost_per_shipment > 0.0
        {
            s.push_str(&format!(
                "Cost per shipment: {}\n",
                money(d.cost_per_shipment)
            ));
        }
        match &model.lateral {
            Some(l) => s.push_str(&format!(
                "Lateral supply between sites: transfer mean {} h{}\n",
                num(l.transfer.mean(), 1),
                if l.cost_per_transfer > 0.0 {
                    format!(", {} per transfer", money(l.cost_per_transfer))
                } else {
                    String::new()
                }
            )),
            None => s.push_str("No lateral supply between sites\n"),
        }
    }
    s.push_str("\nPart types\n");
    let mut rows = vec![vec![
        "part type".to_string(),
        "life".into(),
        "shape".into(),
        "mean life h".into(),
        "price".into(),
        "lead time mean h".into(),
        "safety".into(),
        "repair".into(),
    ]];
    for p in &model.parts {
        rows.push(vec![
            p.name.clone(),
            p.life.family().into(),
            num(p.life.shape_figure(), 2),
            num(p.life.mean(), 0),
            money(p.price),
            num(p.lead_time.mean(), 0),
            p.hard_limit
                .map_or(String::new(), |l| format!("hard limit {} h", num(l, 0))),
            p.repair.as_ref().map_or("consumable".to_string(), |r| {
                format!(
                    "rotable: repair mean {} h, cost {} / {}, condemned {} / {}, {}",
                    num(r.time.mean(), 0),
                    money(r.cost_planned),
                    money(r.cost_failed),
                    pct2(r.condemn_planned),
                    pct2(r.condemn_failed),
                    r.channels
                        .map_or("unlimited channels".to_string(), |c| format!(
                            "{c} channels"
                        ))
                )
            }),
        ]);
    }
    s.push_str(&table(&rows));
    s.push_str("\nPolicies, with what a plan on averages predicts\n");
    let mut rows = vec![vec![
        "policy".to_string(),
        "availability".into(),
        "total cost".into(),
        "rules and stock".into(),
    ]];
    for p in &model.policies {
        let plan = plan_on_averages(&model, p);
        rows.push(vec![
            p.name.clone(),
            pct2(plan.availability),
            money(plan.cost),
            p.describe(&model),
        ]);
    }
    s.push_str(&table(&rows));
    if model.has_rotables()
        && let Some(p) = model.policies.first()
    {
        let plan = plan_on_averages(&model, p);
        s.push_str(&format!(
            "\nRotable pipelines by the plan on averages (policy `{}`: removals x mean return time{})\n",
            p.name,
            if model.depot.is_some() {
                " + transport"
            } else {
                ""
            }
        ));
        let mut rows = vec![vec![
            "part type".to_string(),
            "removals per 1,000 h".into(),
            "return h".into(),
            "parts on their way back".into(),
            "spares held".into(),
        ]];
        for ((pt, pp), pl) in model.parts.iter().zip(&p.parts).zip(&plan.parts) {
            if pt.is_repairable() {
                rows.push(vec![
                    pt.name.clone(),
                    num(pl.demand_per_hour * 1000.0, 2),
                    num(pl.resupply_hours, 0),
                    num(pl.pipeline, 2),
                    pp.stock.total().to_string(),
                ]);
            }
        }
        s.push_str(&table(&rows));
    }
    if let Some(sp) = &model.search {
        s.push_str(&format!(
            "\nSearch space: {} policies\n",
            num(sp.size() as f64, 0)
        ));
    }
    s.push_str("\nA plan on averages has no chances: it treats every life and lead time as exactly its mean. `wearout evaluate` shows the spread.\n");
    write!(out, "{s}").map_err(io)
}
