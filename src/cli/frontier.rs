//! `wearout frontier`: search intervals and stock levels together and list
//! the non-dominated policies.

use std::io::Write;
use std::path::Path;

use super::progress::Bar;
use super::text::{pct, table};
use super::{RunOpts, UserError, check_target, io};
use crate::frontier::{FrontierConfig, FrontierResult, search};
use crate::model::Model;
use crate::recost::NoiseFlags;
use crate::result::{FrontierJson, cost_measure_label};
use crate::scenario::load_or_demo;
use crate::text::{CAUTION, money, num};

/// What the command line asked of a frontier run.
pub struct FrontierArgs<'a> {
    pub file: Option<&'a Path>,
    pub trials: Option<u64>,
    pub validate_trials: Option<u64>,
    pub exhaustive: bool,
    pub max_full: usize,
    /// Re-cost these policies instead of searching (`--policies`).
    pub policies: Option<&'a Path>,
}

/// Load, search and return the model, result and JSON (used by reports too).
pub fn compute(
    args: &FrontierArgs<'_>,
    opts: &RunOpts,
) -> Result<(Model, FrontierResult, FrontierJson), UserError> {
    if let Some(p) = args.policies {
        return super::shards::compute_fixed(args, opts, p);
    }
    let mut model = load_or_demo(args.file)?.model;
    opts.apply(&mut model);
    let target = check_target(opts.target, model.target)?;
    let space = model.search.as_ref().ok_or_else(|| {
        UserError(format!(
            "scenario `{}` has no [search] table, so there is nothing to search; add one (docs/scenario-format.md)",
            model.name
        ))
    })?;
    let search_trials = args.trials.unwrap_or(space.search_trials);
    let validate_trials = args.validate_trials.unwrap_or(space.validate_trials);
    if search_trials == 0 || validate_trials == 0 {
        return Err(UserError(
            "--trials and --validate-trials must be at least 1".into(),
        ));
    }
    let config = FrontierConfig {
        exhaustive: args.exhaustive,
        max_full: args.max_full,
        ..FrontierConfig::new(search_trials, validate_trials, target)
    };
    super::shards::guard(
        &model,
        &crate::estimate::frontier(&model, &config, rayon::current_num_threads()),
    )?;
    let bar = Bar::new("frontier", 0);
    let result = search(&model, &config, &bar)?;
    bar.finish();
    let json = FrontierJson::new(&model, &result, args.exhaustive);
    Ok((model, result, json))
}

pub fn run(
    args: &FrontierArgs<'_>,
    opts: &RunOpts,
    report: Option<Option<&Path>>,
    out: &mut dyn Write,
) -> Result<(), UserError> {
    if super::shards::wants_shard(opts) {
        let Some(p) = args.policies else {
            return Err(UserError(
                "--shard/--out on frontier need --policies FILE.json: a search cannot be split, but re-costing a fixed list of policies (e.g. a previous --json) can".into(),
            ));
        };
        if report.is_some() {
            return Err(UserError(
                "--report does not go with --shard/--out: pass --report to `wearout merge`".into(),
            ));
        }
        return super::shards::frontier_shard(args, opts, p, out);
    }
    let (model, result, json) = compute(args, opts)?;
    if opts.json {
        let s = serde_json::to_string_pretty(&json).map_err(|e| UserError(e.to_string()))?;
        writeln!(out, "{s}").map_err(io)?;
    } else {
        write!(out, "{}", render(&model, &result, &json)).map_err(io)?;
    }
    super::write_report(report, &model.name, |progress| {
        crate::report::frontier_report(&model, &result, &json, progress)
    })
}

/// The readable frontier table.
pub fn render(model: &Model, r: &FrontierResult, j: &FrontierJson) -> String {
    let cur = if model.currency.is_empty() {
        String::new()
    } else {
        format!(" {}", model.currency)
    };
    let mut s = String::new();
    s.push_str(&format!(
        "Scenario `{}`: {} units over {} h, target availability {}\n",
        model.name,
        model.units.len(),
        num(model.horizon, 0),
        pct(r.target)
    ));
    s.push_str(&format!(
        "Cost measure: {}{cur} over the horizon. Chance = share of trials with availability >= {} (Wilson 95 % interval).\n\n",
        cost_measure_label(r.cost),
        pct(r.target)
    ));
    let mut header = vec![
        "policy".to_string(),
        "chance [95 % interval]".into(),
        "cost ± se".into(),
        "avail P10/P50/P90".into(),
        "stock capital".into(),
    ];
    for p in &model.parts {
        header.push(p.name.clone());
    }
    header.push("vs previous".into());
    let mut rows = vec![header];
    for pt in &r.points {
        let c = &pt.costed;
        let a = c.summary.availability();
        let mut row = vec![
            c.policy.name.clone(),
            format!(
                "{} [{}, {}]",
                pct(c.chance.value),
                pct(c.chance.lo),
                pct(c.chance.hi)
            ),
            format!("{} ± {}", money(c.cost.mean), money(c.cost.se)),
            format!(
                "{:.1}/{:.1}/{:.1} %",
                100.0 * a.p10,
                100.0 * a.p50,
                100.0 * a.p90
            ),
            money(c.summary.initial_stock_capital),
        ];
        for pp in &c.policy.parts {
            row.push(format!("{} S{}", pp.rule.short(), pp.stock));
        }
        row.push(pt.noise.as_ref().map_or("-", NoiseFlags::words).to_string());
        rows.push(row);
    }
    s.push_str(&table(&rows));
    s.push_str("\nRules: RTF run to failure, A<h> age replacement at h operating hours, B<h> block replacement every h unit operating hours; S<n> base-stock level.\n");
    s.push_str("\"same within noise\": the paired difference from the row above, on the same trials, is within two standard errors; do not pay for it.\n");
    let st = &r.stats;
    if r.search_trials == 0 {
        // `--policies`: a fixed list re-costed, no search.
        s.push_str(&format!(
            "\nRe-costed the {} given policies on {} validation trials; {} of them are non-dominated. Took {:.1} s.\n",
            st.recosted,
            num(r.validate_trials as f64, 0),
            r.points.len(),
            st.seconds_validation
        ));
        s.push_str(&format!("\n{CAUTION}\n"));
        return s;
    }
    s.push_str(&format!(
        "\nSearched {} of {} policies{} in full on {} search trials ({} single-part screening runs, {} policies scored on the surrogate, {} linear programs); re-costed {} of the {} search-frontier policies on {} fresh trials. Took {:.1} s (screening {:.1} s, search {:.1} s, validation {:.1} s).\n",
        num(st.evaluated as f64, 0),
        num(r.space_size as f64, 0),
        if j.exhaustive { " (exhaustive)" } else { "" },
        num(r.search_trials as f64, 0),
        st.screening_runs,
        num(st.surrogate_scored as f64, 0),
        st.lps,
        st.recosted,
        r.search_frontier.len(),
        num(r.validate_trials as f64, 0),
        j.seconds,
        st.seconds_screening,
        st.seconds_search,
        st.seconds_validation
    ));
    s.push_str(&format!("\n{CAUTION}\n"));
    s
}
