//! Invariants that hold on every trial, and reproducibility: the model's
//! bookkeeping identities (common practice of discrete-event simulation:
//! every moment of every unit is counted exactly once; base stock keeps
//! on hand + on order - waiting = S, Sherbrooke 2004 ch. 2), and results
//! that do not depend on threads, blocks or which trials ran together.

mod common;

use common::load;

use wearout::model::Model;
use wearout::run::{BLOCK, Quiet, evaluate};
use wearout::sim::{Simulator, Workspace};

/// A scenario that exercises block replacement, a safety-critical part with
/// a hard limit, several positions of one part type, zero stock, and every
/// life family.
const MIXED: &str = include_str!("data/mixed.toml");

/// Ties everywhere in three sites with a depot, lateral supply and rotables
/// (fixed and zero times, one repair channel, condemnation chances of 0, 1
/// and between, no stock at some places), and the same without a depot.
const TIES_NETWORK: &str = include_str!("data/ties-network.toml");
const TIES_SITES: &str = include_str!("data/ties-sites.toml");

/// The books of units up: every hour of the horizon has one count of units
/// up, fleet-wide and at each site, and those counts times their hours are
/// the units' up hours (from their operating clocks); each site's up hours
/// add up to the fleet's. (Common practice of discrete-event simulation:
/// two independent books of one quantity.)
fn units_up_add_up(m: &Model, o: &wearout::outcome::TrialOutcome, ctx: &str) {
    let h = m.horizon;
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * h * m.units.len() as f64;
    assert_eq!(o.units_up.len(), m.units.len() + 1, "{ctx}");
    assert!(
        close(o.units_up.iter().sum(), h),
        "{ctx}: hours by units up"
    );
    let up: f64 = o
        .units_up
        .iter()
        .enumerate()
        .map(|(k, x)| k as f64 * x)
        .sum();
    assert!(close(up, o.up_hours), "{ctx}: {up} vs {}", o.up_hours);
    if m.has_sites() {
        let units = m.site_units();
        assert_eq!(o.sites.len(), m.sites.len());
        let mut sum = 0.0;
        for (i, s) in o.sites.iter().enumerate() {
            assert_eq!(s.units_up.len(), units[i] + 1);
            assert!(close(s.units_up.iter().sum(), h), "{ctx}: site {i}");
            let up: f64 = s
                .units_up
                .iter()
                .enumerate()
                .map(|(k, x)| k as f64 * x)
                .sum();
            assert!(
                close(up, s.up_hours),
                "{ctx}: site {i}: {up} vs {}",
                s.up_hours
            );
            if let Some(r) = &m.ready {
                // Hours with at least k up, from the distribution.
                let k = r.at_least[i] as usize;
                let at_least: f64 = s.units_up[k..].iter().sum();
                assert!(
                    close(at_least, s.ready_hours),
                    "{ctx}: site {i} ready hours"
                );
                // Every site ready at once is no more than any one site ready.
                assert!(o.readiness * h <= s.ready_hours + 1e-9 * h, "{ctx}");
            }
            sum += s.up_hours;
        }
        assert!(close(sum, o.up_hours), "{ctx}: sites' up hours");
        // The sites' backorders are the part types' at the sites' stores.
        let by_site: f64 = o.sites.iter().map(|s| s.backorder_hours).sum();
        let by_part: f64 = o.parts.iter().map(|p| p.backorder_hours).sum();
        assert!(
            close(by_site, by_part),
            "{ctx}: backorders {by_site} vs {by_part}"
        );
    }
    assert!((0.0..=1.0).contains(&o.readiness), "{ctx}");
}

#[test]
fn every_trial_keeps_the_books() {
    let mixed = common::model(MIXED);
    let network = common::model(TIES_NETWORK);
    let sites = common::model(TIES_SITES);
    let cases: Vec<(Model, &str)> = vec![
        (load("b1"), "reference"),
        (load("b0"), "reference"),
        (load("demo"), "current"),
        (load("demo"), "reference"),
        (mixed.clone(), "blocky"),
        (mixed, "aged"),
        (load("b2"), "reference"),
        (network.clone(), "grid"),
        (network, "aged"),
        (sites.clone(), "grid"),
        (sites, "aged"),
    ];
    for (m, name) in &cases {
        let sim = Simulator::new(m, m.policy(name).unwrap());
        let mut ws = Workspace::default();
        let unit_hours = m.units.len() as f64 * m.horizon;
        let counting = Simulator::new(m, m.policy(name).unwrap()).counting_units_up();
        for t in 0..40 {
            // run_checked asserts the stock identities (every site and the
            // depot), the hold counts and that every unit-hour so far is up
            // or down, after every event.
            let o = sim.run_checked(t, &mut ws);
            let c = counting.run_checked(t, &mut ws);
            units_up_add_up(m, &c, &format!("{}/{name} trial {t}", m.name));
            // Counting units up changes nothing else.
            assert_eq!(
                (c.availability, &c.parts, c.readiness),
                (o.availability, &o.parts, o.readiness)
            );
            let total = o.up_hours + o.down_hours();
            assert!(
                (total - unit_hours).abs() <= 1e-7 * unit_hours,
                "{}/{name} trial {t}: up {} + down {} != {unit_hours}",
                m.name,
                o.up_hours,
                o.down_hours()
            );
            let charged: f64 = o.parts.iter().map(|p| p.down_hours).sum();
            assert!((charged - o.down_hours()).abs() <= 1e-7 * unit_hours);
            assert!((0.0..=1.0).contains(&o.availability));
            // The checked run and the plain run agree exactly.
            assert_eq!(o, sim.run(t, &mut ws));
        }
    }
}

#[test]
fn safety_critical_part_is_held_at_its_hard_limit() {
    // A part that cannot fail before 3000 h (Weibull location), a hard limit
    // of 2500 h, age replacement at 2000 h, no spares and a 5000 h lead time.
    // Due at 2000 h, it waits for a spare while still working; at 2500 h it
    // reaches its hard limit and the unit is held down waiting for the spare,
    // which comes at 7000 h, after the 6000 h horizon. So: 3500 h down
    // waiting, no failure, no replacement. (MODEL.md: never kept past the
    // hard limit.)
    let text = r#"
[scenario]
name = "limit"
horizon_hours = 6000
downtime_penalty_per_hour = 1
target_availability = 0.5
[parts.s]
life = { dist = "weibull", shape = 2, scale = 1000, location = 3000 }
price = 1
labour = { planned = 1, unplanned = 1 }
duration_hours = { planned = 1, unplanned = 1 }
lead_time = { dist = "fixed", hours = 5000 }
holding = { per_spare_hour = 0 }
hard_limit_hours = 2500
safety_critical = true
[units.u]
positions = ["s"]
[[fleet]]
unit = "u"
count = 1
[policies.x]
s = { rule = "age", interval_hours = 2000, stock = 0 }
"#;
    let m = common::model(text);
    let sim = Simulator::new(&m, m.policy("x").unwrap());
    let o = sim.run_checked(0, &mut Workspace::default());
    assert_eq!(o.parts[0].failures, 0);
    assert_eq!(o.parts[0].planned, 0);
    assert_eq!(o.parts[0].orders, 1);
    assert_eq!(o.parts[0].stockouts, 1);
    assert!((o.down_waiting - 3500.0).abs() < 1e-9, "{o:?}");
    assert!((o.up_hours - 2500.0).abs() < 1e-9);
}

#[test]
fn thread_count_never_changes_a_result() {
    let m = load("b1");
    let p = m.policy("reference").unwrap().clone();
    // Trials on both sides of a block boundary, so the fold across blocks
    // is compared too.
    let trials = (BLOCK - 150)..(BLOCK + 150);
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let two = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .build()
        .unwrap();
    let a = one.install(|| evaluate(&m, &p, trials.clone(), m.target, &Quiet).unwrap());
    let b = two.install(|| evaluate(&m, &p, trials.clone(), m.target, &Quiet).unwrap());
    assert_eq!(a, b);
}

#[test]
fn a_trial_alone_equals_the_same_trial_in_a_batch() {
    let m = load("b1");
    let p = m.policy("reference").unwrap().clone();
    let batch = evaluate(&m, &p, 0..2100, m.target, &Quiet).unwrap();
    for k in [0u64, 1, 1023, 1024, 2099] {
        let alone = evaluate(&m, &p, k..k + 1, m.target, &Quiet).unwrap();
        assert_eq!(
            alone.acc.trial_availability[0],
            batch.acc.trial_availability[k as usize]
        );
        assert_eq!(alone.acc.trial_total[0], batch.acc.trial_total[k as usize]);
    }
}

#[test]
fn policies_share_their_futures() {
    // Common random numbers: the k-th part fitted in a position gets the
    // k-th life of that position's stream whatever the policy, so a policy
    // that only changes stock levels sees the same initial-part failures.
    let m = load("b0");
    let mut rich = m.policy("reference").unwrap().clone();
    for p in &mut rich.parts {
        p.stock.add(5, false);
    }
    let base = m.policy("reference").unwrap().clone();
    let a = evaluate(&m, &base, 0..200, m.target, &Quiet).unwrap();
    let b = evaluate(&m, &rich, 0..200, m.target, &Quiet).unwrap();
    // More stock never makes a trial less available on these futures
    // by much; on average it must help.
    assert!(b.acc.availability.mean() > a.acc.availability.mean());
    // Paired differences are far less noisy than the spread of either.
    let diffs: Vec<f64> = a
        .acc
        .trial_availability
        .iter()
        .zip(&b.acc.trial_availability)
        .map(|(x, y)| y - x)
        .collect();
    let mean = diffs.iter().sum::<f64>() / diffs.len() as f64;
    let sd =
        (diffs.iter().map(|d| (d - mean).powi(2)).sum::<f64>() / (diffs.len() - 1) as f64).sqrt();
    assert!(sd < a.acc.availability.sd());
}

/// Relative closeness for sums whose terms the two loops add in another
/// order (rounding only).
fn same_sum(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs()).max(1.0)
}

/// Ties everywhere: every part new, so identical units fall due on the
/// same instants; block replacement on two positions of one type at the
/// same readings; spares that arrive at once (lead time 0) or after a
/// fixed time; zero repair times; no stock at all for one part type; and a
/// safety-critical part whose hard limit falls inside its block interval's
/// waits.
const TIES: &str = include_str!("data/ties.toml");

#[test]
fn the_event_loops_shortcuts_change_no_result() {
    // The loop finishes a replacement nothing can interrupt within its
    // demand's event, and books arrivals nobody waits for when the store
    // is next used. Run with every completion and arrival as an event of
    // its own, every trial must come out the same: counts exactly, sums up
    // to the order of their additions. (Internal consistency check of the
    // model's rules; common practice for event-list optimisations.)
    let mixed = wearout::scenario::parse("mixed.toml", MIXED).expect("mixed parses");
    let ties = wearout::scenario::parse("ties.toml", TIES).expect("ties parses");
    let network = common::model(TIES_NETWORK);
    let sites = common::model(TIES_SITES);
    let cases = [
        (load("b1"), "reference"),
        (load("b0"), "reference"),
        (load("demo"), "reference"),
        (mixed.clone(), "blocky"),
        (mixed, "aged"),
        (ties.clone(), "grid"),
        (ties, "aged"),
        (load("b2"), "reference"),
        (network.clone(), "grid"),
        (network, "aged"),
        (sites.clone(), "grid"),
        (sites, "aged"),
    ];
    for (m, name) in &cases {
        let p = m.policy(name).unwrap().clone();
        let fast = Simulator::new(m, &p);
        let slow = Simulator::new(m, &p).with_all_events();
        let (mut w1, mut w2) = (Workspace::default(), Workspace::default());
        let mut fewer = 0;
        for t in 0..300 {
            let a = fast.run(t, &mut w1);
            let b = slow.run_checked(t, &mut w2);
            assert!(a.events <= b.events);
            fewer += (a.events < b.events) as u32;
            let ctx = format!("{name}, trial {t}");
            for (x, y) in a.parts.iter().zip(&b.parts) {
                assert_eq!(
                    (x.failures, x.planned, x.stockouts, x.orders),
                    (y.failures, y.planned, y.stockouts, y.orders),
                    "{ctx}"
                );
                assert_eq!(
                    (x.repairs, x.condemned, x.repair_entries),
                    (y.repairs, y.condemned, y.repair_entries),
                    "{ctx}"
                );
                assert_eq!(
                    (x.requests, x.shipments, x.laterals),
                    (y.requests, y.shipments, y.laterals),
                    "{ctx}"
                );
                for (u, v) in [
                    (x.down_hours, y.down_hours),
                    (x.parts_cost, y.parts_cost),
                    (x.labour_planned, y.labour_planned),
                    (x.labour_unplanned, y.labour_unplanned),
                    (x.holding, y.holding),
                    (x.repair_planned, y.repair_planned),
                    (x.repair_failed, y.repair_failed),
                    (x.transport_cost, y.transport_cost),
                    (x.repair_hours, y.repair_hours),
                    (x.turnaround_hours, y.turnaround_hours),
                    (x.backorder_hours, y.backorder_hours),
                    (x.depot_backorder_hours, y.depot_backorder_hours),
                    (x.shelf_hours, y.shelf_hours),
                ] {
                    assert!(same_sum(u, v), "{ctx}: {u} vs {v}");
                }
            }
            for (x, y) in a.sites.iter().zip(&b.sites) {
                assert_eq!(
                    (x.stockouts, x.laterals_given, x.laterals_taken),
                    (y.stockouts, y.laterals_given, y.laterals_taken),
                    "{ctx}"
                );
                assert!(same_sum(x.up_hours, y.up_hours), "{ctx}");
                assert!(same_sum(x.ready_hours, y.ready_hours), "{ctx}");
                assert!(same_sum(x.backorder_hours, y.backorder_hours), "{ctx}");
                for (u, v) in x.units_up.iter().zip(&y.units_up) {
                    assert!(same_sum(*u, *v), "{ctx}: {u} vs {v}");
                }
            }
            assert_eq!(a.sites.len(), b.sites.len());
            assert!(same_sum(a.readiness, b.readiness), "{ctx}");
            for (u, v) in [
                (a.availability, b.availability),
                (a.down_waiting, b.down_waiting),
                (a.down_unplanned, b.down_unplanned),
                (a.down_planned, b.down_planned),
            ] {
                assert!(same_sum(u, v), "{ctx}: {u} vs {v}");
            }
        }
        // The shortcuts were taken (else this test checks nothing).
        assert!(
            fewer > 250,
            "{name}: shortcuts in only {fewer} of 300 trials"
        );
    }
}
