//! The report's words, generated from the numbers: the short findings,
//! the cheapest policy for each chance level, what each step up the
//! frontier costs and why, where the mean-life plan is wrong, what the
//! figures assume and the cautions.
//!
//! Owns: every sentence and table of `index.html` and `summary.md`.
//! May use: `super::view`, `super::doc`, `model`, `recost`, `result`,
//! `text`. No simulation, no I/O.

use super::doc::{Align, Block, Figure, Span, b, c, t};
use super::view::{
    Kind, LEVELS, PolicyView, View, chance_pct, chance_with_interval, count_words, display, hours,
    lead_time_words, money_short, pct_trim, pct1, rule_short, rule_words, trim,
};
use crate::model::{CostBasis, CostStatistic, Model, Rule};
use crate::recost::NoiseFlags;
use crate::text::{CAUTION, money, num};

/// The model's rules in one paragraph.
pub const RULES: &str = "Each trial is one possible future of the whole fleet over the horizon; \
every policy is costed on the same trials. A unit runs only while every one of its parts works, \
and its parts age only while it runs. A part fails at a life drawn from its part type's life \
distribution; under age replacement it is replaced when its own age reaches the interval, under \
block replacement at fixed readings of its unit's hour meter, and safety-critical parts at their \
hard life limit at the latest. Every failure or planned replacement asks its part type's store for \
a spare and orders one more at once (base stock, one for one); each order arrives after a random \
lead time. A failure without a spare keeps its unit down until one arrives; a planned replacement \
without a spare waits with the old part still running. Costs are parts bought, planned and \
unplanned labour, holding of spares on the shelf, a penalty per unit-hour down, and the capital \
of the initial stock.";

fn part_name(model: &Model, p: usize) -> String {
    display(&model.parts[p].name)
}

/// How a part type's setting changes from policy `a` to policy `b`, in
/// words, or `None` when it does not change.
fn change_words(model: &Model, p: usize, a: &PolicyView<'_>, b: &PolicyView<'_>) -> Option<String> {
    let pa = &a.policy.parts[p];
    let pb = &b.policy.parts[p];
    let name = part_name(model, p);
    let mut bits = Vec::new();
    if pb.stock != pa.stock {
        let d = pb.stock.total() as i64 - pa.stock.total() as i64;
        let n = d.unsigned_abs() as u32;
        let spares = if n == 1 { "spare" } else { "spares" };
        if d > 0 {
            bits.push(format!("{} more {name} {spares} in stock", count_words(n)));
        } else {
            bits.push(format!("{} fewer {name} {spares} in stock", count_words(n)));
        }
    }
    if pb.rule != pa.rule {
        let s = match (pa.rule, pb.rule) {
            (Rule::Age(x), Rule::Age(y)) => {
                format!(
                    "{name} replaced at age {} instead of {}",
                    hours(y),
                    hours(x)
                )
            }
            (Rule::Block(x), Rule::Block(y)) => {
                format!(
                    "{name} replaced every {} instead of every {}",
                    hours(y),
                    hours(x)
                )
            }
            (from, to) => format!("{name}: {} instead of {}", rule_words(to), rule_words(from)),
        };
        bits.push(s);
    }
    (!bits.is_empty()).then(|| bits.join(" and "))
}

/// One step up the frontier in words.
fn step(v: &View<'_>, lo: &PolicyView<'_>, hi: &PolicyView<'_>) -> Vec<Span> {
    let model = v.model;
    let basis = v.measure.basis;
    let dcost = hi.cost.mean - lo.cost.mean;
    let dpts = 100.0 * (hi.chance.value - lo.chance.value);
    let mut out = vec![
        t("Going from "),
        b(chance_pct(lo.chance.value)),
        t(" ("),
        c(lo.name()),
        t(") to "),
        b(chance_pct(hi.chance.value)),
        t(" ("),
        c(hi.name()),
        t(format!(") chance of meeting {} costs ", v.target_words())),
        b(format!("{}{}", money_short(dcost), v.cur())),
        t(" more over the horizon"),
    ];
    if dpts > 0.0 {
        out.push(t(format!(
            ", {}{} per extra point of chance",
            money_short(dcost / dpts),
            v.cur()
        )));
    }
    // Which part types' costs moved most.
    let mut deltas: Vec<(usize, f64)> = (0..model.parts.len())
        .map(|p| {
            (
                p,
                hi.part_cost(model, p, basis) - lo.part_cost(model, p, basis),
            )
        })
        .collect();
    deltas.sort_by(|x, y| y.1.total_cmp(&x.1));
    let changes: Vec<(usize, String)> = (0..model.parts.len())
        .filter_map(|p| change_words(model, p, lo, hi).map(|w| (p, w)))
        .collect();
    let top = deltas.first().copied();
    match top {
        Some((p, d)) if d > 0.0 => {
            let name = part_name(model, p);
            let cap = match basis {
                CostBasis::Spend | CostBasis::PvSpend => {
                    (hi.policy.parts[p].stock.total() as f64
                        - lo.policy.parts[p].stock.total() as f64)
                        * model.parts[p].price
                }
                CostBasis::TotalWithPenalty => 0.0,
            };
            let detail = if cap != 0.0 && (d - cap).abs() > 0.1 * d {
                format!(
                    " ({} capital, {} parts, labour and holding)",
                    money_short(cap),
                    money_short(d - cap)
                )
            } else {
                String::new()
            };
            let others: Vec<&str> = changes
                .iter()
                .filter(|(q, _)| *q != p)
                .map(|(_, w)| w.as_str())
                .collect();
            match changes.iter().find(|(q, _)| *q == p) {
                Some((_, w)) => {
                    out.push(t(format!(
                        ", mostly {w}: {name} costs rise by {}{}{detail}",
                        money_short(d),
                        v.cur()
                    )));
                    if !others.is_empty() {
                        out.push(t(format!("; also {}", others.join("; "))));
                    }
                }
                None => {
                    if !others.is_empty() {
                        out.push(t(format!(": {}", others.join("; "))));
                    }
                    out.push(t(format!(
                        ". Most of the extra is in {name} (+{}{}), whose rule and stock stay the same: units that are up more run more hours and wear more parts",
                        money_short(d),
                        v.cur()
                    )));
                }
            }
        }
        _ => {
            if !changes.is_empty() {
                let all: Vec<&str> = changes.iter().map(|(_, w)| w.as_str()).collect();
                out.push(t(format!(": {}", all.join("; "))));
            }
        }
    }
    out.push(t("."));
    if hi
        .noise
        .is_some_and(|n| n.chance_within_noise && is_next(v, lo, hi))
    {
        out.push(t(
            " The gain in chance is within the noise of the trials: do not pay for it on this evidence alone.",
        ));
    }
    out
}

/// True when `b` directly follows `a` in the frontier.
fn is_next(v: &View<'_>, a: &PolicyView<'_>, b: &PolicyView<'_>) -> bool {
    let ia = v.policies.iter().position(|p| p.name() == a.name());
    let ib = v.policies.iter().position(|p| p.name() == b.name());
    matches!((ia, ib), (Some(x), Some(y)) if y == x + 1)
}

/// A policy's settings in short: `traction motor run to failure, S1; ...`.
pub(super) fn settings(model: &Model, p: &PolicyView<'_>) -> String {
    p.policy
        .parts
        .iter()
        .zip(&model.parts)
        .map(|(pp, part)| {
            format!(
                "{}: {}, S{}",
                display(&part.name),
                rule_short(pp.rule),
                pp.stock
            )
        })
        .collect::<Vec<_>>()
        .join("; ")
}

/// The basis of the cost measure in words.
fn measure_words(v: &View<'_>) -> String {
    let stat = match v.measure.statistic {
        CostStatistic::Mean => "mean".to_string(),
        CostStatistic::Percentile(p) => format!("{}th percentile", trim(p, 1)),
    };
    match v.measure.basis {
        CostBasis::Spend => format!(
            "spend ({stat} over trials): parts bought, planned and unplanned labour, holding, and the initial stock's capital; the downtime penalty is left out, since down time is what the chance measures"
        ),
        CostBasis::TotalWithPenalty => format!(
            "total cost ({stat} over trials): parts bought, planned and unplanned labour, holding and the downtime penalty; the initial stock's capital is reported apart"
        ),
        CostBasis::PvSpend => format!(
            "present value of spend ({stat} over trials): parts bought, labour, repair, transport and holding, each discounted from when it falls due, and the initial stock's capital at time 0; the downtime penalty is left out"
        ),
    }
}

/// The short findings.
fn in_short(v: &View<'_>) -> Vec<Vec<Span>> {
    let mut items = Vec::new();
    let target = match v.model.ready {
        None => pct_trim(v.target, 1),
        Some(_) => v.target_words(),
    };
    let target_words = v.target_words();
    let cur = v.cur();
    match v.kind {
        Kind::Frontier => {
            let first = &v.policies[0];
            items.push(vec![
                t("The cheapest policy found, "),
                c(first.labelled()),
                t(format!(
                    ", costs {}{cur} over the horizon ({}{cur} with the downtime penalty) and meets {target_words} in ",
                    money_short(first.cost.mean),
                    money_short(first.total())
                )),
                b(chance_pct(first.chance.value)),
                t(" of simulated futures."),
            ]);
            let mut said = vec![0];
            for level in super::view::CHOSEN_LEVELS {
                match v.cheapest_at(level) {
                    Some(i) => {
                        let p = &v.policies[i];
                        said.push(i);
                        items.push(vec![
                            t(format!("For at least a {} chance of meeting {target}, the cheapest policy is ", chance_pct(level))),
                            c(p.labelled()),
                            t(" at "),
                            b(format!("{}{cur}", money_short(p.cost.mean))),
                            t(format!(" ({}{cur} with the downtime penalty; {} chance, 95 % interval {} to {}).", money_short(p.total()), chance_pct(p.chance.value), chance_pct(p.chance.lo), chance_pct(p.chance.hi))),
                        ]);
                    }
                    None => {
                        let best = v
                            .policies
                            .iter()
                            .map(|p| p.chance.value)
                            .fold(0.0, f64::max);
                        items.push(vec![t(format!(
                            "No policy found reaches a {} chance of meeting {target}; the best found has {}.",
                            chance_pct(level),
                            chance_pct(best)
                        ))]);
                        break;
                    }
                }
            }
            let i = v.safest();
            if !said.contains(&i) {
                let p = &v.policies[i];
                items.push(vec![
                    t("The policy with the best chance found, "),
                    c(p.labelled()),
                    t(format!(
                        ", has a {} chance at {}{cur} ({}{cur} with the downtime penalty).",
                        chance_pct(p.chance.value),
                        money_short(p.cost.mean),
                        money_short(p.total())
                    )),
                ]);
            }
            // The same words as the terminal's.
            let i = v.cheapest_on_total();
            let words = match v.answer.and_then(|j| j.cheapest_on_total.as_ref()) {
                Some(ct) => ct.words.clone(),
                None => format!(
                    "Cheapest on the total with the downtime penalty: {}.",
                    v.policies[i].labelled()
                ),
            };
            let note = match v.measure.basis {
                CostBasis::Spend => {
                    " Spend stays the cost measure: the penalty is a price put on down time, which the chance already measures."
                }
                CostBasis::PvSpend => {
                    " The present value of spend stays the cost measure: the penalty is a price put on down time, which the chance already measures."
                }
                CostBasis::TotalWithPenalty => "",
            };
            items.push(vec![t(format!("{words}{note}"))]);
        }
        Kind::Evaluate => {
            let p = &v.policies[0];
            let a = p.summary.availability();
            items.push(vec![
                t("Policy "),
                c(p.name()),
                t(format!(" meets {target_words} in ")),
                b(chance_pct(p.chance.value)),
                t(format!(
                    " of simulated futures (95 % interval {} to {}); availability is between {} and {} in 80 % of them.",
                    chance_pct(p.chance.lo),
                    chance_pct(p.chance.hi),
                    pct1(a.p10),
                    pct1(a.p90)
                )),
            ]);
            items.push(vec![
                t("It costs "),
                b(format!("{}{cur}", money_short(p.cost.mean))),
                t(format!(
                    " over the horizon ({}; standard error {}).",
                    crate::result::cost_measure_label(v.measure),
                    money_short(p.cost.se)
                )),
            ]);
        }
    }
    items.push(mean_life_headline(v));
    items
}

/// The headline of where the mean-life plan goes wrong.
fn mean_life_headline(v: &View<'_>) -> Vec<Span> {
    let target = pct_trim(v.target, 1);
    match (v.kind, v.planner_pick) {
        (Kind::Frontier, Some(i)) => {
            let p = &v.policies[i];
            let mut s = vec![
                t("The mean-life plan would pick "),
                c(p.labelled()),
                t(match v.model.ready {
                    None => format!(
                        ", the cheapest policy it says meets {target} (it predicts {}); simulated, ",
                        pct1(p.plan.availability)
                    ),
                    Some(_) => format!(
                        ", the cheapest policy whose expected units up it puts at or above every site's ready count (it predicts {} fleet availability); simulated, ",
                        pct1(p.plan.availability)
                    ),
                }),
                c(p.name()),
                t(" meets it in "),
                b(chance_pct(p.chance.value)),
                t(format!(
                    " of futures, with a mean availability of {}.",
                    pct1(p.summary.acc.availability.mean())
                )),
            ];
            if p.chance.value < 0.5 {
                s.push(t(" The mean-life plan is wrong about it."));
            }
            s
        }
        (Kind::Frontier, None) => {
            let best = &v.policies[v.policies.len() - 1];
            vec![
                t(format!(
                    "The mean-life plan says no frontier policy meets {}; simulated, ",
                    match v.model.ready {
                        None => target.clone(),
                        Some(_) => v.target_words(),
                    }
                )),
                c(best.labelled()),
                t(format!(
                    " meets it in {} of futures.",
                    chance_pct(best.chance.value)
                )),
            ]
        }
        (Kind::Evaluate, _) => {
            let p = &v.policies[0];
            vec![
                t(format!(
                    "The mean-life plan predicts {} availability and calls the target {} for certain; the simulated chance is ",
                    pct1(p.plan.availability),
                    if p.plan.meets_target { "met" } else { "missed" }
                )),
                b(chance_pct(p.chance.value)),
                t("."),
            ]
        }
    }
}

/// The table of the cheapest policy for each chance level, and the steps.
fn levels(v: &View<'_>) -> Vec<Block> {
    let cur = v.cur();
    // Consecutive levels with the same answer share a row.
    let mut groups: Vec<(Vec<f64>, Option<usize>)> = Vec::new();
    for &level in &LEVELS {
        let pick = v.cheapest_at(level);
        match groups.last_mut() {
            Some((levels, last)) if *last == pick => levels.push(level),
            _ => groups.push((vec![level], pick)),
        }
    }
    let mut rows = Vec::new();
    let mut prev: Option<usize> = None;
    let mut picks: Vec<usize> = Vec::new();
    for (levels, pick) in &groups {
        let label = levels
            .iter()
            .map(|&l| super::view::trim(100.0 * l, 1))
            .collect::<Vec<_>>()
            .join(", ")
            + "\u{a0}%";
        match *pick {
            Some(i) => {
                let p = &v.policies[i];
                let extra = match prev {
                    Some(j) => format!("+{}", money_short(p.cost.mean - v.policies[j].cost.mean)),
                    None => "-".to_string(),
                };
                rows.push(vec![
                    label,
                    p.labelled(),
                    chance_with_interval(&p.chance),
                    money(p.cost.mean),
                    extra,
                    money(p.total()),
                    settings(v.model, p),
                ]);
                picks.push(i);
                prev = Some(i);
            }
            None => rows.push(vec![
                label,
                "none found".into(),
                "-".into(),
                "-".into(),
                "-".into(),
                "-".into(),
                "no policy found reaches this chance".into(),
            ]),
        }
    }
    let mut out = vec![
        Block::Heading(
            2,
            "Cheapest policy for each chance level".into(),
            "levels".into(),
        ),
        Block::Para(vec![t(format!(
            "For each chance of meeting {}, the cheapest non-dominated policy found whose chance (on the fresh trials) is at least that level. Cost: {} over the horizon{}.",
            v.target_words(),
            crate::result::cost_measure_label(v.measure),
            v.cur_paren()
        ))]),
        Block::Table {
            head: vec![
                "chance wanted".into(),
                "policy".into(),
                "its chance [95 % interval]".into(),
                format!("cost{cur}"),
                "extra".into(),
                format!("total with penalty{cur}"),
                "what it sets (S = base stock)".into(),
            ],
            align: vec![
                Align::Right,
                Align::Left,
                Align::Right,
                Align::Right,
                Align::Right,
                Align::Right,
                Align::Left,
            ],
            rows,
        },
    ];
    let mut steps: Vec<Vec<Span>> = Vec::new();
    // From the cheapest policy to the first level's pick, then level to level.
    let mut chain = vec![0usize];
    chain.extend(picks.iter().copied().filter(|&i| i != 0));
    for w in chain.windows(2) {
        steps.push(step(v, &v.policies[w[0]], &v.policies[w[1]]));
    }
    if !steps.is_empty() {
        out.push(Block::Heading(
            3,
            "Paying for a higher chance, policy by policy".into(),
            "steps".into(),
        ));
        out.push(Block::Bullets(steps));
        out.push(Block::Note(vec![t(
            "\"Mostly\" names the part type whose mean cost rises most between the two policies (capital included in spend). Its parts and labour can rise too, because units that are up more run more hours and wear more parts. A \"point of chance\" is one percentage point of the chance of meeting the target.",
        )]));
    }
    out
}

/// The scenario's named policies against the frontier, and the search
/// bounds the frontier sits at: the same words as the terminal's (from
/// the result's JSON).
fn answer_sections(v: &View<'_>) -> Vec<Block> {
    let Some(j) = v.answer else {
        return Vec::new();
    };
    let cur = v.cur();
    let mut out = Vec::new();
    if !j.named_policies.is_empty() {
        out.push(Block::Heading(
            2,
            "The scenario's own policies".into(),
            "named".into(),
        ));
        out.push(Block::Para(vec![t(format!(
            "Each policy named in the scenario, costed on the same {} fresh trials as the frontier, and where it stands against it (squares on the frontier figure). Differences are paired, trial by trial; \"within the noise\" means within two standard errors of the paired difference.",
            num(j.validate_trials as f64, 0)
        ))]));
        let rows = j
            .named_policies
            .iter()
            .map(|n| {
                vec![
                    format!("{} ({})", n.name, n.code),
                    chance_with_interval(&n.chance),
                    format!("{}\u{a0}±\u{a0}{}", money(n.cost.mean), money(n.cost.se)),
                    money(n.total_with_penalty),
                    match (&n.same_as, &n.dominated_by) {
                        (Some(f), _) => format!("= {f}"),
                        (None, Some(f)) => format!("dominated by {f}"),
                        (None, None) => "not dominated".into(),
                    },
                ]
            })
            .collect();
        out.push(Block::Table {
            head: vec![
                "policy".into(),
                "chance [95 % interval]".into(),
                format!("cost{cur} ± se"),
                format!("total with penalty{cur}"),
                "standing".into(),
            ],
            align: vec![
                Align::Left,
                Align::Right,
                Align::Right,
                Align::Right,
                Align::Left,
            ],
            rows,
        });
        out.push(Block::Bullets(
            j.named_policies
                .iter()
                .map(|n| vec![t(n.words.clone())])
                .collect(),
        ));
    }
    if !j.bounds_reached.is_empty() {
        out.push(Block::Heading(
            3,
            "Search bounds reached".into(),
            "bounds".into(),
        ));
        out.push(Block::Bullets(
            j.bounds_reached
                .iter()
                .map(|b| vec![t(b.words.clone())])
                .collect(),
        ));
    }
    out
}

/// The table of chances at availability levels around the target.
fn chance_table(v: &View<'_>) -> Block {
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    // Whole points near the target, and across the bulk (5 % to 95 %) of
    // the singled-out policies' simulated availability.
    let centre = (v.target * 100.0).round() as i64;
    let mut points: Vec<i64> = ((centre - 3)..=(centre + 2)).collect();
    for p in &chosen {
        let q = super::view::percentiles(&p.summary.acc.trial_availability, &[5.0, 95.0]);
        let (lo, hi) = ((100.0 * q[0]).floor() as i64, (100.0 * q[1]).ceil() as i64);
        points.extend(lo..=hi);
    }
    points.retain(|l| (1..=100).contains(l));
    points.sort_unstable();
    points.dedup();
    while points.len() > 14 {
        // Thin the levels furthest from the target.
        let far = points
            .iter()
            .enumerate()
            .max_by_key(|(_, l)| (*l - centre).abs())
            .map_or(0, |(i, _)| i);
        points.remove(far);
    }
    let mut levels: Vec<f64> = points.iter().map(|&l| l as f64 / 100.0).collect();
    if !levels.iter().any(|&l| (l - v.target).abs() < 1e-9) {
        levels.push(v.target);
        levels.sort_by(f64::total_cmp);
    }
    let mut head = vec!["availability at least".to_string()];
    head.extend(chosen.iter().map(|p| p.labelled()));
    let rows = levels
        .iter()
        .map(|&l| {
            let mut r = vec![if (l - v.target).abs() < 1e-9 {
                format!("{} (target)", pct_trim(l, 1))
            } else {
                pct_trim(l, 1)
            }];
            r.extend(chosen.iter().map(|p| chance_pct(p.chance_at(l))));
            r
        })
        .collect();
    let mut align = vec![Align::Left];
    align.extend(chosen.iter().map(|_| Align::Right));
    Block::Table { head, align, rows }
}

/// Where the mean-life plan goes wrong, and by how much.
fn mean_life_words(v: &View<'_>) -> Vec<Vec<Span>> {
    let target = pct_trim(v.target, 1);
    let basis = v.measure.basis;
    let mut items = vec![mean_life_headline(v)];
    let n = v.policies.len();
    let false_met: Vec<&PolicyView<'_>> = v
        .policies
        .iter()
        .filter(|p| p.plan.meets_target && p.chance.value < 0.5)
        .collect();
    let false_missed: Vec<&PolicyView<'_>> = v
        .policies
        .iter()
        .filter(|p| !p.plan.meets_target && p.chance.value >= 0.5)
        .collect();
    if v.kind == Kind::Frontier {
        let names = |ps: &[&PolicyView<'_>]| {
            ps.iter()
                .map(|p| p.name().to_string())
                .collect::<Vec<_>>()
                .join(", ")
        };
        if !false_met.is_empty() {
            items.push(vec![t(format!(
                "It calls {target} met for certain for {} of the {n} frontier policies ({}) that reach it in fewer than half of the simulated futures.",
                false_met.len(),
                names(&false_met)
            ))]);
        }
        if !false_missed.is_empty() {
            items.push(vec![t(format!(
                "It calls {target} missed for {} of the {n} frontier policies ({}) that reach it in at least half of the simulated futures.",
                false_missed.len(),
                names(&false_missed)
            ))]);
        }
        if false_met.is_empty() && false_missed.is_empty() {
            items.push(vec![t(format!(
                "Its yes-or-no verdict agrees with the better-than-even reading of the simulation for all {n} frontier policies, but it says nothing of the chance itself."
            ))]);
        }
    }
    // Availability and cost gaps, over all reported policies.
    let gaps: Vec<f64> = v
        .policies
        .iter()
        .map(|p| 100.0 * (p.plan.availability - p.summary.acc.availability.mean()))
        .collect();
    let (glo, ghi) = gaps
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
            (a.min(x), b.max(x))
        });
    let n_pol = v.policies.len();
    if let Some(s) = gap_words(glo, ghi, n_pol, "points", "mean fleet availability") {
        items.push(vec![t(s)]);
    }
    let cost_gaps: Vec<f64> = v
        .policies
        .iter()
        .map(|p| {
            let sim = p.trial_costs(basis).iter().sum::<f64>() / p.summary.trials().max(1) as f64;
            100.0 * (p.plan_cost(basis) - sim) / sim
        })
        .filter(|x| x.is_finite())
        .collect();
    if !cost_gaps.is_empty() {
        let (clo, chi) = cost_gaps
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
                (a.min(x), b.max(x))
            });
        let what = match basis {
            CostBasis::Spend => "the mean spend",
            CostBasis::TotalWithPenalty => "the mean total cost",
            CostBasis::PvSpend => "the mean present value of spend",
        };
        if let Some(s) = gap_words(clo, chi, n_pol, "%", what) {
            items.push(vec![t(s)]);
        }
    }
    items.push(vec![t(
        "Why: a unit stops at the earliest of its parts' failures, spares are asked for in lumps that a stock sized for the average runs out under, and lead times have long tails. The mean-life plan sees none of this; it has one availability per policy and so only \"met\" or \"missed\".",
    )]);
    items
}

/// How far the mean-life plan is off a simulated figure, over the
/// policies: gaps from `lo` to `hi` (plan minus simulation) in `unit`
/// (`points` or `%` of the simulated figure).
fn gap_words(lo: f64, hi: f64, n: usize, unit: &str, what: &str) -> Option<String> {
    if !(lo.is_finite() && hi.is_finite()) {
        return None;
    }
    let u = |x: f64| {
        let x = trim(x.abs(), 1);
        if unit == "%" {
            format!("{x}\u{a0}%")
        } else if x == "1" {
            format!("1 {}", unit.trim_end_matches('s'))
        } else {
            format!("{x} {unit}")
        }
    };
    let tiny = 0.05;
    let s = if hi.abs() < tiny && lo.abs() < tiny {
        format!(
            "It agrees with {what} in the simulation to within {}.",
            u(tiny)
        )
    } else if lo > -tiny {
        if n == 1 || hi - lo < tiny {
            format!("It overstates {what} by {}.", u(hi))
        } else if lo < tiny {
            format!(
                "It overstates {what} by up to {}, depending on the policy.",
                u(hi)
            )
        } else {
            format!(
                "It overstates {what} by {} to {}, depending on the policy.",
                u(lo),
                u(hi)
            )
        }
    } else if hi < tiny {
        if n == 1 || hi - lo < tiny {
            format!("It understates {what} by {}.", u(lo))
        } else if hi > -tiny {
            format!(
                "It understates {what} by up to {}, depending on the policy.",
                u(lo)
            )
        } else {
            format!(
                "It understates {what} by {} to {}, depending on the policy.",
                u(hi),
                u(lo)
            )
        }
    } else {
        format!(
            "It is off {what} by anything from {} too low to {} too high, depending on the policy.",
            u(lo),
            u(hi)
        )
    };
    Some(s)
}

/// The cost table of the chosen policies.
fn cost_table(v: &View<'_>) -> Block {
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let mut head = vec![format!("mean over the horizon{}", v.cur())];
    head.extend(chosen.iter().map(|p| p.labelled()));
    let comps: Vec<Vec<(&'static str, f64)>> = chosen
        .iter()
        .map(|p| super::plots::components(v.model, p, v.measure.basis))
        .collect();
    let mut rows: Vec<Vec<String>> = Vec::new();
    if let Some(first) = comps.first() {
        for (k, (name, _)) in first.iter().enumerate() {
            let mut r = vec![name.to_string()];
            r.extend(comps.iter().map(|cs| money(cs[k].1)));
            rows.push(r);
        }
    }
    let mut r = vec!["spend (with capital, no penalty)".to_string()];
    r.extend(chosen.iter().map(|p| money(p.spend())));
    rows.push(r);
    let mut r = vec!["total (with penalty, no capital)".to_string()];
    r.extend(chosen.iter().map(|p| money(p.summary.acc.total.mean())));
    rows.push(r);
    let mut align = vec![Align::Left];
    align.extend(chosen.iter().map(|_| Align::Right));
    Block::Table { head, align, rows }
}

/// Per part type and chosen policy.
fn part_table(v: &View<'_>) -> Block {
    let model = v.model;
    let mut rows = Vec::new();
    for (p, part) in model.parts.iter().enumerate() {
        for (k, pv) in v.chosen_views().enumerate() {
            let pp = &pv.policy.parts[p];
            let m = &pv.summary.acc.per_part[p];
            let before = match pp.rule.interval() {
                Some(t) => chance_pct(part.life.cdf(t)),
                None => "-".into(),
            };
            let ltd = pv.lead_time_demand(model, p);
            let pipeline = pv.pipeline(model, p);
            let demands = pv.demands(p);
            let served = if demands > 0.0 {
                chance_pct(1.0 - m.stockouts.mean() / demands)
            } else {
                "-".into()
            };
            rows.push(vec![
                if k == 0 {
                    display(&part.name)
                } else {
                    String::new()
                },
                pv.labelled(),
                rule_short(pp.rule),
                before,
                pp.stock.to_string(),
                format!(
                    "{} (95\u{a0}%:\u{a0}{})",
                    num(ltd, 2),
                    pipeline.map_or(0, |x| x.quantile(0.95))
                ),
                format!(
                    "{} / {served}",
                    chance_pct(pipeline.map_or(f64::NAN, |x| x.fill_rate(pp.stock.total())))
                ),
                format!(
                    "{} / {}",
                    num(m.failures.mean(), 1),
                    num(m.planned.mean(), 1)
                ),
                money(pv.part_cost(model, p, v.measure.basis)),
            ]);
        }
    }
    Block::Table {
        head: vec![
            "part type".into(),
            "policy".into(),
            "rule".into(),
            "fail before the interval".into(),
            "stock S".into(),
            "demand in a lead time".into(),
            "demands served from the shelf: Poisson / simulated".into(),
            "failures / planned per trial".into(),
            format!("cost{}", v.cur()),
        ],
        align: vec![
            Align::Left,
            Align::Left,
            Align::Left,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
        ],
        rows,
    }
}

/// A part type's setting in a table cell: `RTF S1`, `A8000 S2`.
fn compact(pp: &crate::model::PartPolicy) -> String {
    format!("{}\u{a0}S{}", pp.rule.short(), pp.stock)
}

/// Every reported policy in two tables: the figures, then the settings.
fn all_policies(v: &View<'_>) -> Vec<Block> {
    let model = v.model;
    let rows = v
        .policies
        .iter()
        .map(|p| {
            let a = p.summary.availability();
            vec![
                p.labelled(),
                chance_with_interval(&p.chance),
                format!("{}\u{a0}±\u{a0}{}", money(p.cost.mean), money(p.cost.se)),
                money(p.total()),
                format!(
                    "{:.1} / {:.1} / {}",
                    100.0 * a.p10,
                    100.0 * a.p50,
                    pct1(a.p90)
                ),
                format!(
                    "{} {}",
                    pct1(p.plan.availability),
                    if p.plan.meets_target { "met" } else { "missed" }
                ),
                p.noise.as_ref().map_or("-", NoiseFlags::words).to_string(),
            ]
        })
        .collect();
    let figures = Block::Table {
        head: vec![
            "policy".to_string(),
            "chance [95 % interval]".into(),
            format!("cost{} ± se", v.cur()),
            format!("total with penalty{}", v.cur()),
            "availability P10 / P50 / P90".into(),
            "mean-life plan".into(),
            "against the row above".into(),
        ],
        align: vec![
            Align::Left,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Left,
        ],
        rows,
    };
    let mut head = vec!["policy".to_string(), format!("stock capital{}", v.cur())];
    head.extend(model.parts.iter().map(|p| display(&p.name)));
    let rows = v
        .policies
        .iter()
        .map(|p| {
            let mut r = vec![p.labelled(), money(p.summary.initial_stock_capital)];
            r.extend(p.policy.parts.iter().map(compact));
            r
        })
        .collect();
    let mut align = vec![Align::Left, Align::Right];
    align.extend(model.parts.iter().map(|_| Align::Left));
    let settings = Block::Table { head, align, rows };
    vec![figures, settings]
}

/// What the figures assume.
fn assumptions(v: &View<'_>) -> Vec<Block> {
    let model = v.model;
    let cur = v.cur();
    let mut items: Vec<Vec<Span>> = Vec::new();
    let mut fleet: Vec<String> = Vec::new();
    for g in &model.groups {
        fleet.push(format!(
            "{} × {}",
            g.count,
            display(&model.unit_types[g.unit_type].name)
        ));
    }
    items.push(vec![t(format!(
        "Horizon: {} operating hours for each of {} units ({}).",
        num(model.horizon, 0),
        model.units.len(),
        fleet.join(", ")
    ))]);
    let first = &v.policies[0].summary;
    match v.kind {
        Kind::Frontier => items.push(vec![t(format!(
            "Trials: {} search trials (numbers 0 to {}) to find the policies, then {} fresh trials (numbers from {}) for every figure of the frontier policies; seed {}. Every policy is costed on the same trials.{}",
            num(v.search_trials as f64, 0),
            num(v.search_trials.saturating_sub(1) as f64, 0),
            num(first.trials() as f64, 0),
            num(first.first_trial as f64, 0),
            model.seed,
            v.answer.map_or(String::new(), |j| format!(" Re-costed on the fresh trials: {}.", j.recosted.why))
        ))]),
        Kind::Evaluate => items.push(vec![t(format!(
            "Trials: {} (numbers {} to {}); seed {}.",
            num(first.trials() as f64, 0),
            num(first.first_trial as f64, 0),
            num((first.first_trial + first.trials()).saturating_sub(1) as f64, 0),
            model.seed
        ))]),
    }
    items.push(vec![t(match &model.ready {
        None => format!(
            "Target: at least {} fleet availability (up unit-hours over scheduled unit-hours in a trial). Chances are shares of trials, with Wilson 95 % intervals.",
            pct_trim(v.target, 1)
        ),
        Some(_) => format!(
            "Target: {} (a trial meets it when the share of its horizon with every site at its count is at least that). Chances are shares of trials, with Wilson 95 % intervals; the chances at availability levels read fleet availability (up unit-hours over scheduled unit-hours).",
            v.target_in_full()
        ),
    })]);
    items.push(vec![t(format!("Cost measure: {}.", measure_words(v)))]);
    items.push(vec![t(format!(
        "Downtime penalty: {}{cur} per unit-hour down.",
        num(model.downtime_penalty, 2).trim_end_matches(".00")
    ))]);
    items.push(vec![t(if model.draws_life_parameters() {
        "Life parameters: each trial draws its own from the fits' sampling distributions (parts whose lives come from records).".to_string()
    } else if model.parameter_uncertainty {
        "Life parameters: fixed at the scenario's values in every trial; parameter uncertainty was asked for, but no part type's life is fitted to records, so there was nothing to draw.".to_string()
    } else {
        "Life parameters: fixed at the scenario's values in every trial.".to_string()
    })]);
    for part in &model.parts {
        let mut s = vec![
            c(&part.name),
            t(format!(
                ": life {} ({} {}, mean {}); lead time {}; price {}{cur}",
                part.life.family(),
                part.life.shape_named().0,
                trim(part.life.shape_named().1, 2),
                hours(part.life.mean()),
                lead_time_words(&part.lead_time),
                money(part.price)
            )),
        ];
        if let Some(l) = part.hard_limit {
            s.push(t(format!(
                "; safety-critical, hard life limit {}",
                hours(l)
            )));
        }
        s.push(t("."));
        items.push(s);
    }
    vec![
        Block::Heading(2, "What the figures assume".into(), "assumptions".into()),
        Block::Bullets(items),
        Block::Para(vec![b("The model's rules. "), t(RULES)]),
    ]
}

/// The list of files in the report.
fn files(v: &View<'_>, figures: &[Figure]) -> Vec<Block> {
    let per = match v.kind {
        Kind::Frontier => "each frontier policy",
        Kind::Evaluate => "the evaluated policy",
    };
    let mut items = vec![
        vec![
            Span::File("index.html".into()),
            t(": this page, one file with its figures inside."),
        ],
        vec![
            Span::File("summary.md".into()),
            t(": the same findings in Markdown, for a memo or a ticket."),
        ],
        vec![
            Span::File("frontier.csv".into()),
            t(
                ": every point of the frontier figure (set searched: search trials; frontier or evaluated: fresh trials).",
            ),
        ],
        vec![
            Span::File("policies.csv".into()),
            t(
                ": one row per reported policy with every figure quoted here, and the mean-life plan's figures.",
            ),
        ],
        vec![
            Span::File("trials.csv".into()),
            t(format!(
                ": one row per trial for {per}: availability, whether it met the target, the cost components, total (with penalty, no capital) and spend (with capital). The figures here can be redone from it."
            )),
        ],
        vec![
            Span::File("result.json".into()),
            t(": the machine-readable result, the same as the command's --json output."),
        ],
    ];
    if v.model.has_sites() {
        items.push(vec![
            Span::File("sites.csv".into()),
            t(format!(": one row per site for {per}: its ready count, the chance it holds it, units up, stock-outs, waiting demands and lateral transfers, beside the mean-life plan's expected units up.")),
        ]);
        items.push(vec![
            Span::File("units-up.csv".into()),
            t(": the share of the horizon with exactly each count of units up, for the fleet (site empty) and for each site."),
        ]);
        items.push(vec![
            Span::File("stores.csv".into()),
            t(": the stock of each part type at each site and at the depot, beside the mean-life plan's spares on their way to that store."),
        ]);
    }
    if v.model.has_rotables() {
        items.push(vec![
            Span::File("rotables.csv".into()),
            t(": each rotable's repair loop: removals, repairs, condemnations, the number in repair (simulated and by the mean-life plan), the repair time, the turnaround and the wait for a channel."),
        ]);
    }
    for f in figures {
        items.push(vec![
            Span::File(f.file.clone()),
            t(format!(": {}", f.caption.trim_end_matches('.'))),
        ]);
    }
    vec![
        Block::Heading(2, "Files in this report".into(), "files".into()),
        Block::Bullets(items),
    ]
}

/// The whole document.
pub fn document(v: &View<'_>, figures: &[Figure]) -> Vec<Block> {
    let model = v.model;
    let fig = |name: &str| {
        figures
            .iter()
            .find(|f| f.file == name)
            .cloned()
            .map(Block::Figure)
    };
    let title = if model.description.is_empty() {
        model.name.clone()
    } else {
        model.description.clone()
    };
    let kind = match v.kind {
        Kind::Frontier => "Maintenance and spares plan",
        Kind::Evaluate => "Maintenance and spares policy",
    };
    let what = match v.kind {
        Kind::Frontier => format!(
            "the {} policies that no other policy found beats on both cost and the chance of meeting the target",
            v.policies.len()
        ),
        Kind::Evaluate => format!("one policy, {}", v.policies[0].name()),
    };
    let mut doc = vec![
        Block::Heading(1, title, "top".into()),
        Block::Para(vec![
            b(format!("{kind}.")),
            t(" Scenario "),
            c(&model.name),
            t(format!(
                ": {} units over {} operating hours; target {}; {}. This report shows {what}.",
                model.units.len(),
                num(model.horizon, 0),
                v.target_in_full(),
                if model.currency.is_empty() {
                    "costs in the scenario's money".to_string()
                } else {
                    format!("costs in {}", model.currency)
                }
            )),
        ]),
        Block::Boxed("In short".into(), vec![Block::Bullets(in_short(v))]),
    ];
    let warnings = model.warnings();
    if !warnings.is_empty() {
        doc.push(Block::Boxed(
            "Inputs to check".into(),
            vec![
                Block::Para(vec![t(
                    "These values are allowed but unusual; the figures below rest on them as given.",
                )]),
                Block::Bullets(warnings.into_iter().map(|w| vec![t(w)]).collect()),
            ],
        ));
    }
    if v.kind == Kind::Frontier {
        doc.extend(levels(v));
        doc.extend(answer_sections(v));
        doc.push(Block::Heading(
            2,
            "Cost against chance: the frontier".into(),
            "frontier".into(),
        ));
        doc.extend(fig("frontier.svg"));
        doc.push(Block::Note(vec![t(
            "Grey dots: every policy the search simulated in full, on the search trials. Blue: the non-dominated policies, re-costed on fresh trials, cheapest first; vertical bars are 95 % intervals of the chance, horizontal bars 95 % intervals of the cost. Ringed: the policies the summary names, which the other figures single out. Squares: the scenario's named policies, on the same fresh trials.",
        )]));
    }
    doc.push(Block::Heading(
        2,
        "What are our chances?".into(),
        "chances".into(),
    ));
    doc.push(Block::Para(vec![t(
        "Read a level of fleet availability on the bottom axis and go up to a curve: its height is the chance of reaching at least that level over the horizon. The table gives the same readings.",
    )]));
    doc.extend(fig("exceedance.svg"));
    doc.push(chance_table(v));
    doc.extend(super::network::sections(v, figures));
    doc.push(Block::Heading(
        2,
        "Where the mean-life plan goes wrong".into(),
        "mean-life".into(),
    ));
    doc.extend(fig("mean-life.svg"));
    doc.push(Block::Bullets(mean_life_words(v)));
    doc.push(Block::Heading(
        2,
        "Where the money goes".into(),
        "money".into(),
    ));
    doc.extend(fig("costs.svg"));
    doc.push(cost_table(v));
    doc.extend(super::finance::section(v, figures));
    doc.push(Block::Heading(2, "Part by part".into(), "parts".into()));
    doc.extend(fig("life.svg"));
    doc.extend(fig("stock.svg"));
    doc.push(part_table(v));
    doc.push(Block::Note(vec![t(
        "Fail before the interval: share of parts whose life is shorter than the interval. Demand in a lead time: failures and planned replacements per hour, as simulated, times the mean lead time, and the 95 % point of that demand. Served from the shelf: the share of demands that find a spare, by the steady-state Poisson formula (the number on order is Poisson by Palm's theorem) and as simulated. Failures, planned and cost: means per trial over the horizon.",
    )]));
    if v.kind == Kind::Frontier {
        doc.push(Block::Heading(
            2,
            "All frontier policies".into(),
            "policies".into(),
        ));
        doc.extend(all_policies(v));
        doc.push(Block::Note(vec![t(
            "Part columns: RTF run to failure, A<h> age replacement at h operating hours, B<h> block replacement every h hours of the unit's meter; S<n> base stock. \"Same within noise\": the paired difference from the row above, on the same trials, is within two standard errors; do not pay for it on this evidence alone.",
        )]));
    } else {
        doc.push(Block::Heading(2, "The policy".into(), "policies".into()));
        doc.extend(all_policies(v));
    }
    doc.extend(assumptions(v));
    doc.push(Block::Boxed(
        "Cautions".into(),
        vec![Block::Para(vec![t(CAUTION)])],
    ));
    doc.extend(files(v, figures));
    doc
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gap_words_say_which_way_and_how_far() {
        let w = |lo, hi, n| gap_words(lo, hi, n, "points", "availability").unwrap_or_default();
        assert_eq!(w(0.9, 0.9, 1), "It overstates availability by 0.9 points.");
        assert_eq!(
            w(-0.01, 5.2, 4),
            "It overstates availability by up to 5.2 points, depending on the policy."
        );
        assert_eq!(
            w(1.0, 3.0, 4),
            "It overstates availability by 1 point to 3 points, depending on the policy."
        );
        assert!(w(-2.0, -1.0, 3).starts_with("It understates availability by 1 point to 2"));
        assert!(w(-4.2, 1.8, 3).contains("4.2 points too low to 1.8 points too high"));
        assert!(w(0.0, 0.01, 3).starts_with("It agrees"));
        assert_eq!(gap_words(f64::NAN, 1.0, 2, "%", "x"), None);
    }
}
