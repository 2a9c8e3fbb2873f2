//! Agreement with an independent implementation of the reference model.
//!
//! The figures below are those an implementation written apart from this
//! project produced for the benchmark fleets' reference policies (B1: 2000
//! trials, B0: 20000 trials), following the same model and conventions with
//! its own random streams. Means must agree within sampling error:
//! |ours - theirs| <= 3 sqrt(se_ours^2 + se_theirs^2).

mod common;

use common::load;

use wearout::summary::{Moments, Summary};

fn agree(what: &str, ours: &Moments, theirs: f64, se_theirs: f64) {
    let se = (ours.se().powi(2) + se_theirs.powi(2)).sqrt();
    let gap = (ours.mean() - theirs).abs();
    assert!(
        gap <= 3.0 * se,
        "{what}: ours {} ± {}, theirs {theirs} ± {se_theirs}: gap {gap} > 3 x {se}",
        ours.mean(),
        ours.se()
    );
}

fn check_common(s: &Summary, peer: &[(f64, f64); 14]) {
    let a = &s.acc;
    agree("availability", &a.availability, peer[0].0, peer[0].1);
    agree("total cost", &a.total, peer[1].0, peer[1].1);
    agree("parts bought", &a.parts_cost, peer[2].0, peer[2].1);
    agree("planned labour", &a.labour_planned, peer[3].0, peer[3].1);
    agree(
        "unplanned labour",
        &a.labour_unplanned,
        peer[4].0,
        peer[4].1,
    );
    agree("downtime penalty", &a.downtime_cost, peer[5].0, peer[5].1);
    agree("holding", &a.holding, peer[6].0, peer[6].1);
    agree("failures", &a.failures, peer[7].0, peer[7].1);
    agree("planned", &a.planned, peer[8].0, peer[8].1);
    agree("store empty", &a.stockouts, peer[9].0, peer[9].1);
    agree("orders", &a.orders, peer[10].0, peer[10].1);
    agree("down waiting", &a.down_waiting, peer[11].0, peer[11].1);
    agree("down unplanned", &a.down_unplanned, peer[12].0, peer[12].1);
    agree("down planned", &a.down_planned, peer[13].0, peer[13].1);
}

#[test]
fn b1_reference_agrees_with_peer() {
    let m = load("b1");
    let s = common::run(&m, "reference", 2000);
    // Peer figures, B1 reference policy, 2000 trials.
    check_common(
        &s,
        &[
            (0.91406, 0.00013),
            (95_171_899.0, 79_339.0),
            (43_438_876.0, 18_237.0),
            (968_295.0, 1_159.0),
            (4_295_004.0, 3_696.0),
            (46_407_731.0, 69_736.0),
            (61_992.0, 226.0),
            (777.75, 0.45),
            (295.07, 0.26),
            (697.96, 0.50),
            (1078.12, 0.39),
            (86_330.6, 151.4),
            (13_260.6, 9.6),
            (3_537.1, 4.0),
        ],
    );
    // The initial stock's capital is exact: 2 engines, 2 transmissions,
    // 3 final drives, 4 pumps, 2 alternators, 2 radiators.
    assert_eq!(s.initial_stock_capital, 711_000.0);
    // The chance of at least 0.90: peer 0.9865 (Wilson 0.9804 to 0.9907).
    let c = s.chance();
    let se = (c.value * (1.0 - c.value) / 2000.0 + 0.9865 * 0.0135 / 2000.0).sqrt();
    assert!((c.value - 0.9865).abs() <= 3.0 * se, "chance {c:?}");
}

#[test]
fn b0_reference_agrees_with_peer() {
    let m = load("b0");
    let s = common::run(&m, "reference", 20_000);
    // Peer figures, B0 reference policy, 20000 trials.
    check_common(
        &s,
        &[
            (0.98033, 0.00006),
            (3_105_145.0, 2_610.0),
            (2_160_960.0, 959.0),
            (67_049.0, 67.0),
            (132_191.0, 198.0),
            (708_120.0, 1_995.0),
            (36_825.0, 34.0),
            (52.31, 0.04),
            (31.81, 0.02),
            (11.61, 0.02),
            (84.23, 0.03),
            (1_561.7, 6.4),
            (558.5, 0.6),
            (240.2, 0.2),
        ],
    );
    assert_eq!(s.initial_stock_capital, 116_000.0);
    let c = s.chance();
    let se = (c.value * (1.0 - c.value) / 20_000.0 * 2.0).sqrt();
    assert!((c.value - 0.8977).abs() <= 3.0 * se, "chance {c:?}");
}
