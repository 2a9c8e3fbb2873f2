//! The report's files agree with each other and with the in-memory result:
//! result.json is, byte for byte, what the command prints with `--json`
//! (the binary's own output of the same run), policies.csv and frontier.csv
//! carry the same figures, and trials.csv (re-run trial by trial) gives back
//! every mean, chance and percentile of the run it reports. The HTML page
//! is self-contained and escapes what the scenario says.
//!
//! These are agreement checks between files the report writes and the
//! figures computed in memory, so the references are the run itself; the
//! percentile definition used to redo figures from trials.csv is Hyndman &
//! Fan (1996) definition 7 (the default of R, numpy and spreadsheets'
//! PERCENTILE.INC), and the chance is the share of trials meeting the
//! target (README, "What the figures mean").

mod common;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use common::temp_dir;

use wearout::frontier::{FrontierConfig, FrontierResult, search};
use wearout::model::Model;
use wearout::recost::VALIDATION_OFFSET;
use wearout::result::FrontierJson;
use wearout::run::Quiet;

/// The 2026 demo's frontier on few trials (fast in release builds).
fn demo() -> &'static (Model, FrontierResult, FrontierJson) {
    static RUN: OnceLock<(Model, FrontierResult, FrontierJson)> = OnceLock::new();
    RUN.get_or_init(|| {
        // The demo as it stood before sites (the frontier search does not
        // cover stock per site yet).
        let model = common::demo_2026();
        let config = FrontierConfig {
            screen_trials: 200,
            ..FrontierConfig::new(200, 400, model.target)
        };
        let result = search(&model, &config, &Quiet).expect("search runs");
        let json = FrontierJson::new(&model, &result, false);
        (model, result, json)
    })
}

/// The demo report, written once.
fn written() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let (model, result, json) = demo();
        let report =
            wearout::report::frontier_report(model, result, json, &Quiet).expect("report renders");
        let dir = temp_dir("report-files");
        let index = report.write_to(&dir).expect("report writes");
        assert_eq!(index, dir.join("index.html"));
        dir
    })
}

/// A CSV file as rows of named fields.
fn read_csv(path: &Path) -> Vec<BTreeMap<String, String>> {
    let mut r = csv::Reader::from_path(path).expect("csv opens");
    let head: Vec<String> = r
        .headers()
        .expect("header")
        .iter()
        .map(String::from)
        .collect();
    r.records()
        .map(|rec| {
            let rec = rec.expect("csv row");
            head.iter()
                .cloned()
                .zip(rec.iter().map(String::from))
                .collect()
        })
        .collect()
}

fn f(row: &BTreeMap<String, String>, key: &str) -> f64 {
    row.get(key)
        .unwrap_or_else(|| panic!("column {key} missing"))
        .parse()
        .unwrap_or_else(|e| panic!("column {key}: {e}"))
}

/// Percentile by Hyndman & Fan (1996) definition 7, written out here
/// independently of the crate's own.
fn type7(xs: &mut [f64], p: f64) -> f64 {
    xs.sort_by(f64::total_cmp);
    let h = (xs.len() - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = h.ceil() as usize;
    xs[lo] + (h - lo as f64) * (xs[hi] - xs[lo])
}

/// `result.json` is what the command prints with `--json`, byte for byte:
/// compared with the binary's own output of the same run (a frontier's
/// timings included), for a frontier, an evaluation (also against a run
/// without `--report`) and a merge of shards.
#[test]
fn result_json_is_the_json_output() {
    let dir = temp_dir("report-json");
    let run = |args: &[&str], report: Option<&Path>| -> Vec<u8> {
        let mut c = common::wearout();
        c.args(args);
        if let Some(d) = report {
            c.arg("--report-dir").arg(d);
        }
        let out = c.output().expect("wearout runs");
        assert!(
            out.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        out.stdout
    };
    let on_disk = |d: &Path| std::fs::read(d.join("result.json")).expect("result.json");

    let front = dir.join("frontier");
    // The frontier search does not cover the demo's sites yet: the 2026 demo.
    let demo_2026 = common::demo_2026_path();
    let printed = run(
        &[
            "frontier",
            &demo_2026,
            "--trials",
            "100",
            "--validate-trials",
            "200",
            "--json",
        ],
        Some(&front),
    );
    assert_eq!(
        String::from_utf8_lossy(&on_disk(&front)),
        String::from_utf8_lossy(&printed)
    );

    let eval = dir.join("evaluate");
    let b0 = common::scenario_path("b0");
    let args = ["evaluate", &b0, "--trials", "300", "--json"];
    let printed = run(&args, Some(&eval));
    assert_eq!(on_disk(&eval), printed);
    assert_eq!(run(&args, None), printed, "--report changes no output");

    let shards: Vec<String> = (0..2)
        .map(|k| {
            let f = dir.join(format!("part-{k}.shard")).display().to_string();
            let spec = format!("{k}/2");
            run(
                &[
                    "evaluate", &b0, "--trials", "300", "--shard", &spec, "--out", &f,
                ],
                None,
            );
            f
        })
        .collect();
    let merged = dir.join("merged");
    let mut args = vec!["merge", "--json"];
    args.extend(shards.iter().map(String::as_str));
    let printed = run(&args, Some(&merged));
    assert_eq!(on_disk(&merged), printed);
    assert_eq!(
        printed,
        run(&["evaluate", &b0, "--trials", "300", "--json"], None)
    );
}

#[test]
fn policies_csv_matches_the_result_and_the_json() {
    let (model, result, json) = demo();
    let rows = read_csv(&written().join("policies.csv"));
    assert_eq!(rows.len(), result.points.len());
    assert_eq!(rows.len(), json.policies.len());
    for ((row, pt), pj) in rows.iter().zip(&result.points).zip(&json.policies) {
        let c = &pt.costed;
        assert_eq!(row["policy"], c.policy.name);
        assert_eq!(row["policy"], pj.name);
        assert_eq!(row["describe"], pj.describe);
        // Written with Rust's shortest round-trip form: exact.
        assert_eq!(f(row, "cost"), c.cost.mean);
        assert_eq!(f(row, "cost"), pj.cost.mean);
        assert_eq!(f(row, "cost_se"), pj.cost.se);
        assert_eq!(f(row, "chance"), pj.chance.value);
        assert_eq!(f(row, "chance_lo"), pj.chance.lo);
        assert_eq!(f(row, "chance_hi"), pj.chance.hi);
        assert_eq!(f(row, "availability_mean"), pj.availability_mean);
        assert_eq!(f(row, "availability_p10"), pj.availability.p10);
        assert_eq!(f(row, "availability_p50"), pj.availability.p50);
        assert_eq!(f(row, "availability_p90"), pj.availability.p90);
        assert_eq!(f(row, "spend"), pj.spend);
        assert_eq!(f(row, "total_with_penalty"), pj.total_with_penalty);
        assert_eq!(f(row, "initial_stock_capital"), pj.initial_stock_capital);
        assert_eq!(f(row, "trials"), json.validate_trials as f64);
        assert_eq!(f(row, "first_trial"), json.validate_first_trial as f64);
        for part in &model.parts {
            let rule = &pj.rules[&part.name];
            assert_eq!(row[&format!("{}_rule", part.name)], rule.rule);
            assert_eq!(
                f(row, &format!("{}_stock", part.name)),
                pj.stock[&part.name] as f64
            );
            let interval = &row[&format!("{}_interval_hours", part.name)];
            match rule.interval {
                Some(t) => assert_eq!(interval.parse::<f64>().ok(), Some(t)),
                None => assert!(interval.is_empty()),
            }
        }
        // The components add up to the total with the penalty, and with
        // the capital to the spend (README: cost.total, cost.spend).
        let parts = f(row, "parts")
            + f(row, "planned_labour")
            + f(row, "unplanned_labour")
            + f(row, "holding");
        let total = parts + f(row, "downtime");
        assert!(
            (total - pj.total_with_penalty).abs() <= 1e-6 * total,
            "{row:?}"
        );
        let spend = parts + f(row, "initial_stock_capital");
        assert!((spend - pj.spend).abs() <= 1e-6 * spend, "{row:?}");
        // The mean-life plan, recomputed here.
        let plan = wearout::mean_life::mean_life_plan(model, &c.policy);
        assert_eq!(f(row, "plan_availability"), plan.availability);
        assert_eq!(row["plan_meets_target"], plan.meets_target.to_string());
    }
}

#[test]
fn frontier_csv_holds_every_point_of_the_figure() {
    let (_, result, json) = demo();
    let rows = read_csv(&written().join("frontier.csv"));
    let searched: Vec<_> = rows.iter().filter(|r| r["set"] == "searched").collect();
    let frontier: Vec<_> = rows.iter().filter(|r| r["set"] == "frontier").collect();
    assert_eq!(searched.len() + frontier.len(), rows.len());
    assert_eq!(searched.len(), result.searched.len());
    assert_eq!(searched.len(), json.evaluated);
    for (row, (p, cost, chance)) in searched.iter().zip(&result.searched) {
        assert_eq!(row["policy"], p.name);
        assert_eq!(f(row, "cost"), cost.mean);
        assert_eq!(f(row, "chance"), chance.value);
        assert_eq!(f(row, "trials"), json.search_trials as f64);
    }
    assert_eq!(frontier.len(), json.policies.len());
    for (row, pj) in frontier.iter().zip(&json.policies) {
        assert_eq!(row["policy"], pj.name);
        assert_eq!(f(row, "cost"), pj.cost.mean);
        assert_eq!(f(row, "chance"), pj.chance.value);
        assert_eq!(row["cost_measure"], json.cost_measure);
    }
    // Non-dominated: cheaper rows never have a better chance.
    for w in frontier.windows(2) {
        assert!(f(w[0], "cost") <= f(w[1], "cost"));
        assert!(f(w[0], "chance") < f(w[1], "chance"));
    }
}

#[test]
fn trials_csv_gives_back_every_figure() {
    let (_, result, json) = demo();
    let rows = read_csv(&written().join("trials.csv"));
    let n = json.validate_trials as usize;
    assert_eq!(rows.len(), n * result.points.len());
    for (k, (pt, pj)) in result.points.iter().zip(&json.policies).enumerate() {
        let mine = &rows[k * n..(k + 1) * n];
        let s = &pt.costed.summary;
        let mut avail = Vec::with_capacity(n);
        let (mut total, mut spend, mut met) = (0.0, 0.0, 0u64);
        let mut comp = [0.0f64; 5];
        for (i, row) in mine.iter().enumerate() {
            assert_eq!(row["policy"], pj.name);
            assert_eq!(f(row, "trial") as u64, VALIDATION_OFFSET + i as u64);
            let a = f(row, "availability");
            // Availability in full: exactly the kept per-trial figure.
            assert_eq!(a, s.acc.trial_availability[i]);
            assert_eq!(row["meets_target"] == "1", a >= json.target);
            avail.push(a);
            let c = [
                f(row, "parts"),
                f(row, "planned_labour"),
                f(row, "unplanned_labour"),
                f(row, "downtime"),
                f(row, "holding"),
            ];
            // Money to the cent: each figure within half a cent.
            let t = f(row, "total");
            assert!((t - s.acc.trial_total[i]).abs() <= 0.005 + 1e-9 * t);
            assert!((c.iter().sum::<f64>() - t).abs() <= 0.03, "{row:?}");
            let sp = f(row, "spend");
            assert!(
                (sp - s.acc.trial_spend[i] - s.initial_stock_capital).abs() <= 0.005 + 1e-9 * sp
            );
            for (acc, x) in comp.iter_mut().zip(c) {
                *acc += x;
            }
            total += t;
            spend += sp;
            met += u64::from(row["meets_target"] == "1");
        }
        let nf = n as f64;
        // The chance is the share of trials meeting the target.
        assert_eq!(met as f64 / nf, pj.chance.value);
        assert!((total / nf - pj.total_with_penalty).abs() <= 0.006);
        assert!((spend / nf - pj.spend).abs() <= 0.006);
        // The components' means against the moments kept in memory.
        let acc = &s.acc;
        let want = [
            acc.parts_cost.mean(),
            acc.labour_planned.mean(),
            acc.labour_unplanned.mean(),
            acc.downtime_cost.mean(),
            acc.holding.mean(),
        ];
        for (got, want) in comp.iter().zip(want) {
            assert!((got / nf - want).abs() <= 0.006, "{got} vs {want}");
        }
        let mean = avail.iter().sum::<f64>() / nf;
        assert!((mean - pj.availability_mean).abs() <= 1e-12);
        assert!((type7(&mut avail, 0.10) - pj.availability.p10).abs() <= 1e-12);
        assert!((type7(&mut avail, 0.50) - pj.availability.p50).abs() <= 1e-12);
        assert!((type7(&mut avail, 0.90) - pj.availability.p90).abs() <= 1e-12);
    }
}

#[test]
fn html_is_self_contained_and_links_only_its_own_files() {
    let dir = written();
    let html = std::fs::read_to_string(dir.join("index.html")).expect("index.html");
    assert!(html.starts_with("<!DOCTYPE html>"));
    for banned in [
        "http:", "https:", "://", "www.", "<link", "@import", "url(", " src=",
    ] {
        assert!(!html.contains(banned), "index.html contains `{banned}`");
    }
    // Its only scripts are its own, inline: the target box's data and code.
    assert_eq!(html.matches("<script").count(), 2, "two scripts");
    assert!(html.contains("<script type=\"application/json\" id=\"wo-data\">"));
    assert!(html.contains("<script>\n"));
    // Every link is to a heading of the page or a file of the report.
    for piece in html.split("href=\"").skip(1) {
        let target = &piece[..piece.find('"').expect("closed attribute")];
        if let Some(id) = target.strip_prefix('#') {
            assert!(html.contains(&format!("id=\"{id}\"")), "no anchor {id}");
        } else {
            assert!(!target.contains(['/', ':', '\\']), "link {target}");
            assert!(dir.join(target).is_file(), "link to missing {target}");
        }
    }
    // Every figure inline, and also as its own file.
    let svgs = [
        "frontier",
        "exceedance",
        "mean-life",
        "costs",
        "life",
        "stock",
    ];
    assert_eq!(html.matches("<svg").count(), svgs.len());
    for name in svgs {
        let svg = std::fs::read_to_string(dir.join(format!("{name}.svg"))).expect("svg file");
        assert!(svg.starts_with("<svg"));
        assert!(html.contains(&format!("({name}.svg)")));
    }
    // Print styles for paper.
    assert!(html.contains("@media print") && html.contains("@page"));
}

/// The text of a Markdown section from its heading to the next heading.
fn section<'a>(md: &'a str, heading: &str) -> &'a str {
    let start = md.find(heading).expect("heading") + heading.len();
    let end = md[start..].find("\n#").map_or(md.len(), |e| start + e);
    &md[start..end]
}

/// The F-numbers a text names, sorted, each once.
fn f_numbers(text: &str) -> Vec<u32> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    for i in 0..b.len() {
        let starts = b[i] == b'F' && (i == 0 || !b[i - 1].is_ascii_alphanumeric());
        if !starts {
            continue;
        }
        let digits: String = text[i + 1..]
            .chars()
            .take_while(char::is_ascii_digit)
            .collect();
        let next = text[i + 1 + digits.len()..].chars().next();
        if !digits.is_empty() && !next.is_some_and(|c| c.is_ascii_alphanumeric()) {
            out.push(digits.parse().expect("digits"));
        }
    }
    out.sort_unstable();
    out.dedup();
    out
}

#[test]
fn summary_md_names_the_findings() {
    let (model, result, _) = demo();
    let md = std::fs::read_to_string(written().join("summary.md")).expect("summary.md");
    assert!(md.starts_with("# "));
    for heading in [
        "## In short",
        "## Cheapest policy for each chance level",
        "## What are our chances?",
        "## Where the mean-life plan goes wrong",
        "## What the figures assume",
        "## Cautions",
    ] {
        assert!(md.contains(heading), "summary.md lacks {heading}");
    }
    // Every table names a policy by its F-number and its code.
    for pt in &result.points {
        let p = &pt.costed.policy;
        assert!(md.contains(&format!("| {} ({}) |", p.name, p.code(model))));
    }
    // The scenario's own policies, placed against the frontier.
    assert!(md.contains("## The scenario's own policies"));
    for p in &model.policies {
        assert!(md.contains(&format!("| {} ({}) |", p.name, p.code(model))));
    }
    // Issue 13, item 11: the policies the summary names are exactly the
    // ones the figures single out (the columns of the chance table).
    let short = section(&md, "## In short");
    let named_in_short = f_numbers(short);
    let table_head = md
        .lines()
        .find(|l| l.starts_with("| availability at least |"))
        .expect("the chance table");
    assert_eq!(
        named_in_short,
        f_numbers(table_head),
        "{short}\n{table_head}"
    );
    assert!(short.contains("with the downtime penalty"));
    for part in &model.parts {
        assert!(md.contains(&format!("`{}`", part.name)));
    }
    assert!(md.contains("licensed engineers"));
    assert!(!md.contains("<svg"));
}

#[test]
fn scenario_text_is_escaped_in_html() {
    let (model, result, json) = demo();
    let mut m = model.clone();
    m.description = "<script>alert(\"x\")</script> & <b>bold</b>".into();
    let report = wearout::report::frontier_report(&m, result, json, &Quiet).expect("renders");
    let html = report.text("index.html").expect("index.html");
    // Only the page's own two scripts; the description's is escaped.
    assert_eq!(html.matches("<script").count(), 2);
    assert!(!html.contains("<script>alert"));
    assert!(!html.contains("<b>bold"));
    assert!(html.contains("&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &lt;b&gt;"));
    let md = report.text("summary.md").expect("summary.md");
    assert!(!md.contains("<script>"), "Markdown escapes raw HTML too");
}
