//! The report's sections for sites, a depot and rotables, in a stores
//! planner's words: site by site (the ready count, the chance a site holds
//! it, the units-up figure), where the spares sit (the depot or the sites)
//! for the policies singled out, and the rotable pool (how many are in
//! repair, the turnaround, the wait for a repair channel). The mean-life
//! plan stands beside every chance.
//!
//! Owns: these sections' sentences and tables. Works from any evaluated
//! policy the view singles out (an evaluation's one policy, or a
//! frontier's picks). A scenario without sites, a depot or rotables gets
//! none of them, so its report is as before.
//! May use: `super::view`, `super::doc`, `model`, `text`. No simulation,
//! no I/O.

use super::doc::{Align, Block, Figure, Span, b, c, t};
use super::view::{PolicyView, View, chance_pct, chance_with_interval, display, hours, trim};
use crate::text::{money, num};

/// The sections, in page order; empty for a scenario without sites and
/// rotables.
pub fn sections(v: &View<'_>, figures: &[Figure]) -> Vec<Block> {
    let mut out = Vec::new();
    if v.model.has_sites() {
        out.extend(sites(v, figures));
        out.extend(placement(v));
    }
    if v.model.has_rotables() {
        out.extend(rotables(v));
    }
    out
}

/// "met" or "missed" for a yes or no of the mean-life plan.
fn met(x: bool) -> &'static str {
    if x { "met" } else { "missed" }
}

/// Site by site: the ready count and its chance, the units-up figure.
fn sites(v: &View<'_>, figures: &[Figure]) -> Vec<Block> {
    let model = v.model;
    let mut out = vec![Block::Heading(
        2,
        "Site by site: units ready".into(),
        "sites".into(),
    )];
    let mut intro = vec![t(
        "A spare helps only the units of the site whose shelf it is on, so each site is read on its own. ",
    )];
    match &model.ready {
        Some(_) => intro.push(t(format!(
            "The target asks every site to have its count of units ready at once for at least {} of the horizon; below, each site's chance of holding its own count that long, beside what the mean-life plan expects (the sum of its units' availabilities, with no chance attached). The whole target can only be met as often as its weakest site holds.",
            super::view::pct_trim(v.target, 1)
        ))),
        None => intro.push(t(
            "The scenario gives no ready count, so the sites are read by their units up.",
        )),
    }
    out.push(Block::Para(intro));
    out.extend(
        figures
            .iter()
            .find(|f| f.file == "units-up.svg")
            .cloned()
            .map(Block::Figure),
    );
    // Words: per chosen policy, the weakest site.
    let mut items: Vec<Vec<Span>> = Vec::new();
    for pv in v.chosen_views() {
        let views: Vec<_> = (0..model.sites.len())
            .filter_map(|i| pv.site(model, i).map(|s| (i, s)))
            .collect();
        let weakest = views
            .iter()
            .filter_map(|(i, s)| s.chance.map(|c| (*i, c)))
            .min_by(|a, b| a.1.value.total_cmp(&b.1.value));
        if let Some((i, ch)) = weakest {
            let s = &views.iter().find(|(j, _)| *j == i).expect("listed").1;
            let mut sp = vec![
                c(pv.name()),
                t(": the site that holds its count least often is "),
                b(display(&model.sites[i].name)),
                t(format!(
                    " ({} of {} units ready): {} of futures",
                    s.at_least.unwrap_or(0),
                    s.units,
                    chance_with_interval(&ch)
                )),
            ];
            if let Some(m) = s.plan_meets {
                sp.push(t(format!(
                    "; the mean-life plan expects {} units up there and calls the count {}",
                    trim(s.plan_units_up, 1),
                    met(m)
                )));
            }
            sp.push(t(format!(
                ". Across all sites at once: {}.",
                chance_with_interval(&pv.chance)
            )));
            items.push(sp);
        }
    }
    if !items.is_empty() {
        out.push(Block::Bullets(items));
    }
    let mut rows = Vec::new();
    for (i, site) in model.sites.iter().enumerate() {
        for (k, pv) in v.chosen_views().enumerate() {
            let Some(s) = pv.site(model, i) else { continue };
            rows.push(vec![
                if k == 0 {
                    display(&site.name)
                } else {
                    String::new()
                },
                pv.name().to_string(),
                match s.at_least {
                    Some(n) => format!("{n} of {}", s.units),
                    None => format!("- of {}", s.units),
                },
                s.chance.as_ref().map_or("-".into(), chance_with_interval),
                if s.at_least.is_some() {
                    super::view::pct1(s.ready_share)
                } else {
                    "-".into()
                },
                format!(
                    "{} / {}{}",
                    trim(s.units_up_mean, 1),
                    trim(s.plan_units_up, 1),
                    s.plan_meets
                        .map_or(String::new(), |m| format!(" ({})", met(m)))
                ),
                num(s.stockouts, 1),
                num(s.backorders, 2),
                format!(
                    "{} / {}",
                    num(s.laterals_given, 1),
                    num(s.laterals_taken, 1)
                ),
            ]);
        }
    }
    out.push(Block::Table {
        head: vec![
            "site".into(),
            "policy".into(),
            "ready count of units".into(),
            "chance the site holds its count [95 % interval]".into(),
            "time at its count or more".into(),
            "units up on average: simulated / mean-life plan".into(),
            "demands finding the shelf empty".into(),
            "demands waiting for a spare (average)".into(),
            "lateral transfers given / taken".into(),
        ],
        align: vec![
            Align::Left,
            Align::Left,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
        ],
        rows,
    });
    out.push(Block::Note(vec![t(
        "Chance the site holds its count: the share of trials in which the site alone has at least its count of units up for the target's share of the horizon. Time at its count or more: mean share of the horizon. Counts of demands and transfers: means per trial over the horizon, all part types; demands waiting: the time-average number of failed or due parts at the site waiting for a spare.",
    )]));
    out
}

/// The levels of one part type's stock as `depot 2, north 1, ...`.
fn levels(model: &crate::model::Model, pp: &crate::model::PartPolicy) -> Vec<u32> {
    let mut l: Vec<u32> = pp.stock.site_levels().collect();
    if model.depot.is_some() {
        l.push(pp.stock.depot());
    }
    l
}

/// Where the spares sit: the depot or the sites, for the policies singled
/// out, beside the mean-life plan's spares in transit to each store.
fn placement(v: &View<'_>) -> Vec<Block> {
    let model = v.model;
    let depot = model.depot.is_some();
    let mut out = vec![Block::Heading(
        2,
        "Where the spares sit: depot or sites".into(),
        "placement".into(),
    )];
    out.push(Block::Para(vec![t(if depot {
        "A spare on a site's shelf puts a unit back to work at once, but only at that site; a spare at the depot serves every site, after the transport time. Each cell gives the spares held there and, in brackets, the mean-life plan's spares on their way to that store at any moment (the site's demand times its transport time from the depot; for the depot, the whole fleet's demand times the repair or purchase time): a store holding fewer than that runs dry on an average day."
    } else {
        "A spare on a site's shelf puts a unit back to work at once, but only at that site. Each cell gives the spares held there and, in brackets, the mean-life plan's spares on their way to that site at any moment (its demand times the repair or purchase time): a site holding fewer than that runs dry on an average day."
    })]));
    let mut head = vec!["part type".to_string(), "policy".into()];
    head.extend(model.sites.iter().map(|s| display(&s.name)));
    if depot {
        head.push("depot".into());
    }
    head.extend([
        "on the shelves (average)".to_string(),
        "waiting at the sites / at the depot (average)".into(),
        if depot {
            "shipments from the depot / lateral transfers per trial".into()
        } else {
            "lateral transfers per trial".into()
        },
    ]);
    let mut rows = Vec::new();
    let mut short: Vec<Vec<Span>> = Vec::new();
    for (p, part) in model.parts.iter().enumerate() {
        for (k, pv) in v.chosen_views().enumerate() {
            let pp = &pv.policy.parts[p];
            let plan = &pv.plan.parts[p];
            let m = &pv.summary.acc.per_part[p];
            let h = model.horizon;
            let mut row = vec![
                if k == 0 {
                    display(&part.name)
                } else {
                    String::new()
                },
                pv.name().to_string(),
            ];
            let stocks = levels(model, pp);
            let mut pipes: Vec<f64> = plan.site_pipeline.clone();
            if depot {
                pipes.push(plan.depot_pipeline.unwrap_or(0.0));
            }
            for (s, need) in stocks.iter().zip(&pipes) {
                let d = if *need < 1.0 { 2 } else { 1 };
                row.push(format!("{s} ({})", trim(*need, d)));
            }
            row.push(num(m.shelf_hours.mean() / h, 1));
            row.push(format!(
                "{} / {}",
                num(m.backorder_hours.mean() / h, 2),
                if depot {
                    num(m.depot_backorder_hours.mean() / h, 2)
                } else {
                    "-".into()
                }
            ));
            row.push(if depot {
                format!(
                    "{} / {}",
                    num(m.shipments.mean(), 1),
                    num(m.laterals.mean(), 1)
                )
            } else {
                num(m.laterals.mean(), 1)
            });
            rows.push(row);
            if k == 0 {
                let thin: Vec<String> = model
                    .sites
                    .iter()
                    .zip(&stocks)
                    .zip(&plan.site_pipeline)
                    .filter(|((_, s), need)| (**s as f64) < **need)
                    .map(|((site, _), _)| display(&site.name))
                    .collect();
                if !thin.is_empty() {
                    short.push(vec![
                        c(pv.name()),
                        t(format!(
                            ": {} holds fewer spares at {} than are on their way there on an average day; expect its units to wait there{}.",
                            display(&part.name),
                            thin.join(", "),
                            if depot {
                                " unless the depot or a lateral transfer covers them"
                            } else {
                                ""
                            }
                        )),
                    ]);
                }
            }
        }
    }
    if !short.is_empty() {
        out.push(Block::Bullets(short));
    }
    let mut align = vec![Align::Left, Align::Left];
    align.extend((0..head.len() - 2).map(|_| Align::Right));
    out.push(Block::Table { head, align, rows });
    out.push(Block::Note(vec![t(
        "On the shelves: time-average spares on hand at every store together. Waiting: the time-average number of demands (at the sites) and of site requests (at the depot) not yet served. Counts: means per trial over the horizon.",
    )]));
    out
}

/// The rotable pool: removals, repairs, condemnations, the number in
/// repair and the turnaround with the wait for a channel.
fn rotables(v: &View<'_>) -> Vec<Block> {
    let model = v.model;
    let h = model.horizon;
    let mut out = vec![Block::Heading(
        2,
        "The rotable pool".into(),
        "rotables".into(),
    )];
    out.push(Block::Para(vec![t(
        "A rotable is not bought at each removal: the removed unit goes to the repair shop and comes back to the shelf as good as new, unless it is condemned and a new one is bought. The pool is the spares on the shelves plus the units in repair; what keeps the fleet running is how many of the pool are in repair at once and how long a unit takes to come back, including any wait for a free repair channel.",
    )]));
    let mut rows = Vec::new();
    let mut words: Vec<Vec<Span>> = Vec::new();
    for (p, part) in model.parts.iter().enumerate() {
        let Some(r) = &part.repair else { continue };
        for (k, pv) in v.chosen_views().enumerate() {
            let m = &pv.summary.acc.per_part[p];
            let plan = &pv.plan.parts[p];
            let sent = m.repair_entries.mean();
            let turnaround = pv_turnaround(pv, p);
            let wait = if sent > 0.0 {
                (turnaround - r.time.mean()).max(0.0)
            } else {
                0.0
            };
            let in_repair = m.repair_hours.mean() / h;
            rows.push(vec![
                if k == 0 {
                    display(&part.name)
                } else {
                    String::new()
                },
                pv.name().to_string(),
                pv.policy.parts[p].stock.total().to_string(),
                format!(
                    "{} / {}",
                    num(sent + m.condemned.mean(), 1),
                    num(m.condemned.mean(), 1)
                ),
                format!(
                    "{} / {}",
                    num(in_repair, 2),
                    num(plan.in_repair.unwrap_or(0.0), 2)
                ),
                hours(r.time.mean()),
                if sent > 0.0 {
                    hours(turnaround)
                } else {
                    "-".into()
                },
                if sent > 0.0 { hours(wait) } else { "-".into() },
                r.channels
                    .map_or("unlimited".to_string(), |n| n.to_string()),
                money(m.repair_planned.mean() + m.repair_failed.mean()),
            ]);
            if k == 0 && sent > 0.0 {
                let mut s = vec![
                    b(display(&part.name)),
                    t(", under "),
                    c(pv.name()),
                    t(format!(
                        ": about {} units are in repair at any moment (the mean-life plan says {}); a unit sent to repair is back after {} on average",
                        trim(in_repair, 1),
                        trim(plan.in_repair.unwrap_or(0.0), 1),
                        hours(turnaround)
                    )),
                ];
                match r.channels {
                    Some(n) if wait >= 1.0 => s.push(t(format!(
                        ", of which {} is waiting for one of the shop's {n} channels ({} of the turnaround): another channel, or a larger pool, buys that time back.",
                        hours(wait),
                        chance_pct(wait / turnaround)
                    ))),
                    Some(n) => s.push(t(format!(
                        "; the shop's {n} channels add hardly any wait."
                    ))),
                    None => s.push(t("; the shop has no limit on channels, so there is no wait.")),
                }
                words.push(s);
            }
        }
    }
    if !words.is_empty() {
        out.push(Block::Bullets(words));
    }
    out.push(Block::Table {
        head: vec![
            "rotable".into(),
            "policy".into(),
            "spares in the pool".into(),
            "removed / condemned per trial".into(),
            "in repair (average): simulated / mean-life plan".into(),
            "repair time (mean)".into(),
            "turnaround (mean)".into(),
            "wait for a channel (mean)".into(),
            "repair channels".into(),
            format!("repair cost per trial{}", v.cur()),
        ],
        align: vec![
            Align::Left,
            Align::Left,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
        ],
        rows,
    });
    out.push(Block::Note(vec![t(
        "Turnaround: from the removal until the repaired unit is back on the shelf, the wait for a channel included, over every unit sent to repair. Wait for a channel: the mean turnaround less the repair time's mean (an estimate; near zero with unlimited channels). The mean-life plan has no queue: its units in repair are the removals not condemned times the mean repair time.",
    )]));
    out
}

/// Mean turnaround of part type `p` under the view's policy.
fn pv_turnaround(pv: &PolicyView<'_>, p: usize) -> f64 {
    pv.summary.acc.per_part[p].mean_turnaround()
}
