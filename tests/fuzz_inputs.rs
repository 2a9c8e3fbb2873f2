//! Fuzzed inputs: mutated scenario files, records files, shard files and
//! policy lists never make wearout panic or hang. Each input either gives a
//! clear error naming the file, or runs (bounded by the same estimate the
//! command line checks before every run); a scenario that runs is also
//! written as a shard and merged, which must give the single run's figures
//! exactly.
//!
//! The default run is short (CI): `WEAROUT_FUZZ_CASES` inputs per target
//! (default 48). The long run keeps going for `WEAROUT_FUZZ_SECONDS`
//! seconds per target and prints how many inputs it tried (command and
//! last count in DEVELOPERS.md, "Fuzzing"):
//!
//! ```text
//! WEAROUT_FUZZ_SECONDS=300 cargo test --release --test fuzz_inputs -- --nocapture
//! ```
//!
//! `WEAROUT_FUZZ_SEED` changes the (otherwise fixed) seed. A hang is an
//! input whose case takes longer than `WEAROUT_FUZZ_TIMEOUT` seconds
//! (default 60; the machine is shared).

mod common;

use std::io::Cursor;
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestCaseError, TestRng, TestRunner};

use common::scenario_text as shipped;
use wearout::model::Model;
use wearout::run::Quiet;
use wearout::scenario::Source;
use wearout::shard::{self, Merger, RunKind, ShardHeader, ShardSpec};

// ------------------------------------------------------------ mutations

/// One edit of a text.
#[derive(Debug, Clone)]
enum Mutation {
    /// Replace the n-th number by an extreme value.
    Number(usize, usize),
    /// Replace the n-th word by another field or value name.
    Word(usize, usize),
    DeleteLine(usize),
    DuplicateLine(usize),
    SwapLines(usize, usize),
    /// Insert a snippet before line n.
    Insert(usize, usize),
    /// Replace the n-th line that sets the snippet's key by the snippet
    /// (so the file stays well-formed TOML); insert it if none does.
    Set(usize, usize),
    /// Set the byte at a position (printable ASCII, or a few others).
    Byte(usize, u8),
    Truncate(usize),
}

/// Well-formed extremes first (TOML numbers), odd tokens from `ODD` on.
const NUMBERS: &[&str] = &[
    "0",
    "1",
    "2",
    "0.5",
    "1e-6",
    "1e-300",
    "5e-324",
    "1e300",
    "1.7976931348623157e308",
    "1e12",
    "1000000",
    "1000001",
    "1000000000",
    "1e9",
    "0.999999999",
    "65000",
    "100000",
    "3.0",
    // odd
    "-0",
    "-1",
    "4294967296",
    "18446744073709551615",
    "99999999999999999999",
    "inf",
    "-inf",
    "nan",
    "0x10",
    "1_000",
    "\"3\"",
    "true",
    "[]",
    "{}",
];
/// Index of the first odd token in `NUMBERS`.
const ODD: usize = 18;

const WORDS: &[&str] = &[
    "weibull",
    "weibull3",
    "lognormal",
    "gamma",
    "exponential",
    "best",
    "age",
    "block",
    "run_to_failure",
    "fixed",
    "uniform",
    "list",
    "new",
    "spend",
    "total",
    "mean",
    "p90",
    "engine",
    "pump",
    "truck",
    "stock",
    "interval_hours",
    "interval_fraction",
    "count",
    "unit",
    "positions",
    "records",
    "safety_critical",
    "hard_limit_hours",
    "parameter_uncertainty",
    "shape",
    "scale",
    "location",
    "site",
    "sites",
    "depot",
    "every_site",
    "north",
    "one",
    "repair",
    "channels",
    "condemn",
    "failed",
    "planned",
    "at_least",
    "share",
    "transport",
    "transfer",
    "lateral",
    "ready_units",
    "",
];

const SCENARIO_SNIPPETS: &[&str] = &[
    "trials = 1000000000",
    "horizon_hours = 1e9",
    "horizon_hours = 1e300",
    "seed = 18446744073709551615",
    "parameter_uncertainty = true",
    "life = { dist = \"weibull\", shape = 1e-6, scale = 1e-6 }",
    "life = { dist = \"weibull\", shape = 1e-6, scale = 9000 }",
    "life = { dist = \"weibull\", shape = 1e6, scale = 9000 }",
    "life = { dist = \"exponential\", mean = 1e-300 }",
    "life = { dist = \"gamma\", shape = 1e-9, scale = 1e9 }",
    "life = { dist = \"lognormal\", mu = 700, sigma = 1e-300 }",
    "life = { records = \"generator_fans.csv\", dist = \"best\" }",
    "life = { records = \"ball_bearings.csv\", dist = \"weibull\" }",
    "lead_time = { dist = \"fixed\", hours = 1e12 }",
    "lead_time = { dist = \"fixed\", hours = 0 }",
    "lead_time = { dist = \"gamma\", mean_hours = 1e-9, cv = 100 }",
    "lead_time = { dist = \"lognormal\", median_hours = 1e300, log_sd = 1e3 }",
    "duration_hours = { planned = 0, unplanned = 0 }",
    "initial_age = { kind = \"fixed\", hours = 1e300 }",
    "initial_age = { kind = \"list\", hours = [1, 2, 3] }",
    "[[fleet]]\nunit = \"truck\"\ncount = 1000000",
    "count = 1000000",
    "stock = 100000",
    "interval_hours = 1e-300",
    "interval_hours = 1e300",
    "hard_limit_hours = 1e-9",
    "safety_critical = true",
    "[search]",
    "[defaults]",
    "spares_budget = 0",
    "statistic = \"p99.9999\"",
    "interval_fraction_range = { from = 0.000001, to = 1000, step = 0.000001 }",
    "holding = { per_spare_hour = 1e300 }",
    // Sites, a depot, lateral supply, rotables, ready units.
    "channels = 0",
    "channels = 1",
    "channels = 1000000",
    "repair = { time = { dist = \"fixed\", hours = 1e12 }, cost = { planned = 0, failed = 0 } }",
    "repair = { time = { dist = \"fixed\", hours = 0 }, cost = { planned = 0, failed = 0 }, condemn = { planned = 1, failed = 1 } }",
    "repair = { time = { dist = \"gamma\", mean_hours = 1e-9, cv = 100 }, cost = { planned = 1e300, failed = 0 }, channels = 1 }",
    "condemn = { planned = 1.5, failed = -1 }",
    "stock = { every_site = 100000, depot = 100000 }",
    "stock = { every_site = { min = 0, max = 10000 }, depot = { min = 0, max = 10000 } }",
    "site = \"north\"",
    "site = \"one\"",
    "[sites.west]",
    "[sites.one]\n[sites.two]",
    "[depot]\ntransport = { every_site = { dist = \"fixed\", hours = 0 } }",
    "transport = { every_site = { dist = \"lognormal\", median_hours = 1e300, log_sd = 1e3 } }",
    "[lateral]\ntransfer = { dist = \"fixed\", hours = 0 }",
    "transfer = { dist = \"fixed\", hours = 1e12 }",
    "cost_per_shipment = 1e300",
    "cost_per_transfer = 1e300",
    "[ready_units]\nat_least = 0\nshare = 1",
    "at_least = 1000000",
    "share = 1e-300",
];

const RECORD_SNIPPETS: &[&str] = &[
    "1e300,1",
    "1.7976931348623157e308,1",
    "0,1",
    "-1,1",
    "nan,1",
    "inf,0",
    "1e-300,1",
    "5e-324,1",
    "5,2",
    "x,y",
    ",",
    ",,,,",
    "hours,failed",
    "hours;failed",
    "1,1,extra,columns",
    "# comment",
    "",
    "\u{feff}hours,failed",
    "7,1,fan",
    "part,hours,failed",
    "3,0",
    "1000,1",
    "1000,1",
    "1000,1",
    "\"1,5\",1",
];

fn mutation(max: usize) -> impl Strategy<Value = Mutation> {
    prop_oneof![
        6 => (0..400usize, 0..ODD).prop_map(|(n, v)| Mutation::Number(n, v)),
        1 => (0..400usize, ODD..NUMBERS.len()).prop_map(|(n, v)| Mutation::Number(n, v)),
        2 => (0..400usize, 0..WORDS.len()).prop_map(|(n, w)| Mutation::Word(n, w)),
        1 => (0..200usize).prop_map(Mutation::DeleteLine),
        1 => (0..200usize).prop_map(Mutation::DuplicateLine),
        1 => (0..200usize, 0..200usize).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        1 => (0..200usize, 0..max).prop_map(|(n, s)| Mutation::Insert(n, s)),
        5 => (0..200usize, 0..max).prop_map(|(n, s)| Mutation::Set(n, s)),
        1 => (0..4000usize, prop_oneof![32u8..127, Just(b'\n'), Just(0u8), Just(b'\t')])
            .prop_map(|(p, b)| Mutation::Byte(p, b)),
        1 => (0..4000usize).prop_map(Mutation::Truncate),
    ]
}

/// Token spans: numbers (not inside names such as `b1`) or words.
fn tokens(text: &str, numbers: bool) -> Vec<(usize, usize)> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let prev_word = i > 0 && (b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_');
        let start = if numbers {
            (b[i].is_ascii_digit()
                || (b[i] == b'-' && i + 1 < b.len() && b[i + 1].is_ascii_digit()))
                && !prev_word
        } else {
            (b[i].is_ascii_alphabetic() || b[i] == b'_') && !prev_word
        };
        if start {
            let mut j = i + 1;
            while j < b.len()
                && (if numbers {
                    b[j].is_ascii_digit() || b"._eE+-".contains(&b[j])
                } else {
                    b[j].is_ascii_alphanumeric() || b[j] == b'_'
                })
            {
                j += 1;
            }
            out.push((i, j));
            i = j;
        } else {
            i += 1;
        }
    }
    out
}

fn apply(text: &str, muts: &[Mutation], snippets: &[&str]) -> String {
    let mut s = text.to_string();
    for m in muts {
        match *m {
            Mutation::Number(n, v) | Mutation::Word(n, v) => {
                let numbers = matches!(m, Mutation::Number(..));
                let t = tokens(&s, numbers);
                if !t.is_empty() {
                    let (a, b) = t[n % t.len()];
                    let with = if numbers { NUMBERS[v] } else { WORDS[v] };
                    s.replace_range(a..b, with);
                }
            }
            Mutation::DeleteLine(n) | Mutation::DuplicateLine(n) => {
                let mut lines: Vec<&str> = s.lines().collect();
                if !lines.is_empty() {
                    let i = n % lines.len();
                    if matches!(m, Mutation::DeleteLine(_)) {
                        lines.remove(i);
                    } else {
                        lines.insert(i, lines[i]);
                    }
                }
                s = lines.join("\n");
            }
            Mutation::SwapLines(a, b) => {
                let mut lines: Vec<&str> = s.lines().collect();
                if !lines.is_empty() {
                    let n = lines.len();
                    lines.swap(a % n, b % n);
                }
                s = lines.join("\n");
            }
            Mutation::Set(n, k) => {
                let snippet = snippets[k % snippets.len()];
                let key = snippet.split(" = ").next().unwrap_or("").trim();
                let mut lines: Vec<String> = s.lines().map(str::to_string).collect();
                let hits: Vec<usize> = lines
                    .iter()
                    .enumerate()
                    .filter(|(_, l)| {
                        !key.is_empty()
                            && snippet.contains(" = ")
                            && l.trim_start().starts_with(&format!("{key} ="))
                    })
                    .map(|(i, _)| i)
                    .collect();
                if hits.is_empty() {
                    let i = if lines.is_empty() {
                        0
                    } else {
                        n % (lines.len() + 1)
                    };
                    lines.insert(i, snippet.to_string());
                } else {
                    lines[hits[n % hits.len()]] = snippet.to_string();
                }
                s = lines.join("\n");
            }
            Mutation::Insert(n, k) => {
                let mut lines: Vec<&str> = s.lines().collect();
                let i = if lines.is_empty() {
                    0
                } else {
                    n % (lines.len() + 1)
                };
                lines.insert(i, snippets[k % snippets.len()]);
                s = lines.join("\n");
            }
            Mutation::Byte(p, byte) => {
                if !s.is_empty() {
                    let p = p % s.len();
                    if s.is_char_boundary(p) && s.is_char_boundary(p + 1) {
                        s.replace_range(p..p + 1, &char::from(byte).to_string());
                    }
                }
            }
            Mutation::Truncate(p) => {
                if !s.is_empty() {
                    let mut p = p % (s.len() + 1);
                    while !s.is_char_boundary(p) {
                        p -= 1;
                    }
                    s.truncate(p);
                }
            }
        }
    }
    s
}

// ------------------------------------------------------------ harness

fn env_u64(name: &str, default: u64) -> u64 {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

/// Run `case` on inputs from `strategy` until the case count (CI) or the
/// time budget (long run) is reached, each in its own thread under a time
/// limit. Returns the number of inputs tried.
fn fuzz<S>(target: &str, salt: u64, strategy: S, case: fn(&S::Value)) -> u64
where
    S: Strategy,
    S::Value: Clone + Send + std::fmt::Debug + 'static,
{
    let cases = env_u64("WEAROUT_FUZZ_CASES", 48) as u32;
    let seconds = env_u64("WEAROUT_FUZZ_SECONDS", 0);
    let timeout = Duration::from_secs(env_u64("WEAROUT_FUZZ_TIMEOUT", 60));
    let seed = env_u64("WEAROUT_FUZZ_SEED", 20_261_206) ^ salt;
    let tried = AtomicU64::new(0);
    let start = Instant::now();
    let mut round = 0u64;
    loop {
        let mut key = [0u8; 32];
        key[..8].copy_from_slice(&seed.to_le_bytes());
        key[8..16].copy_from_slice(&round.to_le_bytes());
        let config = Config {
            cases: if seconds > 0 { 256 } else { cases },
            failure_persistence: None,
            max_shrink_iters: 64,
            max_shrink_time: 180_000,
            ..Config::default()
        };
        let mut runner =
            TestRunner::new_with_rng(config, TestRng::from_seed(RngAlgorithm::ChaCha, &key));
        let result = runner.run(&strategy, |input| {
            tried.fetch_add(1, Ordering::Relaxed);
            let (tx, rx) = mpsc::channel();
            let given = input.clone();
            std::thread::spawn(move || {
                case(&given);
                let _ = tx.send(());
            });
            match rx.recv_timeout(timeout) {
                Ok(()) => Ok(()),
                Err(mpsc::RecvTimeoutError::Timeout) => Err(TestCaseError::fail(format!(
                    "hang: no answer within {timeout:?}"
                ))),
                Err(mpsc::RecvTimeoutError::Disconnected) => {
                    Err(TestCaseError::fail("panic (message above)"))
                }
            }
        });
        if let Err(e) = result {
            panic!("{target} (seed {seed}, round {round}): {e}");
        }
        round += 1;
        if seconds == 0 || start.elapsed().as_secs() >= seconds {
            break;
        }
    }
    let n = tried.load(Ordering::Relaxed);
    println!(
        "fuzz {target}: {n} inputs in {:.0} s, no panic, no hang",
        start.elapsed().as_secs_f64()
    );
    n
}

fn data_dir() -> String {
    format!("{}/tests/data", env!("CARGO_MANIFEST_DIR"))
}

// ------------------------------------------------------------ scenarios

/// What became of the scenario inputs: refused by the reader, refused by
/// the estimate, simulated (and merged from shards), frontier searched.
static PARSE_ERRORS: AtomicU64 = AtomicU64::new(0);
static REFUSED: AtomicU64 = AtomicU64::new(0);
static SIMULATED: AtomicU64 = AtomicU64::new(0);
static SEARCHED: AtomicU64 = AtomicU64::new(0);

/// Keep the fuzz fast: simulate only inputs estimated this small.
const FUZZ_MAX_EVENTS: f64 = 2.0e5;
const FUZZ_MAX_SECONDS: f64 = 0.5;
const FUZZ_MEMORY: f64 = 4.0e9;

fn scenario_case(text: &str) {
    let dir = data_dir();
    let model = match wearout::scenario::parse_with_base("fuzz.toml", text, Some(Path::new(&dir))) {
        Ok(m) => m,
        Err(e) => {
            PARSE_ERRORS.fetch_add(1, Ordering::Relaxed);
            let m = e.to_string();
            if std::env::var_os("WEAROUT_FUZZ_VERBOSE").is_some() {
                eprintln!("refused: {m}");
            }
            assert!(m.starts_with("fuzz.toml:"), "error without its place: {m}");
            assert!(m.len() > "fuzz.toml:1:1: ".len(), "empty message: {m}");
            return;
        }
    };
    exercise(&model, text);
}

fn exercise(model: &Model, text: &str) {
    let trials = 3;
    let source = Source {
        file: Some("fuzz.toml".into()),
        dir: Some(data_dir()),
        text: text.to_string(),
    };
    for policy in model.policies.iter().take(3) {
        let plan = wearout::mean_life::mean_life_plan(model, policy);
        let est = wearout::estimate::evaluate(
            model,
            std::slice::from_ref(policy),
            trials,
            2,
            true,
            false,
        );
        if let Err(e) = est.check(model, Some(FUZZ_MEMORY)) {
            REFUSED.fetch_add(1, Ordering::Relaxed);
            assert!(!e.to_string().is_empty());
            continue;
        }
        let _ = est.describe();
        if est.max_trial_events > FUZZ_MAX_EVENTS || est.seconds > FUZZ_MAX_SECONDS {
            continue;
        }
        let s =
            wearout::run::evaluate_counting_units(model, policy, 0..trials, model.target, &Quiet)
                .expect("not cancelled");
        let json = wearout::result::EvaluateJson::new(model, &s, &plan);
        let single = serde_json::to_string(&json).expect("serialises");
        // The same run as two shards, merged.
        let files: Vec<Vec<u8>> = (0..2)
            .map(|k| {
                let h = ShardHeader::new(
                    model,
                    &source,
                    RunKind::Evaluate,
                    std::slice::from_ref(policy),
                    0..trials,
                    ShardSpec { index: k, count: 2 },
                    model.target,
                );
                let mut v = Vec::new();
                shard::write_shard(&h, model, std::slice::from_ref(policy), &Quiet, &mut v)
                    .expect("writes");
                v
            })
            .collect();
        let infos: Vec<_> = files
            .iter()
            .enumerate()
            .map(|(i, f)| {
                shard::open(&format!("s{i}"), &mut Cursor::new(f.as_slice())).expect("opens")
            })
            .collect();
        let m = Merger::new(infos, None)
            .expect("plans")
            .fold(|i| Ok(Cursor::new(files[i].as_slice())))
            .expect("folds");
        let merged = wearout::result::EvaluateJson::new(&m.model, &m.summaries[0], &plan);
        assert_eq!(serde_json::to_string(&merged).expect("serialises"), single);
        SIMULATED.fetch_add(1, Ordering::Relaxed);
    }
    if model.search.is_some() {
        let config = wearout::frontier::FrontierConfig {
            search_trials: 12,
            validate_trials: 8,
            target: model.target,
            exhaustive: false,
            max_full: 4,
            screen_trials: 12,
            max_frontier: 3,
        };
        let est = wearout::estimate::frontier(model, &config, 2);
        if est.check(model, Some(FUZZ_MEMORY)).is_ok()
            && est.max_trial_events <= FUZZ_MAX_EVENTS
            && est.seconds <= FUZZ_MAX_SECONDS
        {
            SEARCHED.fetch_add(1, Ordering::Relaxed);
            match wearout::frontier::search(model, &config, &Quiet) {
                Ok(r) => {
                    let j = wearout::result::FrontierJson::new(model, &r, false);
                    serde_json::to_string(&j).expect("serialises");
                }
                Err(e) => assert!(!e.to_string().is_empty()),
            }
        }
    }
}

#[test]
fn fuzz_scenario_files() {
    // B2 and a small network of three sites (a depot, lateral supply,
    // rotables, ready units) cover the second part's keys.
    let network = std::fs::read_to_string(format!("{}/ties-network.toml", data_dir()))
        .expect("network fixture");
    let bases = [
        shipped("demo"),
        shipped("b0"),
        shipped("b1"),
        shipped("b2"),
        network,
    ];
    let strategy = (
        0..bases.len(),
        prop::collection::vec(mutation(SCENARIO_SNIPPETS.len()), 1..4),
    )
        .prop_map(move |(b, muts)| apply(&bases[b], &muts, SCENARIO_SNIPPETS));
    let n = fuzz("scenario files", 1, strategy, |t: &String| scenario_case(t));
    println!(
        "fuzz scenario files: {} refused by the reader, {} policies refused by the estimate, {} policies simulated and merged from shards, {} frontier searches",
        PARSE_ERRORS.load(Ordering::Relaxed),
        REFUSED.load(Ordering::Relaxed),
        SIMULATED.load(Ordering::Relaxed),
        SEARCHED.load(Ordering::Relaxed)
    );
    assert!(n > 0);
}

// ------------------------------------------------------------ records

fn records_case(text: &str) {
    let records = match wearout::fit::parse_records(text, "fuzz.csv") {
        Ok(r) => r,
        Err(e) => {
            let m = e.to_string();
            assert!(m.contains("fuzz.csv"), "error without the file: {m}");
            return;
        }
    };
    let samples = match wearout::fit::select_parts(&records, None) {
        Ok(s) => s,
        Err(e) => {
            assert!(!e.to_string().is_empty());
            return;
        }
    };
    let mut fitted = Vec::new();
    for s in samples.iter().take(4) {
        match wearout::fit::fit_part(s) {
            Ok(f) => {
                for fit in &f.mle {
                    let _ = fit.life();
                    let _ = wearout::uncertainty::LifeUncertainty::from_fit(fit, s);
                }
                fitted.push(f);
            }
            Err(e) => assert!(!e.to_string().is_empty()),
        }
    }
    let _ = wearout::fit::report::table(&fitted);
    let _ = wearout::fit::report::fits_json(&fitted, &[]);
}

#[test]
fn fuzz_records_files() {
    let read = |n: &str| std::fs::read_to_string(format!("{}/{n}", data_dir())).expect("data");
    let bases = [
        read("generator_fans.csv"),
        read("ball_bearings.csv"),
        "part,hours,failed\nfan,450,1\nfan,460,0\nfan,1150,1\npump,300,1\npump,900,1\npump,1200,0\npump,2000,1\n"
            .to_string(),
    ];
    let strategy = (
        0..bases.len(),
        prop::collection::vec(mutation(RECORD_SNIPPETS.len()), 1..6),
    )
        .prop_map(move |(b, muts)| apply(&bases[b], &muts, RECORD_SNIPPETS));
    let n = fuzz("records files", 2, strategy, |t: &String| records_case(t));
    assert!(n > 0);
}

// ------------------------------------------------------------ shards

fn small_shard() -> Vec<u8> {
    let text = shipped("b0");
    let model = wearout::scenario::parse("b0.toml", &text).expect("b0");
    let p = model.policies[0].clone();
    let source = Source {
        file: None,
        dir: None,
        text,
    };
    let h = ShardHeader::new(
        &model,
        &source,
        RunKind::Evaluate,
        std::slice::from_ref(&p),
        0..6,
        ShardSpec::WHOLE,
        model.target,
    );
    let mut v = Vec::new();
    shard::write_shard(&h, &model, std::slice::from_ref(&p), &Quiet, &mut v).expect("writes");
    v
}

#[derive(Debug, Clone)]
enum ByteEdit {
    Set(usize, u8),
    Cut(usize),
    Insert(usize, Vec<u8>),
    Remove(usize, usize),
}

fn shard_case(bytes: &Vec<u8>) {
    match shard::open("fuzz.shard", &mut Cursor::new(bytes.as_slice())) {
        Err(e) => assert!(e.to_string().contains("fuzz.shard"), "{e}"),
        Ok(info) => {
            // Only an unchanged file passes the checksum; it must read.
            shard::read_outcomes(&info, &mut Cursor::new(bytes.as_slice()), |_, _, _| {})
                .expect("a checked shard reads");
        }
    }
    // The record decoder on the same bytes, with B1's constants: errors,
    // never a panic.
    let b1 = wearout::scenario::parse("b1.toml", &shipped("b1")).expect("b1");
    let codec = shard::Codec::new(&b1);
    let mut at = 0;
    while at < bytes.len() {
        match codec.decode_slice(&bytes[at..]) {
            Ok((_, used)) => at += used.max(1),
            Err(_) => break,
        }
    }
}

#[test]
fn fuzz_shard_files() {
    let base = small_shard();
    let len = base.len();
    let edit = prop_oneof![
        (0..len, any::<u8>()).prop_map(|(p, b)| ByteEdit::Set(p, b)),
        (0..len).prop_map(ByteEdit::Cut),
        (0..len, prop::collection::vec(any::<u8>(), 1..16))
            .prop_map(|(p, b)| ByteEdit::Insert(p, b)),
        (0..len, 1..64usize).prop_map(|(p, n)| ByteEdit::Remove(p, n)),
    ];
    let strategy = prop::collection::vec(edit, 0..4).prop_map(move |edits| {
        let mut v = base.clone();
        for e in edits {
            match e {
                ByteEdit::Set(p, b) => {
                    if !v.is_empty() {
                        let p = p % v.len();
                        v[p] = b;
                    }
                }
                ByteEdit::Cut(p) => v.truncate(p.min(v.len())),
                ByteEdit::Insert(p, b) => {
                    let p = p.min(v.len());
                    v.splice(p..p, b);
                }
                ByteEdit::Remove(p, n) => {
                    let p = p.min(v.len());
                    let e = (p + n).min(v.len());
                    v.drain(p..e);
                }
            }
        }
        v
    });
    let n = fuzz("shard files", 3, strategy, shard_case);
    assert!(n > 0);
}

// ------------------------------------------------------------ policy lists

fn policies_case(text: &str) {
    let model = wearout::scenario::parse("b0.toml", &shipped("b0")).expect("b0");
    match wearout::recost::parse_policies(&model, "fuzz.json", text) {
        Ok(ps) => {
            assert!(!ps.is_empty());
            for p in &ps {
                assert!(model.safety_violation(p).is_none());
                let _ = wearout::estimate::evaluate(
                    &model,
                    std::slice::from_ref(p),
                    10,
                    2,
                    true,
                    false,
                );
            }
        }
        Err(e) => assert!(e.to_string().starts_with("fuzz.json"), "{e}"),
    }
}

#[test]
fn fuzz_policy_lists() {
    let base = r#"{
  "policies": [
    {
      "name": "F1",
      "rules": {
        "belt": {"rule": "run_to_failure", "interval": null},
        "engine": {"rule": "age", "interval": 11200.0},
        "pump": {"rule": "block", "interval": 5000}
      },
      "stock": {"belt": 0, "engine": 1, "pump": 2}
    },
    {
      "name": "F2",
      "rules": {
        "belt": {"rule": "age", "interval": 900},
        "engine": {"rule": "run_to_failure", "interval": null},
        "pump": {"rule": "run_to_failure"}
      },
      "stock": {"belt": 3, "engine": 0, "pump": 1}
    }
  ]
}"#
    .to_string();
    let snippets: &[&str] = &[
        "null", "[]", "{}", "\"age\"", "-5", "1e400", "\"F3\",", "}", "]",
    ];
    let strategy = prop::collection::vec(mutation(snippets.len()), 1..5)
        .prop_map(move |muts| apply(&base, &muts, snippets));
    let n = fuzz("policy lists", 4, strategy, |t: &String| policies_case(t));
    assert!(n > 0);
}
