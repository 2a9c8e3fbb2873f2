//! What the terminal shows of money over time and of the stores planners'
//! figures: the yearly spend with its spread and budget, the present
//! value, and per part type the fill rate, the chance of a stock-out in a
//! year, mean backorders and mean spares on hand.
//!
//! Owns: these tables' wording and layout (kept apart from `render` so the
//! main tables stay as they were).
//! May use: the library's result types, `wearout::text`.

use super::render::table;
use wearout::model::Model;
use wearout::result::{EvaluateJson, FrontierJson, MoneyJson};
use wearout::summary::Chance;
use wearout::text::{currency, money, num};

/// A chance with its interval: `33.4 % [31.9, 34.8]`.
fn chance(c: &Chance) -> String {
    format!(
        "{:.1} % [{:.1}, {:.1}]",
        100.0 * c.value,
        100.0 * c.lo,
        100.0 * c.hi
    )
}

/// Per part type: fill rate, stock-out chance per year, backorders, on hand.
pub fn stores(j: &EvaluateJson) -> String {
    let mut s = format!(
        "\nStores planners' figures per part type (fill rate: share of demands served from the shelf at once; stock-out in a year: share of whole years of {} h with at least one demand finding the shelf empty)\n",
        num(j.stockout_year_hours, 0)
    );
    let mut rows = vec![vec![
        "part type".to_string(),
        "demands".into(),
        "fill rate".into(),
        "stock-out in a year".into(),
        "mean backorders".into(),
        "mean spares on hand".into(),
    ]];
    for p in &j.per_part {
        rows.push(vec![
            p.name.clone(),
            num(p.demands, 1),
            p.fill_rate
                .map_or("-".into(), |f| format!("{:.1} %", 100.0 * f)),
            p.stockout_year_chance.map_or("no whole year".into(), |c| {
                format!("{:.1} % ± {:.1}", 100.0 * c.mean, 100.0 * c.se)
            }),
            num(p.backorders_mean, 3),
            num(p.on_hand_mean, 2),
        ]);
    }
    s.push_str(&table(&rows));
    s
}

/// Money over time of one evaluated policy.
pub fn evaluate(model: &Model, j: &EvaluateJson) -> String {
    let Some(m) = &j.money else {
        return String::new();
    };
    let cur = currency(&model.currency, " (", ")");
    let mut s = format!(
        "\nMoney over time{cur}: {} operating hours a year, discount rate {:.2} % a year{}\n",
        num(m.hours_per_year, 0),
        100.0 * m.discount_rate,
        m.yearly_budget
            .map_or(String::new(), |b| format!(", yearly budget {}", money(b)))
    );
    s.push_str(&format!(
        "Year 0, the initial stock's capital (apart from running spend): {}\n",
        money(m.capital_year0)
    ));
    let mut header = vec![
        "year".to_string(),
        "running spend ± se".into(),
        "P10".into(),
        "P50".into(),
        "P90".into(),
    ];
    if m.yearly_budget.is_some() {
        header.push("budget".into());
        header.push("chance within [95 %]".into());
    }
    let mut rows = vec![header];
    for y in &m.years {
        let label = if y.share < 1.0 {
            format!("{} ({:.0} % of a year)", y.year, 100.0 * y.share)
        } else {
            y.year.to_string()
        };
        let mut row = vec![
            label,
            format!("{} ± {}", money(y.mean), money(y.se)),
            money(y.p10),
            money(y.p50),
            money(y.p90),
        ];
        if let (Some(b), Some(c)) = (y.budget, &y.within_budget) {
            row.push(money(b));
            row.push(chance(c));
        }
        rows.push(row);
    }
    s.push_str(&table(&rows));
    s.push_str(&summary_lines(m));
    s
}

/// The lines under the yearly table: chance every year within budget,
/// present value, the mean-life plan's flat line, per-part budgets.
fn summary_lines(m: &MoneyJson) -> String {
    let mut s = String::new();
    if let Some(c) = &m.within_budget_every_year {
        s.push_str(&format!(
            "Chance of staying within budget in every year: {}\n",
            chance(c)
        ));
    }
    for (name, c) in &m.per_part_within_budget_every_year {
        s.push_str(&format!(
            "Chance `{name}` stays within its own budget in every year: {}\n",
            chance(c)
        ));
    }
    s.push_str(&format!(
        "Present value of spend (capital at time 0 included): {} ± {} (P10 {}, P50 {}, P90 {})\n",
        money(m.pv_spend.mean),
        money(m.pv_spend.se),
        money(m.pv_spend.p10),
        money(m.pv_spend.p50),
        money(m.pv_spend.p90)
    ));
    if let (Some(y), Some(pv)) = (m.mean_life_plan_spend_per_year, m.mean_life_plan_pv_spend) {
        s.push_str(&format!(
            "The mean-life plan spends one flat {} a full year (present value with capital {}).\n",
            money(y),
            money(pv)
        ));
    }
    s
}

/// Money over time of the frontier's policies: present value, mean
/// running spend of the dearest year, the chance within budget every year,
/// and what each step up costs per year and in present value.
pub fn frontier(model: &Model, j: &FrontierJson) -> String {
    if j.policies.iter().all(|p| p.money.is_none()) {
        return String::new();
    }
    let cur = currency(&model.currency, " (", ")");
    let mut s = format!("\nMoney over time{cur}\n");
    let mut header = vec![
        "policy".to_string(),
        "PV of spend ± se".into(),
        "mean running spend a full year".into(),
        "dearest year (mean)".into(),
        "step up: a year / PV".into(),
    ];
    let budget = j
        .policies
        .iter()
        .find_map(|p| p.money.as_ref().and_then(|m| m.yearly_budget));
    if budget.is_some() {
        header.push("within budget every year [95 %]".into());
    }
    let mut rows = vec![header];
    let mut prev: Option<(f64, f64)> = None;
    for p in &j.policies {
        let Some(m) = &p.money else { continue };
        let per_year = per_full_year(m);
        let dearest = m
            .years
            .iter()
            .max_by(|a, b| (a.mean / a.share).total_cmp(&(b.mean / b.share)))
            .map_or("-".into(), |y| {
                format!("year {}: {}", y.year, money(y.mean))
            });
        let step = prev.map_or("-".into(), |(py, ppv)| {
            format!(
                "{} / {}",
                signed(per_year - py),
                signed(m.pv_spend.mean - ppv)
            )
        });
        let mut row = vec![
            p.name.clone(),
            format!("{} ± {}", money(m.pv_spend.mean), money(m.pv_spend.se)),
            money(per_year),
            dearest,
            step,
        ];
        if budget.is_some() {
            row.push(
                m.within_budget_every_year
                    .as_ref()
                    .map_or("-".into(), chance),
            );
        }
        rows.push(row);
        prev = Some((per_year, m.pv_spend.mean));
    }
    s.push_str(&table(&rows));
    s
}

/// The mean running spend of a full year: the years' means over the years'
/// length.
pub fn per_full_year(m: &MoneyJson) -> f64 {
    let years: f64 = m.years.iter().map(|y| y.share).sum();
    let spend: f64 = m.years.iter().map(|y| y.mean).sum();
    if years > 0.0 { spend / years } else { 0.0 }
}

fn signed(x: f64) -> String {
    if x >= 0.0 {
        format!("+{}", money(x))
    } else {
        format!("-{}", money(-x))
    }
}
