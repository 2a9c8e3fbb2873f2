//! Money over time (MODEL.md, "Money over time") checked against closed
//! forms and against the arithmetic it must add up to: present value at
//! rate 0, years adding up to the horizon, a continuous annuity, and the
//! renewal rate of run-to-failure exponential parts.

mod common;

use common::{load, model, scenario_text};
use wearout::model::Model;
use wearout::outcome::TrialOutcome;
use wearout::sim::{Simulator, Workspace};
use wearout::summary::{Accumulator, Summary};

/// Trials `0..n` of the model's reference policy.
fn outcomes(m: &Model, policy: &str, n: u64) -> Vec<TrialOutcome> {
    let p = m.policy(policy).expect("policy exists");
    let sim = Simulator::new(m, p);
    let mut ws = Workspace::default();
    (0..n).map(|t| sim.run(t, &mut ws)).collect()
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * a.abs().max(b.abs()).max(1.0)
}

/// B2 with its `[money]` table's discount rate replaced.
fn b2_at_rate(rate: &str) -> Model {
    let text =
        scenario_text("b2").replace("discount_rate = 0.06", &format!("discount_rate = {rate}"));
    assert!(
        text.contains(&format!("discount_rate = {rate}")),
        "b2 has a discount rate"
    );
    model(&text)
}

#[test]
fn present_value_at_rate_zero_is_spend_trial_by_trial() {
    // Definition (MODEL.md, "Money over time"): at r = 0 every discount
    // factor (1 + r)^(-t / h_y) is 1, so the present value of spend is the
    // spend itself, capital included. Sums in another order: agreement to
    // a relative 1e-12.
    let m = b2_at_rate("0.0");
    let p = m.policy("reference").unwrap();
    let capital = p.initial_stock_capital(&m);
    for (t, o) in outcomes(&m, "reference", 60).iter().enumerate() {
        let pv = o.cost(wearout::model::CostBasis::PvSpend, capital);
        let spend = o.cost(wearout::model::CostBasis::Spend, capital);
        assert!(close(pv, spend, 1e-12), "trial {t}: pv {pv} spend {spend}");
        for (q, part) in o.parts.iter().enumerate() {
            assert!(
                close(part.pv_spend, part.spend(), 1e-12),
                "trial {t} part {q}: pv {} spend {}",
                part.pv_spend,
                part.spend()
            );
        }
    }
}

#[test]
fn the_years_add_up_to_the_horizon_trial_by_trial() {
    // The years partition [0, H) (MODEL.md: year y holds the costs at clock
    // time in [(y-1) h_y, y h_y), holding split exactly), so per part type
    // and in all the years' running spends add up to the horizon's.
    let m = load("b2");
    let money = m.money.as_ref().expect("b2 carries [money]");
    let years = money.years(m.horizon);
    assert_eq!(years, 8, "30 000 h at 4 000 h a year: 7 years and a half");
    let np = m.parts.len();
    for (t, o) in outcomes(&m, "reference", 60).iter().enumerate() {
        assert_eq!(o.year_spend.len(), years * np);
        let sum: f64 = (0..years).map(|y| o.spend_in_year(y)).sum();
        assert!(
            close(sum, o.spend(), 1e-12),
            "trial {t}: years {sum} horizon {}",
            o.spend()
        );
        for (q, part) in o.parts.iter().enumerate() {
            let s: f64 = (0..years).map(|y| o.year_spend[y * np + q]).sum();
            assert!(
                close(s, part.spend(), 1e-12),
                "trial {t} part {q}: {s} vs {}",
                part.spend()
            );
        }
        // Discounting at a positive rate makes the present value smaller
        // than the spend, and larger than the spend discounted from the
        // horizon (each cost falls within it).
        let d_end = 1.06f64.powf(-m.horizon / money.hours_per_year);
        let pv = o.pv_spend();
        assert!(
            pv < o.spend() && pv > o.spend() * d_end,
            "trial {t}: pv {pv}"
        );
    }
}

/// A fleet whose parts never wear out within the horizon: only holding.
fn idle_fleet(rate: f64, hours_per_year: f64, horizon: f64) -> Model {
    model(&format!(
        r#"
[scenario]
name = "idle"
horizon_hours = {horizon}
downtime_penalty_per_hour = 10
target_availability = 0.5
seed = 5

[parts.bolt]
life = {{ dist = "weibull", shape = 1.0, scale = 1e15 }}
price = 1000
labour = {{ planned = 0, unplanned = 0 }}
duration_hours = {{ planned = 1, unplanned = 1 }}
lead_time = {{ dist = "fixed", hours = 10 }}
holding = {{ per_spare_hour = 0.05 }}

[units.frame]
positions = ["bolt"]

[[fleet]]
unit = "frame"
count = 3

[policies.held]
bolt = {{ rule = "run_to_failure", stock = 4 }}

[money]
hours_per_year = {hours_per_year}
discount_rate = {rate}
yearly_budget = 1000
"#
    ))
}

#[test]
fn holding_alone_is_a_continuous_annuity() {
    // Park, Contemporary Engineering Economics (continuous compounding,
    // continuous funds flow): a flow of A per year for N years at the
    // effective yearly rate r (nominal continuous rate ln(1 + r)) is worth
    // P = A (1 - e^(-ln(1+r) N)) / ln(1+r) today. Here A = 4 spares x 0.05
    // per spare-hour x h_y, N = H / h_y, capital 4 x 1000 at time 0.
    for (rate, hy, horizon) in [
        (0.06, 4000.0, 30_000.0),
        (0.25, 8760.0, 20_000.0),
        (-0.03, 2000.0, 9_000.0),
    ] {
        let m = idle_fleet(rate, hy, horizon);
        let p = m.policy("held").unwrap();
        let capital = p.initial_stock_capital(&m);
        assert_eq!(capital, 4000.0);
        let a = 4.0 * 0.05 * hy;
        let c = f64::ln_1p(rate);
        let n = horizon / hy;
        let annuity = a * (1.0 - (-c * n).exp()) / c;
        let money = m.money.as_ref().unwrap();
        for o in outcomes(&m, "held", 5) {
            assert_eq!(o.parts[0].failures, 0, "no wear within the horizon");
            let pv = o.cost(wearout::model::CostBasis::PvSpend, capital);
            assert!(
                close(pv, annuity + capital, 1e-9),
                "rate {rate}: pv {pv}, annuity {annuity} + capital {capital}"
            );
            // Each year holds A times its share of a year.
            for y in 0..money.years(horizon) {
                let want = a * money.year_share(y, horizon);
                assert!(
                    close(o.year_spend[y], want, 1e-9),
                    "year {y}: {} vs {want}",
                    o.year_spend[y]
                );
            }
        }
        // The budget of 1 000 a year is below every year's holding (at
        // least 4 x 0.05 x 2 000 x 1/2 = 200 for the shortest partial year,
        // 400 a full year of 2 000 h): checked through the summary.
        let mut acc = Accumulator::for_model(&m);
        for o in outcomes(&m, "held", 20) {
            acc.push(&o);
        }
        let s = Summary::new(&m, p, 0, acc, m.target);
        let f = s.money().expect("money figures");
        for (y, yf) in f.years.iter().enumerate() {
            let within = o_within(
                a * money.year_share(y, horizon),
                1000.0 * money.year_share(y, horizon),
            );
            assert_eq!(yf.within_budget.unwrap().value, within, "year {}", yf.year);
        }
        assert!(close(f.pv_spend.mean, annuity + capital, 1e-9));
        assert_eq!(f.pv_spend.se, 0.0, "the same in every trial");
    }
}

/// 1 when a spend is within its budget, else 0.
fn o_within(spend: f64, budget: f64) -> f64 {
    if spend <= budget * (1.0 + 1e-12) {
        1.0
    } else {
        0.0
    }
}

#[test]
fn run_to_failure_exponential_spends_at_the_renewal_rate() {
    // Renewal theory (the Poisson process, e.g. Ross, Introduction to
    // Probability Models, ch. 7): exponential lives renewed at once fail at
    // rate 1 / mean in every year, new or aged, so each year's expected
    // parts spend is price x units x h_y / mean life. With instant supply
    // (lead time 0, replacement in 0 h) and no labour or holding the
    // yearly running spend is the parts bought. Tolerance: 4 standard
    // errors of the mean across trials (fixed seed).
    let text = r#"
[scenario]
name = "pumps"
horizon_hours = 26000
downtime_penalty_per_hour = 10
target_availability = 0.5
seed = 77

[parts.pump]
life = { dist = "exponential", mean = 5000 }
price = 300
labour = { planned = 0, unplanned = 0 }
duration_hours = { planned = 0, unplanned = 0 }
lead_time = { dist = "fixed", hours = 0 }
holding = { per_spare_hour = 0 }

[units.station]
positions = ["pump", "pump"]

[[fleet]]
unit = "station"
count = 10

[policies.rtf]
pump = { rule = "run_to_failure", stock = 1 }

[money]
hours_per_year = 8000
discount_rate = 0.05
"#;
    let m = model(text);
    let p = m.policy("rtf").unwrap();
    let mut acc = Accumulator::for_model(&m);
    for o in outcomes(&m, "rtf", 2000) {
        acc.push(&o);
    }
    let s = Summary::new(&m, p, 0, acc, m.target);
    let f = s.money().unwrap();
    let money = m.money.as_ref().unwrap();
    let per_year = 300.0 * 20.0 * 8000.0 / 5000.0;
    assert_eq!(f.years.len(), 4);
    for (y, yf) in f.years.iter().enumerate() {
        let want = per_year * money.year_share(y, m.horizon);
        assert!(
            (yf.spend.mean - want).abs() <= 4.0 * yf.spend.se,
            "year {}: {} ± {} vs {want}",
            yf.year,
            yf.spend.mean,
            yf.spend.se
        );
    }
    // The present value of a Poisson stream of costs at rate lambda c per
    // hour: lambda c (1 - e^(-delta H)) / delta (the continuous annuity of
    // its mean, by Campbell's theorem), plus the capital.
    let delta = f64::ln_1p(0.05) / 8000.0;
    let lambda_c = 300.0 * 20.0 / 5000.0;
    let pv = lambda_c * (1.0 - (-delta * m.horizon).exp()) / delta + 300.0;
    assert!(
        (f.pv_spend.mean - pv).abs() <= 4.0 * f.pv_spend.se,
        "pv {} ± {} vs {pv}",
        f.pv_spend.mean,
        f.pv_spend.se
    );
}

#[test]
fn the_frontier_searches_on_present_value() {
    // `[search] cost = "pv_spend"`: the frontier's cost is the present value
    // of spend, capital included (MODEL.md, "Money over time"). At 8 % a
    // year over four years of 5 000 h it lies between the spend discounted
    // from the horizon and the spend itself, for every policy reported, and
    // it is the mean of the per-trial present values.
    let text = scenario_text("b0").replacen("cost = \"spend\"", "cost = \"pv_spend\"", 1)
        + "\n[money]\nhours_per_year = 5000\ndiscount_rate = 0.08\n";
    let m = model(&text);
    let config = wearout::frontier::FrontierConfig {
        screen_trials: 150,
        ..wearout::frontier::FrontierConfig::new(150, 300, m.target)
    };
    let r = wearout::frontier::search(&m, &config, &wearout::run::Quiet).expect("search runs");
    assert!(!r.points.is_empty());
    assert_eq!(r.cost.basis, wearout::model::CostBasis::PvSpend);
    let d_end = 1.08f64.powf(-m.horizon / 5000.0);
    for pt in &r.points {
        let s = &pt.costed.summary;
        let capital = s.initial_stock_capital;
        let spend = s.acc.spend.mean() + capital;
        let pv = pt.costed.cost.mean;
        assert!(
            pv < spend && pv > capital + (spend - capital) * d_end,
            "{pv} vs {spend}"
        );
        let per_trial = s.trial_costs(wearout::model::CostBasis::PvSpend);
        let mean = per_trial.iter().sum::<f64>() / per_trial.len() as f64;
        assert!(close(mean, pv, 1e-12), "{mean} vs {pv}");
    }
}
