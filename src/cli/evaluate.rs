//! `wearout evaluate`: cost one policy on shared trials, in this process
//! or as one shard of the run; with several `--policy`, cost each on the
//! same trials and show the paired differences from the first.
//!
//! Owns: choosing the policies and the trial count from the arguments.
//! May use: the library's `run`, `scenario`, `model`; the command layer's
//! shared steps.

use std::io::Write;
use std::path::Path;

use wearout::model::Policy;
use wearout::shard::RunKind;

use super::guard::{Run, guard};
use super::progress::Bar;
use super::{CliError, Finished, Prepared, RunOpts, prepare, shard, show};

/// What the command line asked of an evaluation.
pub struct EvaluateArgs<'a> {
    pub file: Option<&'a Path>,
    /// The policies' names (default: the scenario's first); two or more
    /// compare them.
    pub policies: Vec<&'a str>,
    pub trials: Option<u64>,
    /// `--report` (`Some(None)`: the default folder) or `--report-dir DIR`.
    pub report: Option<Option<&'a Path>>,
}

/// Run `wearout evaluate`.
pub fn run(args: &EvaluateArgs<'_>, opts: &RunOpts, out: &mut dyn Write) -> Result<(), CliError> {
    let Prepared { loaded, target } = prepare(args.file, opts)?;
    let model = &loaded.model;
    let trials = args.trials.unwrap_or(model.trials);
    if trials == 0 {
        return Err(CliError::user("--trials must be at least 1"));
    }
    if args.policies.len() > 1 {
        return compare(args, opts, &loaded, target, trials, out);
    }
    let policy = pick(model, args.policies.first().copied())?;
    if let Some(request) = shard::request(opts, args.report.is_some())? {
        return request.write(
            &loaded,
            RunKind::Evaluate,
            std::slice::from_ref(&policy),
            0..trials,
            target,
            out,
        );
    }
    guard(
        model,
        Run::Summaries {
            policies: std::slice::from_ref(&policy),
            trials,
        },
    )?;
    let bar = Bar::new("evaluate", trials);
    let summary = wearout::run::evaluate_counting_units(model, &policy, 0..trials, target, &bar)
        .ok_or(CliError::Interrupted)?;
    bar.finish();
    show(
        Finished::Evaluate {
            model,
            summary: &summary,
        },
        opts.json,
        args.report,
        out,
    )
}

/// Several policies on the same trials `0..trials`, and their paired
/// differences from the first.
fn compare(
    args: &EvaluateArgs<'_>,
    opts: &RunOpts,
    loaded: &wearout::scenario::Loaded,
    target: f64,
    trials: u64,
    out: &mut dyn Write,
) -> Result<(), CliError> {
    let model = &loaded.model;
    if args.report.is_some() || shard::wanted(opts) {
        return Err(CliError::user(
            "several --policy compare policies at the terminal or as --json; --report, --shard and --out take one --policy",
        ));
    }
    let mut policies: Vec<Policy> = Vec::with_capacity(args.policies.len());
    for name in &args.policies {
        let p = pick(model, Some(name))?;
        if policies.iter().any(|q| q.name == p.name) {
            return Err(CliError::user(format!(
                "--policy `{name}` is given twice; name each policy once"
            )));
        }
        policies.push(p);
    }
    guard(
        model,
        Run::Summaries {
            policies: &policies,
            trials,
        },
    )?;
    let bar = Bar::new("evaluate", trials.saturating_mul(policies.len() as u64));
    let mut summaries = Vec::with_capacity(policies.len());
    for p in &policies {
        let s = wearout::run::evaluate(model, p, 0..trials, target, &bar)
            .ok_or(CliError::Interrupted)?;
        summaries.push(s);
    }
    bar.finish();
    let j = wearout::result::CompareJson::new(model, &summaries);
    if opts.json {
        writeln!(out, "{}", serde_json::to_string_pretty(&j)?)?;
    } else {
        write!(out, "{}", super::render::compare(model, &j))?;
    }
    Ok(())
}

/// The policy named `name`, or the scenario's first.
fn pick(model: &wearout::model::Model, name: Option<&str>) -> Result<Policy, CliError> {
    let names: Vec<&str> = model.policies.iter().map(|p| p.name.as_str()).collect();
    let policy = match name {
        Some(name) => model.policy(name).ok_or_else(|| {
            let hint = wearout::scenario::did_you_mean(name, names.iter().copied());
            CliError::user(format!(
                "the scenario has no policy named `{name}`{hint}; policies: {}",
                if names.is_empty() {
                    "(none)".to_string()
                } else {
                    names.join(", ")
                }
            ))
        })?,
        None => model.policies.first().ok_or_else(|| {
            CliError::user("the scenario names no policies; add a [policies.NAME] table")
        })?,
    };
    Ok(policy.clone())
}
