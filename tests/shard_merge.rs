//! Shards merged in one process: the merged summary equals the single run's
//! bit for bit (compared as serialised JSON) for several splits and thread
//! counts, the shard records are lossless, and every refusal of a merge has
//! its test.
//!
//! The reference here is not an outside figure but an independent
//! computation of the same thing: the single-process run over the same
//! trials (`run::evaluate`), which never touches the shard code.

mod common;

use std::io::Cursor;
use std::path::Path;

use wearout::frontier::FrontierResult;
use wearout::model::{Model, Policy};
use wearout::recost::Costed;
use wearout::result::{EvaluateJson, FrontierJson};
use wearout::run::{Quiet, evaluate, evaluate_counting_units};
use wearout::scenario::Source;
use wearout::shard::{
    self, MergeError, Merged, Merger, RunKind, ShardError, ShardHeader, ShardSpec,
};
use wearout::summary::Summary;

/// The frontier of re-costed summaries, as `frontier --policies` reports
/// it.
fn of_list(model: &Model, summaries: Vec<Summary>, trials: u64, target: f64) -> FrontierResult {
    let measure = wearout::recost::measure(model);
    let recosted = summaries
        .into_iter()
        .map(|s| Costed::of(s, measure))
        .collect();
    FrontierResult::of_list(model, recosted, trials, target, 0.0)
}

fn scenario(name: &str) -> (Model, Source) {
    let loaded = wearout::scenario::load(Path::new(&common::scenario_path(name))).expect("valid");
    (loaded.model, loaded.source)
}

fn from_text(path: &str, text: &str) -> (Model, Source) {
    let dir = Path::new(path).parent().expect("folder");
    let model = wearout::scenario::parse_with_base(path, text, Some(dir)).expect("valid");
    let source = Source {
        file: Some(path.to_string()),
        dir: Some(dir.display().to_string()),
        text: text.to_string(),
    };
    (model, source)
}

fn header(
    model: &Model,
    source: &Source,
    policies: &[Policy],
    trials: u64,
    spec: ShardSpec,
) -> ShardHeader {
    ShardHeader::new(
        model,
        source,
        RunKind::Evaluate,
        policies,
        0..trials,
        spec,
        model.target,
    )
}

fn write(h: &ShardHeader, model: &Model, policies: &[Policy]) -> Vec<u8> {
    let mut v = Vec::new();
    shard::write_shard(h, model, policies, &Quiet, &mut v).expect("writes");
    v
}

/// Every shard of an `n`-split of `trials` trials of `policy`.
fn split(model: &Model, source: &Source, policy: &Policy, trials: u64, n: u64) -> Vec<Vec<u8>> {
    (0..n)
        .map(|k| {
            let h = header(
                model,
                source,
                std::slice::from_ref(policy),
                trials,
                ShardSpec { index: k, count: n },
            );
            write(&h, model, std::slice::from_ref(policy))
        })
        .collect()
}

fn merge(files: &[(String, Vec<u8>)]) -> Result<Merged, MergeError> {
    let mut infos = Vec::new();
    for (name, bytes) in files {
        infos.push(shard::open(name, &mut Cursor::new(bytes.as_slice()))?);
    }
    Merger::new(infos, None)?.fold(|i| Ok(Cursor::new(files[i].1.clone())))
}

fn named(v: Vec<Vec<u8>>) -> Vec<(String, Vec<u8>)> {
    v.into_iter()
        .enumerate()
        .map(|(i, b)| (format!("s{i}.shard"), b))
        .collect()
}

fn evaluate_json(model: &Model, s: &wearout::summary::Summary) -> String {
    let plan = wearout::mean_life::mean_life_plan(model, &s.policy);
    serde_json::to_string_pretty(&EvaluateJson::new(model, s, &plan)).expect("json")
}

/// The single run as `wearout evaluate` makes it (counting units up).
fn single(model: &Model, policy: &Policy, trials: u64) -> String {
    let s = evaluate_counting_units(model, policy, 0..trials, model.target, &Quiet).expect("runs");
    evaluate_json(model, &s)
}

fn in_pool<T: Send>(threads: usize, f: impl FnOnce() -> T + Send) -> T {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("pool")
        .install(f)
}

#[test]
fn merge_equals_single_run_bit_for_bit() {
    let (model, source) = scenario("b1");
    let policy = model.policy("reference").expect("policy").clone();
    let trials = 400;
    let want = in_pool(2, || single(&model, &policy, trials));
    for threads in [1, 2] {
        for n in [1, 2, 7, 16] {
            let files = in_pool(threads, || split(&model, &source, &policy, trials, n));
            // Arrival order must not matter: merge them backwards.
            let mut files = named(files);
            files.reverse();
            let m = merge(&files).unwrap_or_else(|e| panic!("{n} shards: {e}"));
            assert_eq!(m.summaries.len(), 1);
            let got = evaluate_json(&m.model, &m.summaries[0]);
            assert_eq!(got, want, "{n} shards on {threads} threads");
        }
    }
}

#[test]
fn merge_equals_single_run_with_other_seed_and_target() {
    // The demo, its second policy, another seed, a target typed on the
    // command line, parameter uncertainty switched on.
    let (mut model, source) = scenario("demo");
    model.seed = 987_654_321;
    model.parameter_uncertainty = true;
    let policy = model.policies[1].clone();
    let target = 0.9;
    let trials = 150;
    let s = evaluate_counting_units(&model, &policy, 0..trials, target, &Quiet).expect("runs");
    let want = evaluate_json(&model, &s);
    let files: Vec<Vec<u8>> = (0..3)
        .map(|k| {
            let h = ShardHeader::new(
                &model,
                &source,
                RunKind::Evaluate,
                std::slice::from_ref(&policy),
                0..trials,
                ShardSpec { index: k, count: 3 },
                target,
            );
            write(&h, &model, std::slice::from_ref(&policy))
        })
        .collect();
    let m = merge(&named(files)).expect("merges");
    assert_eq!(evaluate_json(&m.model, &m.summaries[0]), want);
}

#[test]
fn frontier_validation_merge_equals_single_run() {
    let (model, source) = scenario("b0");
    // A fixed list: the scenario's policy and two variants of it.
    let base = model.policies[0].clone();
    let mut more = base.clone();
    more.name = "more stock".into();
    for p in &mut more.parts {
        p.stock.add(1, false);
    }
    let mut rtf = base.clone();
    rtf.name = "run to failure".into();
    for p in &mut rtf.parts {
        p.rule = wearout::model::Rule::RunToFailure;
    }
    let policies = vec![base, more, rtf];
    let m_trials = 300;
    let range = wearout::recost::validation_range(m_trials);
    let singles: Vec<_> = policies
        .iter()
        .map(|p| evaluate(&model, p, range.clone(), model.target, &Quiet).expect("runs"))
        .collect();
    let r = of_list(&model, singles, m_trials, model.target);
    let want = serde_json::to_string(&FrontierJson::new(&model, &r, false)).expect("json");
    for n in [1, 5] {
        let files: Vec<Vec<u8>> = (0..n)
            .map(|k| {
                let h = ShardHeader::new(
                    &model,
                    &source,
                    RunKind::FrontierValidation,
                    &policies,
                    range.clone(),
                    ShardSpec { index: k, count: n },
                    model.target,
                );
                write(&h, &model, &policies)
            })
            .collect();
        let m = merge(&named(files)).expect("merges");
        let r = of_list(&m.model, m.summaries, m_trials, m.header.target());
        let got = serde_json::to_string(&FrontierJson::new(&m.model, &r, false)).expect("json");
        assert_eq!(got, want, "{n} shards");
    }
}

#[test]
fn records_are_lossless_and_compact() {
    let (model, source) = scenario("b1");
    let policy = model.policy("reference").expect("policy").clone();
    let trials = 300;
    let h = header(
        &model,
        &source,
        std::slice::from_ref(&policy),
        trials,
        ShardSpec::WHOLE,
    );
    let bytes = write(&h, &model, std::slice::from_ref(&policy));
    let info = shard::open("b1.shard", &mut Cursor::new(bytes.as_slice())).expect("opens");
    // An evaluate run counts units up.
    let sim = wearout::sim::Simulator::new(&model, &policy).counting_units_up();
    let mut ws = wearout::sim::Workspace::default();
    let mut seen = 0;
    shard::read_outcomes(&info, &mut Cursor::new(bytes.as_slice()), |p, t, o| {
        assert_eq!(p, 0);
        let direct = sim.run(t, &mut ws);
        // Debug prints every double exactly (shortest round-trip form).
        assert_eq!(format!("{o:?}"), format!("{direct:?}"), "trial {t}");
        seen += 1;
    })
    .expect("reads");
    assert_eq!(seen, trials);
    // Compact: well under the raw layout of every field as 8 bytes
    // (4 fleet figures + events, the hours by units up, 11 per part type:
    // the first part's 10 and the backorder hours).
    let header_len = bytes.iter().take_while(|&&b| b != b'\n').count()
        + 1
        + bytes[..]
            .iter()
            .skip_while(|&&b| b != b'\n')
            .skip(1)
            .take_while(|&&b| b != b'\n')
            .count()
        + 1;
    let per_trial = (bytes.len() - header_len - shard::TRAILER_LEN as usize) as f64 / trials as f64;
    let raw = 8.0 * (5.0 + (model.units.len() + 1) as f64 + 11.0 * model.parts.len() as f64);
    assert!(
        per_trial < 0.5 * raw,
        "{per_trial} bytes per trial vs raw {raw}"
    );
}

// ------------------------------------------------------------- refusals

fn two_runs(
    a: (&Model, &Source, &Policy, f64),
    b: (&Model, &Source, &Policy, f64),
    trials: u64,
) -> Vec<(String, Vec<u8>)> {
    let mk = |(m, s, p, t): (&Model, &Source, &Policy, f64), k: u64| {
        let h = ShardHeader::new(
            m,
            s,
            RunKind::Evaluate,
            std::slice::from_ref(p),
            0..trials,
            ShardSpec { index: k, count: 2 },
            t,
        );
        write(&h, m, std::slice::from_ref(p))
    };
    named(vec![mk(a, 0), mk(b, 1)])
}

fn refused(files: &[(String, Vec<u8>)], needles: &[&str]) -> String {
    let e = match merge(files) {
        Ok(_) => panic!("merged, but should be refused with {needles:?}"),
        Err(e) => e.to_string(),
    };
    for n in needles {
        assert!(e.contains(n), "`{n}` not in: {e}");
    }
    e
}

#[test]
fn refuses_different_scenarios() {
    let (m1, s1) = scenario("b1");
    let path = common::scenario_path("b1");
    let changed = s1.text.replacen("price = 180000", "price = 180001", 1);
    assert_ne!(changed, s1.text);
    let (m2, s2) = from_text(&path, &changed);
    let p1 = m1.policies[0].clone();
    let p2 = m2.policies[0].clone();
    let t = m1.target;
    refused(
        &two_runs((&m1, &s1, &p1, t), (&m2, &s2, &p2, t), 40),
        &["different scenarios", "s0.shard", "s1.shard", "`b1`"],
    );
    // A comment alone is not another scenario.
    let commented = format!("# a note\n{}", s1.text);
    let (m3, s3) = from_text(&path, &commented);
    let files = two_runs((&m1, &s1, &p1, t), (&m3, &s3, &p1, t), 40);
    assert!(merge(&files).is_ok());
}

#[test]
fn refuses_different_seeds() {
    let (m1, s) = scenario("b0");
    let mut m2 = m1.clone();
    m2.seed += 1;
    let p = m1.policies[0].clone();
    let t = m1.target;
    refused(
        &two_runs((&m1, &s, &p, t), (&m2, &s, &p, t), 40),
        &[
            "different seeds",
            &format!("seed {}", m1.seed),
            &format!("seed {}", m2.seed),
        ],
    );
}

#[test]
fn refuses_different_policies() {
    let (m, s) = scenario("demo");
    let (a, b) = (m.policies[0].clone(), m.policies[1].clone());
    let t = m.target;
    refused(
        &two_runs((&m, &s, &a, t), (&m, &s, &b, t), 20),
        &["different policies", "`current`", "`reference`"],
    );
    // Same name, another stock level.
    let mut c = a.clone();
    c.parts[0].stock.add(1, false);
    refused(
        &two_runs((&m, &s, &a, t), (&m, &s, &c, t), 20),
        &[
            "different policies",
            "same names, other rules or stock levels",
        ],
    );
}

#[test]
fn refuses_different_targets_and_settings() {
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    refused(
        &two_runs((&m, &s, &p, 0.9), (&m, &s, &p, 0.95), 20),
        &["different availability targets", "0.9", "0.95"],
    );
    let mut mu = m.clone();
    mu.parameter_uncertainty = true;
    // b0 has no fitted lives, so the flag changes no trial, but the runs
    // asked for differ and are refused all the same.
    refused(
        &two_runs((&m, &s, &p, 0.9), (&mu, &s, &p, 0.9), 20),
        &["parameter"],
    );
}

#[test]
fn refuses_different_versions() {
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    let ps = std::slice::from_ref(&p);
    let h0 = header(&m, &s, ps, 20, ShardSpec { index: 0, count: 2 });
    let mut h1 = header(&m, &s, ps, 20, ShardSpec { index: 1, count: 2 });
    h1.tool_version = "0.0.0-test".into();
    let files = named(vec![write(&h0, &m, ps), write(&h1, &m, ps)]);
    refused(&files, &["different wearout versions", "0.0.0-test"]);
    // Both of another version than this one.
    let mut h0 = h0;
    h0.tool_version = "0.0.0-test".into();
    let files = named(vec![write(&h0, &m, ps), write(&h1, &m, ps)]);
    refused(
        &files,
        &["written by wearout 0.0.0-test", "this is wearout"],
    );
}

#[test]
fn refuses_different_kinds_and_run_lengths() {
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    let ps = std::slice::from_ref(&p);
    let a = header(&m, &s, ps, 20, ShardSpec { index: 0, count: 2 });
    let b = ShardHeader::new(
        &m,
        &s,
        RunKind::FrontierValidation,
        ps,
        wearout::recost::validation_range(20),
        ShardSpec { index: 1, count: 2 },
        m.target,
    );
    refused(
        &named(vec![write(&a, &m, ps), write(&b, &m, ps)]),
        &[
            "different kinds of run",
            "an evaluate run",
            "a frontier validation run",
        ],
    );
    let c = header(&m, &s, ps, 30, ShardSpec { index: 1, count: 2 });
    refused(
        &named(vec![write(&a, &m, ps), write(&c, &m, ps)]),
        &["different runs", "0..20", "0..30"],
    );
}

#[test]
fn refuses_overlapping_ranges() {
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    let ps = std::slice::from_ref(&p);
    let a = write(
        &header(&m, &s, ps, 60, ShardSpec { index: 0, count: 2 }),
        &m,
        ps,
    );
    let b = write(
        &header(&m, &s, ps, 60, ShardSpec { index: 1, count: 3 }),
        &m,
        ps,
    );
    let c = write(
        &header(&m, &s, ps, 60, ShardSpec { index: 1, count: 2 }),
        &m,
        ps,
    );
    refused(
        &named(vec![a.clone(), b, c.clone()]),
        &["overlap", "0..30", "20..40"],
    );
    // The same share given twice.
    refused(
        &named(vec![a.clone(), c, a]),
        &["overlap", "the same share given twice"],
    );
}

#[test]
fn refuses_missing_ranges_and_says_which() {
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    let ps = std::slice::from_ref(&p);
    let sh = |k| {
        write(
            &header(&m, &s, ps, 80, ShardSpec { index: k, count: 4 }),
            &m,
            ps,
        )
    };
    refused(
        &named(vec![sh(0), sh(2)]),
        &["missing", "20..40", "60..80", "1/4 and 3/4"],
    );
    refused(
        &named(vec![sh(1), sh(2), sh(3)]),
        &["missing", "0..20", "share 0/4"],
    );
    refused(&[], &["no shard files given"]);
}

#[test]
fn refuses_damaged_truncated_and_foreign_files() {
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    let ps = std::slice::from_ref(&p);
    let good = write(&header(&m, &s, ps, 30, ShardSpec::WHOLE), &m, ps);
    let open = |b: &[u8]| shard::open("x.shard", &mut Cursor::new(b)).map(|_| ());
    assert!(open(&good).is_ok());
    // One bit flipped in a record.
    let mut flipped = good.clone();
    let at = flipped.len() - shard::TRAILER_LEN as usize - 10;
    flipped[at] ^= 0x10;
    let e = open(&flipped).unwrap_err().to_string();
    assert!(e.contains("damaged") && e.contains("checksum"), "{e}");
    // Cut short anywhere: refused, never a panic.
    for cut in (0..good.len()).step_by(7) {
        let e = open(&good[..cut]).unwrap_err();
        assert!(
            matches!(e, ShardError::Damaged { .. } | ShardError::NotAShard { .. }),
            "cut at {cut}: {e}"
        );
    }
    let e = open(b"hours,failed\n1,1\n").unwrap_err().to_string();
    assert!(e.contains("not a wearout shard file"), "{e}");
    let mut v2 = good.clone();
    // A later format than this code reads (this code writes version 3).
    assert_eq!(v2[14], b'3');
    v2[14] = b'4';
    let e = open(&v2).unwrap_err().to_string();
    assert!(e.contains("format version 4"), "{e}");
}

#[test]
fn refuses_a_scenario_that_reads_differently_now() {
    // The header carries a scenario text that no longer gives the model the
    // trials were run on (as when a records file changed in between).
    let (m, s) = scenario("b0");
    let p = m.policies[0].clone();
    let ps = std::slice::from_ref(&p);
    let mut h = header(&m, &s, ps, 20, ShardSpec::WHOLE);
    h.scenario_text = s.text.replacen("seed", "# seed", 0).replacen(
        "downtime_penalty_per_hour = ",
        "downtime_penalty_per_hour = 1",
        1,
    );
    assert_ne!(h.scenario_text, s.text);
    let files = named(vec![write(&h, &m, ps)]);
    refused(&files, &["no longer gives content"]);
}

#[test]
fn merge_carries_the_money_books_bit_for_bit() {
    // B2 with [money] (4 000 h a year, 6 %, a budget) and a budget of its
    // own for one part type: the yearly spend, the budget counts and the
    // present value come out of a merge as from the single run.
    let path = common::scenario_path("b2");
    let text = common::scenario_text("b2").replacen(
        "yearly_budget = 750000",
        "yearly_budget = 750000\nyearly_budget_by_part = { traction_motor = 300000 }",
        1,
    );
    let (model, source) = from_text(&path, &text);
    assert!(model.money.is_some());
    let policy = model.policy("reference").expect("policy").clone();
    let trials = 120;
    let want = in_pool(2, || single(&model, &policy, trials));
    assert!(want.contains("\"within_budget_every_year\""), "{want}");
    assert!(want.contains("\"per_part_within_budget_every_year\""));
    for n in [1, 4] {
        let files = in_pool(2, || split(&model, &source, &policy, trials, n));
        let m = merge(&named(files)).unwrap_or_else(|e| panic!("{n} shards: {e}"));
        assert_eq!(evaluate_json(&m.model, &m.summaries[0]), want, "{n} shards");
    }
}

#[test]
fn frontier_validation_merge_carries_money_and_pv_cost() {
    // B0 with [money] and the present value of spend as the cost measure.
    let path = common::scenario_path("b0");
    let text = common::scenario_text("b0").replacen("cost = \"spend\"", "cost = \"pv_spend\"", 1)
        + "\n[money]\nhours_per_year = 5000\ndiscount_rate = 0.08\nyearly_budget = 900000\n";
    let (model, source) = from_text(&path, &text);
    let base = model.policies[0].clone();
    let mut more = base.clone();
    more.name = "more stock".into();
    for p in &mut more.parts {
        p.stock.add(1, false);
    }
    let policies = vec![base, more];
    let m_trials = 200;
    let range = wearout::recost::validation_range(m_trials);
    let singles: Vec<_> = policies
        .iter()
        .map(|p| evaluate(&model, p, range.clone(), model.target, &Quiet).expect("runs"))
        .collect();
    let r = of_list(&model, singles, m_trials, model.target);
    let want = serde_json::to_string(&FrontierJson::new(&model, &r, false)).expect("json");
    assert!(want.contains("\"pv_spend (mean)\""), "{want}");
    assert!(want.contains("\"money\""));
    let files: Vec<Vec<u8>> = (0..3)
        .map(|k| {
            let h = ShardHeader::new(
                &model,
                &source,
                RunKind::FrontierValidation,
                &policies,
                range.clone(),
                ShardSpec { index: k, count: 3 },
                model.target,
            );
            write(&h, &model, &policies)
        })
        .collect();
    let m = merge(&named(files)).expect("merges");
    let r = of_list(&m.model, m.summaries, m_trials, m.header.target());
    let got = serde_json::to_string(&FrontierJson::new(&m.model, &r, false)).expect("json");
    assert_eq!(got, want);
}
