//! `wearout check`: validate a scenario and summarise it.

use std::io::Write;
use std::path::Path;

use super::text::{pct2, table};
use super::{UserError, io};
use crate::averages::plan_on_averages;
use crate::scenario::load_or_demo;
use crate::text::{money, num};

pub fn run(file: Option<&Path>, out: &mut dyn Write) -> Result<(), UserError> {
    let loaded = load_or_demo(file)?;
    let (model, shown) = (&loaded.model, loaded.source.label());
    let mut s = String::new();
    s.push_str(&format!("{shown}: valid scenario `{}`\n", model.name));
    if !model.description.is_empty() {
        s.push_str(&format!("{}\n", model.description));
    }
    s.push_str(&format!(
        "\nHorizon {} h, target availability {}, downtime penalty {} per unit-hour, seed {}, {} trials by default\n",
        num(model.horizon, 0),
        pct2(model.target),
        money(model.downtime_penalty),
        model.seed,
        model.trials
    ));
    s.push_str("\nFleet\n");
    let mut rows = vec![vec![
        "unit type".to_string(),
        "count".into(),
        "positions".into(),
    ]];
    for g in &model.groups {
        let ut = &model.unit_types[g.unit_type];
        let pos: Vec<&str> = ut.positions.iter().map(|p| p.name.as_str()).collect();
        rows.push(vec![ut.name.clone(), g.count.to_string(), pos.join(", ")]);
    }
    s.push_str(&table(&rows));
    s.push_str("\nPart types\n");
    let mut rows = vec![vec![
        "part type".to_string(),
        "life".into(),
        "shape".into(),
        "mean life h".into(),
        "price".into(),
        "lead time mean h".into(),
        "safety".into(),
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
        let plan = plan_on_averages(model, p);
        rows.push(vec![
            p.name.clone(),
            pct2(plan.availability),
            money(plan.cost),
            p.describe(model),
        ]);
    }
    s.push_str(&table(&rows));
    if let Some(sp) = &model.search {
        s.push_str(&format!(
            "\nSearch space: {} policies\n",
            num(sp.size() as f64, 0)
        ));
    }
    s.push_str("\nA plan on averages has no chances: it treats every life and lead time as exactly its mean. `wearout evaluate` shows the spread.\n");
    write!(out, "{s}").map_err(io)
}
