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

/// A figure the peer gives without a standard error: its se taken as ours
/// times `scale` (sqrt of our trials over the peer's 4 000: the same spread
/// over fewer trials).
fn agree_no_se(what: &str, ours: &Moments, theirs: f64, scale: f64) {
    agree(what, ours, theirs, ours.se() * scale);
}

#[test]
fn b2_reference_agrees_with_peer() {
    // Peer figures, B2 reference policy (MODEL.md, second part), 4 000
    // trials, seed 1, copied from /work/shared/peer-figures.md ("B2, bus
    // operator with three garages and a depot"). Ours: 20 000 trials of the
    // scenario's own seed, the money-over-time figures (years, the budget,
    // present value) included.
    let m = load("b2");
    let p = m.policy("reference").expect("reference policy").clone();
    let n = 20_000u64;
    let sim = wearout::sim::Simulator::new(&m, &p);
    let mut acc = wearout::summary::Accumulator::for_model(&m);
    // Per trial, figures the summary keeps only as sums: each site's
    // availability, the shares of the horizon with 48, 47, 46 and 45 buses
    // up, and fleet-wide counts of the rotable and depot flows.
    let units = m.site_units();
    let mut site_avail = [Moments::default(); 3];
    let mut shares = [Moments::default(); 4];
    let mut counts = [
        ("rotable removals", Moments::default(), 271.229, 0.158),
        ("repairs started", Moments::default(), 230.073, 0.155),
        ("condemned", Moments::default(), 40.120, 0.096),
        ("lateral transfers", Moments::default(), 44.284, 0.110),
        ("depot shipments", Moments::default(), 1608.314, 0.336),
        ("depot requests", Moments::default(), 1611.637, 0.336),
    ];
    assert!(wearout::run::for_each_trial(
        &sim,
        0..n,
        &wearout::run::Quiet,
        |_, o| {
            acc.push(o);
            for (i, s) in o.sites.iter().enumerate() {
                site_avail[i].push(s.up_hours / (units[i] as f64 * m.horizon));
            }
            for (k, x) in shares.iter_mut().enumerate() {
                x.push(o.units_up[48 - k] / m.horizon);
            }
            counts[0]
                .1
                .push(o.sum(|q| (q.repair_entries + q.condemned) as f64));
            counts[1].1.push(o.sum(|q| q.repairs as f64));
            counts[2].1.push(o.sum(|q| q.condemned as f64));
            counts[3].1.push(o.sum(|q| q.laterals as f64));
            counts[4].1.push(o.sum(|q| q.shipments as f64));
            counts[5].1.push(o.sum(|q| q.requests as f64));
        }
    ));
    let s = wearout::summary::Summary::new(&m, &p, 0, acc, m.target);
    let a = &s.acc;
    agree("availability", &a.availability, 0.98766, 0.00005);
    agree("readiness", &a.readiness, 0.98805, 0.00024);
    agree("parts bought", &a.parts_cost, 2_625_349.0, 2_115.0);
    agree("planned labour", &a.labour_planned, 228_554.0, 150.0);
    agree("unplanned labour", &a.labour_unplanned, 696_794.0, 562.0);
    agree("repair, planned", &a.repair_planned, 287_754.0, 435.0);
    agree("repair, failed", &a.repair_failed, 760_870.0, 1_191.0);
    // The peer's spend includes the initial capital, a constant.
    assert_eq!(s.initial_stock_capital, 330_600.0);
    agree("spend", &a.spend, 5_196_916.0 - 330_600.0, 2_446.0);
    agree("holding", &a.holding, 266_994.0, 302.0);
    agree("downtime penalty", &a.downtime_cost, 1_421_758.0, 5_844.0);
    agree("total", &a.total, 6_288_074.0, 6_464.0);
    agree("failures", &a.failures, 697.847, 0.372);
    agree("planned", &a.planned, 913.383, 0.170);
    agree("store empty", &a.stockouts, 89.573, 0.216);
    agree("purchase orders", &a.orders, 1380.122, 0.311);
    for (what, ours, theirs, se) in &counts {
        agree(what, ours, *theirs, *se);
    }
    agree("down waiting", &a.down_waiting, 10_601.9, 72.8);
    agree("down unplanned", &a.down_unplanned, 4_948.5, 3.1);
    agree("down planned", &a.down_planned, 2_221.5, 0.8);
    // Per garage: availability (no se given), the share of the horizon
    // with at least its ready count up, stock-outs (no se given).
    let scale = (n as f64 / 4000.0).sqrt();
    for (i, (name, avail, ready, ready_se, stockouts)) in [
        ("north", 0.98785, 0.99340, 0.00017, 39.09),
        ("east", 0.98762, 0.99614, 0.00014, 30.30),
        ("south", 0.98739, 0.99826, 0.00008, 20.18),
    ]
    .into_iter()
    .enumerate()
    {
        assert_eq!(m.sites[i].name, name);
        let site = &a.per_site[i];
        agree_no_se(
            &format!("{name} availability"),
            &site_avail[i],
            avail,
            scale,
        );
        // Hours over the horizon: the share's mean and se.
        let (mean, se) = (
            site.ready_hours.mean() / m.horizon,
            site.ready_hours.se() / m.horizon,
        );
        let both = (se * se + ready_se * ready_se).sqrt();
        assert!(
            (mean - ready).abs() <= 3.0 * both,
            "{name} ready share: ours {mean} ± {se}, theirs {ready} ± {ready_se}"
        );
        agree_no_se(
            &format!("{name} stock-outs"),
            &site.stockouts,
            stockouts,
            scale,
        );
    }
    for (k, theirs) in [0.6066, 0.2597, 0.0889, 0.0303].into_iter().enumerate() {
        agree_no_se(
            &format!("share with {} up", 48 - k),
            &shares[k],
            theirs,
            scale,
        );
    }
    // The chance of readiness at least 0.95: peer 0.9680 (Wilson 0.9621 to
    // 0.9730); binomial standard errors of both.
    let c = s.chance();
    let se = (c.value * (1.0 - c.value) / n as f64 + 0.968 * 0.032 / 4000.0).sqrt();
    assert!((c.value - 0.968).abs() <= 3.0 * se, "chance {c:?}");

    // Money over time (MODEL.md, 4 000 h a year, 6 %, budget 750 000).
    // Running spend per year, years 1-8 (year 8 is half a year); the peer
    // gives no standard errors for them: taken as ours scaled to its 4 000
    // trials.
    let books = a.money.as_ref().expect("b2 carries [money]");
    assert_eq!(books.years, 8);
    for (y, theirs) in [
        512_665.0, 650_340.0, 689_413.0, 680_028.0, 650_196.0, 668_105.0, 679_354.0, 336_214.0,
    ]
    .into_iter()
    .enumerate()
    {
        agree_no_se(
            &format!("running spend, year {}", y + 1),
            &books.spend[y],
            theirs,
            scale,
        );
    }
    // The chance that every year stays within 750 000 (year 8: 375 000):
    // peer 0.3335 (Wilson 0.3191 to 0.3483); binomial standard errors.
    let f = s.money().expect("money figures");
    let c = f.within_every_year.expect("a budget");
    let se = (c.value * (1.0 - c.value) / n as f64 + 0.3335 * 0.6665 / 4000.0).sqrt();
    assert!((c.value - 0.3335).abs() <= 3.0 * se, "within budget {c:?}");
    // Present value of spend at 6 %, capital included: 4 244 970 ± 2 001.
    let mut pv = Moments::default();
    for x in s.trial_costs(wearout::model::CostBasis::PvSpend) {
        pv.push(x);
    }
    agree("present value of spend", &pv, 4_244_970.0, 2_001.0);
}
