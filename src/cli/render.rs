//! What the terminal shows: the tables of `check`, `evaluate` and
//! `frontier` (and of `merge`, which shows what the single run shows),
//! with the caution under every result.
//!
//! Owns: the terminal's wording and layout: padded columns, percentages;
//! numbers, money and the caution come from `wearout::text`, the short
//! rule names from `Rule::short`.
//! May use: the library's result types, `wearout::text`.

use wearout::frontier::FrontierResult;
use wearout::mean_life::mean_life_plan;
use wearout::model::{Measure, Model};
use wearout::recost::NoiseFlags;
use wearout::result::{CompareJson, DiffJson, EvaluateJson, FrontierJson, cost_measure_label};
use wearout::scenario::Loaded;
use wearout::summary::{AvailabilityFigures, Chance, MeanSe};
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
        "shape or sigma".into(),
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
            match p.life.shape_named() {
                ("shape", x) => num(x, 2),
                (name, x) => format!("{name} {}", num(x, 2)),
            },
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
    s.push_str("\nWhere each part type's life came from\n");
    for p in &model.parts {
        s.push_str(&format!("  {}: ", p.name));
        match &p.life_source {
            None => s.push_str("given as parameters in the scenario\n"),
            Some(src) => {
                s.push_str(&format!(
                    "fitted to {}{} ({} failures, {} suspensions): {}, {}\n",
                    src.file,
                    if src.records_part == p.name {
                        String::new()
                    } else {
                        format!(", part '{}'", src.records_part)
                    },
                    src.failures,
                    src.suspensions,
                    src.family,
                    src.how
                ));
                if let Some(c) = &src.caution {
                    s.push_str(&format!("    caution: {c}\n"));
                }
            }
        }
    }
    s.push_str("\nPolicies, with what a mean-life plan predicts\n");
    let mut rows = vec![vec![
        "policy".to_string(),
        "availability".into(),
        "total cost".into(),
        "rules and stock".into(),
    ]];
    for p in &model.policies {
        let plan = mean_life_plan(model, p);
        rows.push(vec![
            p.name.clone(),
            pct2(plan.availability),
            money(plan.cost),
            p.describe(model),
        ]);
    }
    s.push_str(&table(&rows));
    if model.has_rotables()
        && let Some(p) = model.policies.first()
    {
        let plan = mean_life_plan(model, p);
        s.push_str(&format!(
            "\nRotable pipelines by the mean-life plan (policy `{}`: removals x mean return time{})\n",
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
    s.push_str("\nA mean-life plan has no chances: it treats every life and lead time as exactly its mean. `wearout evaluate` shows the spread.\n");
    s
}

/// The readable table of an evaluation.
pub fn evaluate(model: &Model, j: &EvaluateJson) -> String {
    let cur = currency(&model.currency, " (", ")");
    let mut s = String::new();
    s.push_str(&format!(
        "Scenario `{}`, policy `{}` ({}): {} trials (seed {}), {} units over {} h{}\n\n",
        j.scenario,
        j.policy,
        j.policy_code,
        num(j.trials as f64, 0),
        j.seed,
        j.units,
        num(j.horizon_hours, 0),
        if model.draws_life_parameters() {
            "; life parameters drawn per trial from their fits"
        } else if model.parameter_uncertainty {
            "; parameter uncertainty asked for, but no part type's life is fitted to records, so every trial used the scenario's life parameters"
        } else {
            ""
        }
    ));
    let verdict = if j.mean_life_plan.meets_target {
        "target met for certain"
    } else {
        "target missed for certain"
    };
    let spread = |a: &AvailabilityFigures| {
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
    let chance_row = |target: f64, c: &Chance| {
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
                "mean-life plan says".into(),
                format!(
                    "availability {} ({verdict})",
                    pct2(j.mean_life_plan.availability)
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
            "mean-life plan says".into(),
            format!("{} ({verdict})", pct2(j.mean_life_plan.availability)),
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
    let row = |name: &str, m: &MeanSe| {
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
            "mean-life plan: total".into(),
            money(j.mean_life_plan.cost),
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
    s.push_str(&super::render_money::stores(j));
    s.push_str(&super::render_money::evaluate(model, j));
    cautioned(s)
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

/// The readable frontier table.
pub fn frontier(model: &Model, r: &FrontierResult, j: &FrontierJson) -> String {
    let cur = currency(&model.currency, " ", "");
    let mut s = String::new();
    let (figure, column) = frontier_figure(model);
    s.push_str(&format!(
        "Scenario `{}`: {} units over {} h, target {figure} {}\n",
        model.name,
        model.units.len(),
        num(model.horizon, 0),
        pct(r.target)
    ));
    s.push_str(&format!(
        "Cost measure: {}{cur} over the horizon. Chance = share of trials with {figure} >= {} (Wilson 95 % interval).\n\n",
        cost_measure_label(r.cost),
        pct(r.target)
    ));
    let mut header = vec![
        "policy".to_string(),
        "code".into(),
        "chance [95 % interval]".into(),
        "cost ± se".into(),
        "total with penalty".into(),
        column.into(),
        "stock capital".into(),
    ];
    for p in &model.parts {
        header.push(p.name.clone());
    }
    header.push("vs previous".into());
    let mut rows = vec![header];
    for (pt, pj) in r.points.iter().zip(&j.policies) {
        let c = &pt.costed;
        let a = match model.measure() {
            Measure::Availability => c.summary.availability(),
            Measure::Readiness => c.summary.readiness(),
        };
        let mut row = vec![
            c.policy.name.clone(),
            pj.code.clone(),
            format!(
                "{} [{}, {}]",
                pct(c.chance.value),
                pct(c.chance.lo),
                pct(c.chance.hi)
            ),
            format!("{} ± {}", money(c.cost.mean), money(c.cost.se)),
            money(pj.total_with_penalty),
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
    s.push_str("Code: six characters from what the policy sets, the same in every run of this scenario (F-numbers are not). Total with penalty: mean spend without capital plus the downtime penalty.\n");
    if let Some(ct) = &j.cheapest_on_total {
        s.push_str(&format!("\n{}\n", ct.words));
    }
    if !j.named_policies.is_empty() {
        s.push_str(&format!(
            "\nThe scenario's named policies, re-costed on the same {} fresh trials\n",
            num(r.validate_trials as f64, 0)
        ));
        let mut rows = vec![vec![
            "policy".to_string(),
            "code".into(),
            "chance [95 % interval]".into(),
            "cost ± se".into(),
            "total with penalty".into(),
            "standing".into(),
        ]];
        for n in &j.named_policies {
            rows.push(vec![
                n.name.clone(),
                n.code.clone(),
                format!(
                    "{} [{}, {}]",
                    pct(n.chance.value),
                    pct(n.chance.lo),
                    pct(n.chance.hi)
                ),
                format!("{} ± {}", money(n.cost.mean), money(n.cost.se)),
                money(n.total_with_penalty),
                match (&n.same_as, &n.dominated_by) {
                    (Some(f), _) => format!("= {f}"),
                    (None, Some(f)) => format!("dominated by {f}"),
                    (None, None) => "not dominated".into(),
                },
            ]);
        }
        s.push_str(&table(&rows));
        for n in &j.named_policies {
            s.push_str(&format!("- {}\n", n.words));
        }
    }
    if !j.bounds_reached.is_empty() {
        s.push_str("\nSearch bounds reached\n");
        for b in &j.bounds_reached {
            s.push_str(&format!("- {}\n", b.words));
        }
    }
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
        s.push_str(&super::render_money::frontier(model, j));
        return cautioned(s);
    }
    let how = if !j.exhaustive && (model.has_sites() || model.ready.is_some()) {
        format!(
            "{} policies scored on the two-echelon model",
            num(st.surrogate_scored as f64, 0)
        )
    } else {
        format!(
            "{} single-part screening runs, {} policies scored on the surrogate, {} linear programs",
            st.screening_runs,
            num(st.surrogate_scored as f64, 0),
            st.lps
        )
    };
    s.push_str(&format!(
        "\nSearched {} of {} policies{} in full on {} search trials ({how}); re-costed {} on {} fresh trials. Took {:.1} s (screening {:.1} s, search {:.1} s, validation {:.1} s).\n",
        num(st.evaluated as f64, 0),
        num(r.space_size as f64, 0),
        if j.exhaustive { " (exhaustive)" } else { "" },
        num(r.search_trials as f64, 0),
        j.recosted.why,
        num(r.validate_trials as f64, 0),
        j.seconds,
        st.seconds_screening,
        st.seconds_search,
        st.seconds_validation
    ));
    s.push_str(&super::render_money::frontier(model, j));
    cautioned(s)
}

/// The per-trial figure the frontier's chance is of, for its header line,
/// and its column's title: availability, or with a ready-units target the
/// readiness (the share of the horizon with every site at its count).
fn frontier_figure(model: &Model) -> (&'static str, &'static str) {
    match model.measure() {
        Measure::Availability => ("availability", "avail P10/P50/P90"),
        Measure::Readiness => ("readiness", "ready P10/P50/P90"),
    }
}

/// The table of `evaluate --policy A --policy B ...`: each policy's
/// figures, then each one's paired differences from the first.
pub fn compare(model: &Model, j: &CompareJson) -> String {
    let cur = currency(&model.currency, " (", ")");
    let what = if j.target_measure == "readiness" {
        "readiness"
    } else {
        "availability"
    };
    let mut s = format!(
        "Scenario `{}`: {} policies on the same {} trials (seed {}), target {what} {}\n\n",
        j.scenario,
        j.policies.len(),
        num(j.trials as f64, 0),
        j.seed,
        pct(j.target)
    );
    let mut rows = vec![vec![
        "policy".to_string(),
        "code".into(),
        "chance [95 % interval]".into(),
        "availability mean ± se".into(),
        format!("total with penalty{cur} ± se"),
        format!("spend{cur} ± se"),
    ]];
    for p in &j.policies {
        rows.push(vec![
            p.name.clone(),
            p.code.clone(),
            format!(
                "{} [{}, {}]",
                pct(p.chance.value),
                pct(p.chance.lo),
                pct(p.chance.hi)
            ),
            format!(
                "{} ± {}",
                pct2(p.availability.mean),
                pct2(p.availability.se)
            ),
            format!("{} ± {}", money(p.total.mean), money(p.total.se)),
            format!("{} ± {}", money(p.spend.mean), money(p.spend.se)),
        ]);
    }
    s.push_str(&table(&rows));
    let first = &j.policies[0].name;
    s.push_str(&format!(
        "\nPaired differences from `{first}` (this policy minus `{first}`, trial by trial), ± the standard error of the difference\n"
    ));
    let mut rows = vec![vec![
        "policy".to_string(),
        "chance".into(),
        "availability".into(),
        format!("total with penalty{cur}"),
        format!("spend{cur}"),
    ]];
    let cell = |d: &DiffJson, f: &dyn Fn(f64) -> String| {
        format!(
            "{}{} ± {}{}",
            if d.diff.mean > 0.0 { "+" } else { "" },
            f(d.diff.mean),
            f(d.diff.se),
            if d.within_noise { " (noise)" } else { "" }
        )
    };
    let points = |x: f64| format!("{:.1} pt", 100.0 * x);
    let points2 = |x: f64| format!("{:.2} pt", 100.0 * x);
    for d in &j.differences {
        rows.push(vec![
            d.policy.clone(),
            cell(&d.chance, &points),
            cell(&d.availability, &points2),
            cell(&d.total, &money),
            cell(&d.spend, &money),
        ]);
    }
    s.push_str(&table(&rows));
    s.push_str("\n(noise): the difference is within two standard errors of the paired difference: these trials cannot tell the two policies apart on that figure. pt: percentage points.\n");
    for p in &j.policies {
        s.push_str(&format!("{} ({}): {}\n", p.name, p.code, p.describe));
    }
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

/// Table rows padded to their widest cell: the first column left-aligned,
/// the others right-aligned (also the money and stores tables').
pub(super) fn table(rows: &[Vec<String>]) -> String {
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
