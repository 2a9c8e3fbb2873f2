//! The report's section for finance and stores planners: present with
//! `[money]` (the money-by-year figure, money.csv with one row per policy
//! and year agreeing with the summary), absent without; the stores table
//! always. The references are the run's own summary figures (agreement
//! checks between the files and the figures computed in memory).

mod common;

use common::load;
use wearout::mean_life::mean_life_plan;
use wearout::result::EvaluateJson;
use wearout::run::{Quiet, evaluate_counting_units};

fn report(name: &str, trials: u64) -> (wearout::report::Report, wearout::summary::Summary) {
    let m = load(name);
    let p = m.policy("reference").expect("reference policy").clone();
    let s = evaluate_counting_units(&m, &p, 0..trials, m.target, &Quiet).expect("runs");
    let plan = mean_life_plan(&m, &p);
    let json = EvaluateJson::new(&m, &s, &plan);
    let r = wearout::report::evaluate_report(&m, &s, &json, &Quiet).expect("report renders");
    (r, s)
}

#[test]
fn b2_report_has_money_by_year_and_its_csv() {
    let (r, s) = report("b2", 150);
    let html = r.text("index.html").expect("index.html");
    let md = r.text("summary.md").expect("summary.md");
    for text in [html, md] {
        assert!(text.contains("Money by year, for finance"));
        assert!(text.contains("within budget every year"));
        assert!(text.contains("Stores: fill rate, stock-outs, backorders"));
    }
    assert!(html.contains("money-years.svg"));
    let svg = r.text("money-years.svg").expect("the figure");
    assert!(svg.contains("yearly budget"), "the budget line is labelled");
    let csv = r.text("money.csv").expect("money.csv");
    let f = s.money().expect("money figures");
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines.len(),
        1 + f.years.len(),
        "one row per policy and year"
    );
    let head: Vec<&str> = lines[0].split(',').collect();
    let col = |name: &str| head.iter().position(|h| *h == name).expect(name);
    for (line, y) in lines[1..].iter().zip(&f.years) {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells[col("policy")], "reference");
        assert_eq!(cells[col("year")].parse::<u32>().unwrap(), y.year);
        // Written with Rust's shortest round-trip form: read back exactly.
        assert_eq!(
            cells[col("spend_mean")].parse::<f64>().unwrap(),
            y.spend.mean
        );
        assert_eq!(cells[col("spend_p90")].parse::<f64>().unwrap(), y.spend.p90);
        assert_eq!(
            cells[col("within_budget")].parse::<f64>().unwrap(),
            y.within_budget.unwrap().value
        );
        assert_eq!(
            cells[col("pv_spend_mean")].parse::<f64>().unwrap(),
            f.pv_spend.mean
        );
    }
}

#[test]
fn a_report_without_money_has_no_money_section_but_the_stores_table() {
    let (r, _) = report("b0", 100);
    let html = r.text("index.html").expect("index.html");
    assert!(!html.contains("Money by year"));
    assert!(r.text("money.csv").is_none());
    assert!(r.text("money-years.svg").is_none());
    assert!(html.contains("Stores: fill rate, stock-outs, backorders"));
    assert!(
        html.contains("8,760 operating hours") || html.contains("8 760 operating hours"),
        "the default year is named"
    );
}
