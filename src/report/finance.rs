//! The report's section for finance and for stores planners: money by
//! year (the figure of spend per year with its P10-P90 band and the budget
//! line, the chance of staying within budget, what each step up the
//! frontier costs per year and in present value, the mean-life plan's flat
//! line), the CSV of one row per policy and year, and per part type the
//! stores planners' figures (fill rate, stock-out in a year, backorders,
//! spares on hand).
//!
//! Owns: those words, tables and `money.csv`. Kept apart from `words` so
//! the rest of the report reads as before.
//! May use what `report` may use; no simulation, no I/O.

use super::doc::{Align, Block, Figure, b, t};
use super::view::{PolicyView, View};
use crate::summary::{Chance, MoneyFigures};
use crate::text::{money, num};

fn chance_words(c: &Chance) -> String {
    format!(
        "{:.1} % (95 %: {:.1} to {:.1} %)",
        100.0 * c.value,
        100.0 * c.lo,
        100.0 * c.hi
    )
}

/// Mean running spend of a full year: the years' spend over their length.
fn per_full_year(f: &MoneyFigures) -> f64 {
    let years: f64 = f.years.iter().map(|y| y.share).sum();
    let spend: f64 = f.years.iter().map(|y| y.spend.mean).sum();
    if years > 0.0 { spend / years } else { 0.0 }
}

fn signed(x: f64) -> String {
    if x >= 0.0 {
        format!("+{}", money(x))
    } else {
        format!("-{}", money(-x))
    }
}

/// The money section (scenarios with `[money]`), then the stores planners'
/// section.
pub fn section(v: &View<'_>, figures: &[Figure]) -> Vec<Block> {
    let mut doc = money_section(v, figures);
    doc.extend(stores_section(v));
    doc
}

fn money_section(v: &View<'_>, figures: &[Figure]) -> Vec<Block> {
    let Some(settings) = v.model.money.as_ref() else {
        return Vec::new();
    };
    let chosen: Vec<(&PolicyView<'_>, MoneyFigures)> = v
        .chosen_views()
        .filter_map(|p| p.summary.money().map(|f| (p, f)))
        .collect();
    if chosen.is_empty() {
        return Vec::new();
    }
    let mut doc = vec![Block::Heading(
        2,
        "Money by year, for finance".into(),
        "money-by-year".into(),
    )];
    doc.push(Block::Para(vec![t(format!(
        "A year here is {} operating hours. Running spend is what each year costs: parts bought, labour, repair, transport and holding (holding split across years exactly). The initial stock's capital is apart, as year 0. Present value discounts each cost from when it falls due at {:.2} % a year, with the capital at time 0.{}",
        num(settings.hours_per_year, 0),
        100.0 * settings.discount_rate,
        match settings.budget {
            Some(bud) => format!(
                " The yearly budget for running spend is {}{}; a partial last year is held to its share of it.",
                money(bud),
                v.cur()
            ),
            None => " The scenario gives no yearly budget.".into(),
        }
    ))]));
    doc.extend(
        figures
            .iter()
            .find(|f| f.file == "money-years.svg")
            .cloned()
            .map(Block::Figure),
    );
    let mut head = vec![format!("policy (money{})", v.cur())];
    head.extend([
        "year 0 capital".to_string(),
        "running spend a full year, mean".into(),
        "dearest year, P90".into(),
        "present value of spend".into(),
        "mean-life plan: a year / present value".into(),
    ]);
    if settings.budget.is_some() {
        head.push("within budget every year".into());
    }
    let mut rows = Vec::new();
    for (p, f) in &chosen {
        let dearest = f
            .years
            .iter()
            .max_by(|a, b| (a.spend.p90 / a.share).total_cmp(&(b.spend.p90 / b.share)))
            .map_or("-".into(), |y| {
                format!("year {}: {}", y.year, money(y.spend.p90))
            });
        let mut r = vec![
            p.name().to_string(),
            money(f.capital),
            money(per_full_year(f)),
            dearest,
            format!("{} ± {}", money(f.pv_spend.mean), money(f.pv_spend.se)),
            match (p.plan.spend_per_year, p.plan.pv_spend) {
                (Some(y), Some(pv)) => format!("{} / {}", money(y), money(pv + f.capital)),
                _ => "-".into(),
            },
        ];
        if settings.budget.is_some() {
            r.push(
                f.within_every_year
                    .as_ref()
                    .map_or("-".into(), chance_words),
            );
        }
        rows.push(r);
    }
    let mut align = vec![Align::Left];
    align.extend((1..head.len()).map(|_| Align::Right));
    doc.push(Block::Table { head, align, rows });
    // Each year's chance within budget, for the policies singled out.
    if settings.budget.is_some() {
        let mut head = vec!["year".to_string(), "budget".into()];
        head.extend(
            chosen
                .iter()
                .map(|(p, _)| format!("{}: within budget", p.name())),
        );
        let years = chosen[0].1.years.len();
        let rows = (0..years)
            .map(|y| {
                let first = &chosen[0].1.years[y];
                let mut r = vec![
                    if first.share < 1.0 {
                        format!("{} ({:.0} % of a year)", first.year, 100.0 * first.share)
                    } else {
                        first.year.to_string()
                    },
                    first.budget.map_or("-".into(), money),
                ];
                r.extend(chosen.iter().map(|(_, f)| {
                    f.years[y]
                        .within_budget
                        .as_ref()
                        .map_or("-".into(), chance_words)
                }));
                r
            })
            .collect();
        let mut align = vec![Align::Left];
        align.extend((1..head.len()).map(|_| Align::Right));
        doc.push(Block::Table { head, align, rows });
    }
    // What each step up the frontier (or the list) costs per year and in
    // present value, every policy in cost order.
    let all: Vec<(&PolicyView<'_>, MoneyFigures)> = v
        .policies
        .iter()
        .filter_map(|p| p.summary.money().map(|f| (p, f)))
        .collect();
    if all.len() > 1 {
        doc.push(Block::Para(vec![
            b("Each step up, in money of each year and of today. "),
            t("From one policy to the next dearer one: the change in the mean running spend of a full year, in the present value of spend (capital included), and in the chance of meeting the target."),
        ]));
        let head = vec![
            "from → to".to_string(),
            "a year".into(),
            "present value".into(),
            "chance".into(),
        ];
        let rows = all
            .windows(2)
            .map(|w| {
                let ((a, fa), (bp, fb)) = (&w[0], &w[1]);
                vec![
                    format!("{} → {}", a.name(), bp.name()),
                    signed(per_full_year(fb) - per_full_year(fa)),
                    signed(fb.pv_spend.mean - fa.pv_spend.mean),
                    format!("{:+.1} points", 100.0 * (bp.chance.value - a.chance.value)),
                ]
            })
            .collect();
        doc.push(Block::Table {
            head,
            align: vec![Align::Left, Align::Right, Align::Right, Align::Right],
            rows,
        });
    }
    doc.push(Block::Note(vec![t(
        "Means over trials; P10 and P90: the spend that 10 % and 90 % of the trials stay at or below. Chances with Wilson 95 % intervals. The mean-life plan spends at one flat rate (every life and lead time at its mean), so it draws one flat line and cannot say how likely a year over budget is. money.csv holds one row per policy and year.",
    )]));
    doc
}

fn stores_section(v: &View<'_>) -> Vec<Block> {
    let model = v.model;
    let year = model.year_hours();
    let mut doc = vec![Block::Heading(
        2,
        "Stores: fill rate, stock-outs, backorders".into(),
        "stores".into(),
    )];
    let head = vec![
        "part type".to_string(),
        "policy".into(),
        "fill rate".into(),
        "stock-out in a year".into(),
        "mean backorders".into(),
        "mean spares on hand".into(),
    ];
    let mut rows = Vec::new();
    for (p, part) in model.parts.iter().enumerate() {
        for pv in v.chosen_views() {
            let m = &pv.summary.acc.per_part[p];
            rows.push(vec![
                part.name.clone(),
                pv.name().to_string(),
                m.fill_rate()
                    .map_or("-".into(), |f| format!("{:.1} %", 100.0 * f)),
                if pv.summary.acc.whole_years > 0 {
                    format!(
                        "{:.1} % ± {:.1}",
                        100.0 * m.stockout_year_share.mean(),
                        100.0 * m.stockout_year_share.se()
                    )
                } else {
                    "no whole year".into()
                },
                num(m.backorder_hours.mean() / model.horizon, 3),
                num(m.shelf_hours.mean() / model.horizon, 2),
            ]);
        }
    }
    doc.push(Block::Table {
        head,
        align: vec![
            Align::Left,
            Align::Left,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
        ],
        rows,
    });
    doc.push(Block::Note(vec![t(format!(
        "Fill rate: the share of demands (failures and planned replacements falling due) served from the shelf at once, all trials pooled. Stock-out in a year: the chance that a year of {} operating hours{} sees at least one demand find the shelf empty (whole years only), with its standard error. Mean backorders: demands waiting for a spare, averaged over the horizon. Mean spares on hand: every store, averaged over the horizon.",
        num(year, 0),
        if model.money.is_some() {
            ""
        } else {
            " (a year of round-the-clock running; the scenario gives no hours per year)"
        }
    ))]));
    doc
}

/// `money.csv`: one row per policy and year (empty without `[money]`).
pub fn money_csv(v: &View<'_>) -> Option<Vec<u8>> {
    v.model.money.as_ref()?;
    let mut s = String::from(
        "policy,year,share_of_year,spend_mean,spend_se,spend_p10,spend_p50,spend_p90,budget,within_budget,within_budget_lo,within_budget_hi,capital_year0,pv_spend_mean,pv_spend_se,mean_life_plan_spend\n",
    );
    let opt = |x: Option<f64>| x.map_or(String::new(), |x| format!("{x}"));
    for p in &v.policies {
        let Some(f) = p.summary.money() else {
            continue;
        };
        for y in &f.years {
            let c = y.within_budget;
            s.push_str(&format!(
                "{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}\n",
                csv_field(p.name()),
                y.year,
                y.share,
                y.spend.mean,
                y.spend.se,
                y.spend.p10,
                y.spend.p50,
                y.spend.p90,
                opt(y.budget),
                opt(c.map(|c| c.value)),
                opt(c.map(|c| c.lo)),
                opt(c.map(|c| c.hi)),
                f.capital,
                f.pv_spend.mean,
                f.pv_spend.se,
                opt(p.plan.spend_per_year.map(|x| x * y.share)),
            ));
        }
    }
    Some(s.into_bytes())
}

/// A CSV field, quoted when it holds a comma, a quote or a line break.
fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}
