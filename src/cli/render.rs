//! What the terminal shows: the tables of `check`, `evaluate` and
//! `frontier` (and of `merge`, which shows what the single run shows),
//! with the caution under every result.
//!
//! Owns: the terminal's wording and layout: padded columns, percentages;
//! numbers, money and the caution come from `wearout::text`, the short
//! rule names from `Rule::short`.
//! May use: the library's result types, `wearout::text`.

use wearout::averages::plan_on_averages;
use wearout::frontier::FrontierResult;
use wearout::model::Model;
use wearout::recost::NoiseFlags;
use wearout::result::{EvaluateJson, FrontierJson, cost_measure_label};
use wearout::scenario::Loaded;
use wearout::summary::MeanSe;
use wearout::text::{CAUTION, currency, money, num};

/// A result's text with the caution under it.
fn cautioned(mut s: String) -> String {
    s.push_str(&format!("\n{CAUTION}\n"));
    s
}

/// The summary `wearout check` prints of a valid scenario.
pub fn check(loaded: &Loaded) -> String {
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
    s
}

/// The readable table of an evaluation.
pub fn evaluate(model: &Model, j: &EvaluateJson) -> String {
    let cur = currency(&model.currency, " (", ")");
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
    let row = |name: &str, m: &MeanSe| {
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
    cautioned(s)
}

/// The readable frontier table.
pub fn frontier(model: &Model, r: &FrontierResult, j: &FrontierJson) -> String {
    let cur = currency(&model.currency, " ", "");
    let mut s = String::new();
    s.push_str(&format!(
        "Scenario `{}`: {} units over {} h, target availability {}\n",
        model.name,
        model.units.len(),
        num(model.horizon, 0),
        pct(r.target)
    ));
    s.push_str(&format!(
        "Cost measure: {}{cur} over the horizon. Chance = share of trials with availability >= {} (Wilson 95 % interval).\n\n",
        cost_measure_label(r.cost),
        pct(r.target)
    ));
    let mut header = vec![
        "policy".to_string(),
        "chance [95 % interval]".into(),
        "cost ± se".into(),
        "avail P10/P50/P90".into(),
        "stock capital".into(),
    ];
    for p in &model.parts {
        header.push(p.name.clone());
    }
    header.push("vs previous".into());
    let mut rows = vec![header];
    for pt in &r.points {
        let c = &pt.costed;
        let a = c.summary.availability();
        let mut row = vec![
            c.policy.name.clone(),
            format!(
                "{} [{}, {}]",
                pct(c.chance.value),
                pct(c.chance.lo),
                pct(c.chance.hi)
            ),
            format!("{} ± {}", money(c.cost.mean), money(c.cost.se)),
            format!(
                "{:.1}/{:.1}/{:.1} %",
                100.0 * a.p10,
                100.0 * a.p50,
                100.0 * a.p90
            ),
            money(c.summary.initial_stock_capital),
        ];
        for pp in &c.policy.parts {
            row.push(format!("{} S{}", pp.rule.short(), pp.stock));
        }
        row.push(pt.noise.as_ref().map_or("-", NoiseFlags::words).to_string());
        rows.push(row);
    }
    s.push_str(&table(&rows));
    s.push_str("\nRules: RTF run to failure, A<h> age replacement at h operating hours, B<h> block replacement every h unit operating hours; S<n> base-stock level.\n");
    s.push_str("\"same within noise\": the paired difference from the row above, on the same trials, is within two standard errors; do not pay for it.\n");
    let st = &r.stats;
    if r.search_trials == 0 {
        // `--policies`: a fixed list re-costed, no search.
        s.push_str(&format!(
            "\nRe-costed the {} given policies on {} validation trials; {} of them are non-dominated. Took {:.1} s.\n",
            st.recosted,
            num(r.validate_trials as f64, 0),
            r.points.len(),
            st.seconds_validation
        ));
        return cautioned(s);
    }
    s.push_str(&format!(
        "\nSearched {} of {} policies{} in full on {} search trials ({} single-part screening runs, {} policies scored on the surrogate, {} linear programs); re-costed {} of the {} search-frontier policies on {} fresh trials. Took {:.1} s (screening {:.1} s, search {:.1} s, validation {:.1} s).\n",
        num(st.evaluated as f64, 0),
        num(r.space_size as f64, 0),
        if j.exhaustive { " (exhaustive)" } else { "" },
        num(r.search_trials as f64, 0),
        st.screening_runs,
        num(st.surrogate_scored as f64, 0),
        st.lps,
        st.recosted,
        r.search_frontier.len(),
        num(r.validate_trials as f64, 0),
        j.seconds,
        st.seconds_screening,
        st.seconds_search,
        st.seconds_validation
    ));
    cautioned(s)
}

/// A share as a percentage with one decimal: 91.4 %.
fn pct(x: f64) -> String {
    format!("{:.1} %", 100.0 * x)
}

/// A share as a percentage with two decimals.
fn pct2(x: f64) -> String {
    format!("{:.2} %", 100.0 * x)
}

/// Left-aligned table rows with columns padded to their widest cell.
fn table(rows: &[Vec<String>]) -> String {
    let cols = rows.iter().map(Vec::len).max().unwrap_or(0);
    let mut width = vec![0; cols];
    for r in rows {
        for (i, c) in r.iter().enumerate() {
            width[i] = width[i].max(c.chars().count());
        }
    }
    let mut out = String::new();
    for r in rows {
        let mut line = String::new();
        for (i, c) in r.iter().enumerate() {
            let pad = width[i] - c.chars().count();
            if i == 0 {
                line.push_str(c);
                line.push_str(&" ".repeat(pad));
            } else {
                line.push_str("  ");
                line.push_str(&" ".repeat(pad));
                line.push_str(c);
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_line_up_and_results_carry_the_caution() {
        let t = table(&[
            vec!["policy".into(), "cost".into()],
            vec!["F1".into(), "1,200".into()],
        ]);
        assert_eq!(t, "policy   cost\nF1      1,200\n");
        assert_eq!(pct(0.9137), "91.4 %");
        assert_eq!(pct2(0.9137), "91.37 %");
        assert!(cautioned("table\n".into()).ends_with(&format!("\n{CAUTION}\n")));
    }
}
