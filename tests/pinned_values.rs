//! Value stability: exact numbers that must not move unless a change means
//! them to (the habit of rand_distr's `tests/value_stability.rs`).
//!
//! - the first 64-bit words of one trial stream;
//! - the first samples of every life and lead-time family from a fixed
//!   stream;
//! - a SHA-256 digest of every per-trial result (availability, up and down
//!   hours by cause, every count and cost of every part type) of the
//!   shipped benchmark scenarios, the demo as it stood before rotables and
//!   sites (`tests/data/demo-2026.toml`) and the mixed test scenario, over
//!   2 100 trials each, so that blocks of 1 024 trials are crossed.
//!
//! The event count is left out of the digest: it measures the engine's
//! work, not a result. When a change is meant to move a result, the failing
//! assertion prints the new digest; say in the commit why it moved.

use sha2::{Digest, Sha256};
use wearout::dist::{LeadTime, Life};
use wearout::model::Model;
use wearout::sim::{Simulator, Workspace};
use wearout::stream::{StreamKey, TrialSeed};

fn scenario(name: &str, text: &str) -> Model {
    match wearout::scenario::parse(name, text) {
        Ok(m) => m,
        Err(e) => panic!("{name} invalid: {e}"),
    }
}

/// SHA-256 over the bits of every per-trial result of trials `0..n`.
fn digest(model: &Model, policy: &str, n: u64) -> String {
    let p = model.policy(policy).expect("policy exists");
    let sim = Simulator::new(model, p);
    let mut ws = Workspace::default();
    let mut h = Sha256::new();
    for trial in 0..n {
        let o = sim.run(trial, &mut ws);
        for x in [
            o.availability,
            o.up_hours,
            o.down_waiting,
            o.down_unplanned,
            o.down_planned,
        ] {
            h.update(x.to_bits().to_le_bytes());
        }
        for q in &o.parts {
            for c in [q.failures, q.planned, q.stockouts, q.orders] {
                h.update(c.to_le_bytes());
            }
            for x in [
                q.down_hours,
                q.parts_cost,
                q.labour_planned,
                q.labour_unplanned,
                q.downtime_cost,
                q.holding,
            ] {
                h.update(x.to_bits().to_le_bytes());
            }
        }
    }
    h.finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect::<String>()
}

const TRIALS: u64 = 2_100;

fn check(name: &str, text: &str, pinned: &[(&str, &str)]) {
    let model = scenario(name, text);
    let mut wrong = Vec::new();
    for &(policy, want) in pinned {
        let got = digest(&model, policy, TRIALS);
        if got != want {
            wrong.push(format!("{name} / {policy}: digest is now {got}"));
        }
    }
    assert!(
        wrong.is_empty(),
        "per-trial results changed:\n{}",
        wrong.join("\n")
    );
}

#[test]
fn b0_results_are_pinned() {
    check(
        "b0.toml",
        include_str!("../scenarios/b0.toml"),
        &[(
            "reference",
            "3c0b15e96b53524868570b6a4987b3f488d57dd44584fd2974dc82875b01402a",
        )],
    );
}

#[test]
fn b1_results_are_pinned() {
    check(
        "b1.toml",
        include_str!("../scenarios/b1.toml"),
        &[(
            "reference",
            "4fe8b17242f34fe6a3da10474a2fdd4738c57f79009e0602dad526b2a6343552",
        )],
    );
}

#[test]
fn demo_2026_results_are_pinned() {
    check(
        "demo-2026.toml",
        include_str!("data/demo-2026.toml"),
        &[
            (
                "current",
                "6b4ee0f044e0765bb2b3611b91e0f3a39a0b9eddeef56db8330dd053524d1ee2",
            ),
            (
                "reference",
                "b635d8b4ea4e1cc2b20689becf491761452f6bb1712894aabd5d0a52fd24c689",
            ),
        ],
    );
}

#[test]
fn mixed_results_are_pinned() {
    check(
        "mixed.toml",
        include_str!("data/mixed.toml"),
        &[
            (
                "blocky",
                "f148acb085accb9439ad8680dd2332ecca2c6852f8595d385698bc249512fafa",
            ),
            (
                "aged",
                "1fff9ac346b9351c9e64ecb90d65168e1eca127b590ca497f452773be46ee2c9",
            ),
        ],
    );
}

#[test]
fn stream_words_are_pinned() {
    use rand::Rng;
    let mut s = TrialSeed::new(20_261_202, 1_025).stream(StreamKey::Lives {
        unit: 3,
        position: 1,
    });
    let words: Vec<u64> = (0..4).map(|_| s.next_u64()).collect();
    assert_eq!(
        words,
        vec![
            14_147_657_099_637_095_624,
            2_438_766_510_736_697_310,
            6_339_651_051_466_826_545,
            16_342_666_539_355_848_732,
        ]
    );
}

#[test]
fn family_samples_are_pinned() {
    // Three lives of a new part, then one remaining life of a part already
    // 2 500 h old, from the stream of unit i, position 0.
    let lives: [(Life, [f64; 4]); 5] = [
        (
            Life::weibull(2.2, 14_000.0).unwrap(),
            [
                7193.513233648857,
                12770.509691459596,
                17463.515766849476,
                8090.908132626188,
            ],
        ),
        (
            Life::weibull3(2.0, 3_000.0, 200.0).unwrap(),
            [
                1207.1875718219121,
                2395.471918683977,
                2699.360473512245,
                669.7889184893556,
            ],
        ),
        (
            Life::lognormal(8.0, 0.8).unwrap(),
            [
                2009.0724932509845,
                1195.4067973750657,
                2086.0191796430713,
                1967.196066982926,
            ],
        ),
        (
            Life::gamma(3.0, 800.0).unwrap(),
            [
                2180.7632757883957,
                3758.395487366999,
                2784.2956442830678,
                139.60178532797727,
            ],
        ),
        (
            Life::exponential(5_000.0).unwrap(),
            [
                851.0530175005117,
                8347.642576966702,
                1109.9090298765477,
                6480.195576105815,
            ],
        ),
    ];
    // Three lead times from the stream of part type i.
    let leads: [(LeadTime, [f64; 3]); 3] = [
        (LeadTime::fixed(96.0).unwrap(), [96.0, 96.0, 96.0]),
        (
            LeadTime::lognormal(1_200.0, 0.4).unwrap(),
            [2481.8187930826102, 928.1255091652739, 1646.9468769894102],
        ),
        (
            LeadTime::gamma(72.0, 0.5).unwrap(),
            [51.80719887804706, 78.9736167299226, 45.538525762524166],
        ),
    ];
    let seed = TrialSeed::new(7, 3);
    for (i, (life, want)) in lives.iter().enumerate() {
        let mut s = seed.stream(StreamKey::Lives {
            unit: i as u32,
            position: 0,
        });
        let got = [
            life.sample_residual(0.0, &mut s),
            life.sample_residual(0.0, &mut s),
            life.sample_residual(0.0, &mut s),
            life.sample_residual(2_500.0, &mut s),
        ];
        assert_eq!(&got, want, "{} lives changed", life.family());
    }
    for (i, (lead, want)) in leads.iter().enumerate() {
        let mut s = seed.stream(StreamKey::LeadTimes { part: i as u32 });
        let got = [
            lead.sample(&mut s),
            lead.sample(&mut s),
            lead.sample(&mut s),
        ];
        assert_eq!(&got, want, "lead times {lead:?} changed");
    }
}
