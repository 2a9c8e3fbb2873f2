//! The stores planners' figures (fill rate, mean backorders, mean spares
//! on hand, stock-outs per year) against the Poisson base-stock formulas
//! of Palm's theorem on an exponential fleet, and the yearly stock-out
//! count against its definition.

mod common;

use common::model;
use wearout::analytic::PoissonPipeline;
use wearout::sim::{Simulator, Workspace};
use wearout::summary::{Accumulator, Moments, Summary};

/// 500 units of one position each, exponential lives of mean 100 000 h
/// (demand 0.005 an hour, Poisson while few wait), a fixed lead time of
/// 500 h: a pipeline of mean 2.5; base stock 3; replacements take no time.
fn fleet(horizon: f64, money: &str) -> wearout::model::Model {
    fleet_with_stock(horizon, money, 3)
}

fn fleet_with_stock(horizon: f64, money: &str, stock: u32) -> wearout::model::Model {
    model(&format!(
        r#"
[scenario]
name = "palm"
horizon_hours = {horizon}
downtime_penalty_per_hour = 1
target_availability = 0.5
seed = 31

[parts.seal]
life = {{ dist = "exponential", mean = 100000 }}
price = 50
labour = {{ planned = 0, unplanned = 0 }}
duration_hours = {{ planned = 0, unplanned = 0 }}
lead_time = {{ dist = "fixed", hours = 500 }}
holding = {{ per_spare_hour = 0.01 }}

[units.pump]
positions = ["seal"]

[[fleet]]
unit = "pump"
count = 500

[policies.base]
seal = {{ rule = "run_to_failure", stock = {stock} }}
{money}
"#
    ))
}

#[test]
fn fill_rate_and_backorders_follow_palms_theorem() {
    // Palm's theorem (Palm 1938; Feeney & Sherbrooke 1966, Management
    // Science 12(5):391-411): with Poisson demand and one-for-one
    // resupply the number on order is Poisson with mean demand x mean lead
    // time, here 2.5. With base stock s = 3 (values computed with scipy,
    // copied from the project's check values, "poisson_spares_m2.5"):
    // fill rate P(X <= s - 1) = 0.5438131159, expected backorders
    // E[(X - s)+] = 0.4131956097, and the mean spares on hand
    // E[(s - X)+] = s - m + EBO = 0.9131956097.
    // The demand here comes from a finite fleet (a waiting position does
    // not fail again), lower by about EBO / 500 = 0.08 %, and the run
    // starts with nothing on order (a transient of one lead time in 400 000
    // h): both far inside the tolerance of 4 standard errors across trials
    // plus 500 / 400 000 of the figure for the transient.
    let (fill, ebo, s) = (0.5438131159, 0.4131956097, 3u32);
    let on_hand = f64::from(s) - 2.5 + ebo;
    let pipe = PoissonPipeline::new(2.5).expect("a mean");
    assert!((pipe.fill_rate(s) - fill).abs() < 1e-9);
    assert!((pipe.backorders(s) - ebo).abs() < 1e-9);
    let h = 400_000.0;
    let m = fleet(h, "");
    let p = m.policy("base").unwrap();
    let sim = Simulator::new(&m, p);
    let mut ws = Workspace::default();
    let mut acc = Accumulator::for_model(&m);
    let mut fill_trial = Moments::default();
    for t in 0..60 {
        let o = sim.run(t, &mut ws);
        let q = &o.parts[0];
        assert!(q.demands > 0 && q.demands >= q.stockouts);
        fill_trial.push(1.0 - f64::from(q.stockouts) / f64::from(q.demands));
        acc.push(&o);
    }
    let sum = Summary::new(&m, p, 0, acc, m.target);
    let pm = &sum.acc.per_part[0];
    let transient = 500.0 / h;
    let got = pm.fill_rate().expect("demands");
    assert!(
        (got - fill).abs() <= 4.0 * fill_trial.se() + transient,
        "fill rate {got} ± {} vs {fill}",
        fill_trial.se()
    );
    let back = pm.backorder_hours.mean() / h;
    let back_se = pm.backorder_hours.se() / h;
    assert!(
        (back - ebo).abs() <= 4.0 * back_se + transient * f64::from(s),
        "mean backorders {back} ± {back_se} vs {ebo}"
    );
    let shelf = pm.shelf_hours.mean() / h;
    let shelf_se = pm.shelf_hours.se() / h;
    eprintln!(
        "fill {got} ± {} (Palm {fill}); backorders {back} ± {back_se} (Palm {ebo}); on hand {shelf} ± {shelf_se} (Palm {on_hand})",
        fill_trial.se()
    );
    assert!(
        (shelf - on_hand).abs() <= 4.0 * shelf_se + transient * f64::from(s),
        "mean on hand {shelf} ± {shelf_se} vs {on_hand}"
    );
}

#[test]
fn stockout_years_count_whole_years_with_a_stockout() {
    // Definition (docs/scenario-format.md): a year counts when at least
    // one demand in it found the shelf empty; only whole years. With a
    // year of 8 760 h (no [money]) a horizon of 30 000 h holds 3 whole
    // years; with hours_per_year = 7 000, 4. Here stock-outs are frequent
    // (fill rate about 54 %, about 2 000 demands a year): every whole
    // year has one, and no trial can count more whole years than it has.
    for (money, whole) in [("", 3u32), ("[money]\nhours_per_year = 7000\n", 4)] {
        let m = fleet(30_000.0, money);
        assert_eq!(m.whole_years(), whole);
        let p = m.policy("base").unwrap();
        let sim = Simulator::new(&m, p);
        let mut ws = Workspace::default();
        for t in 0..20 {
            let o = sim.run(t, &mut ws);
            assert_eq!(o.parts[0].stockout_years, whole, "trial {t}");
        }
    }
    // With stock far above the pipeline, no year has a stock-out.
    let rich = fleet_with_stock(30_000.0, "", 40);
    let p = rich.policy("base").unwrap();
    let sim = Simulator::new(&rich, p);
    let mut ws = Workspace::default();
    for t in 0..20 {
        let o = sim.run(t, &mut ws);
        assert_eq!(o.parts[0].stockouts, 0);
        assert_eq!(o.parts[0].stockout_years, 0, "trial {t}");
    }
}
