//! `wearout evaluate`: cost one policy on shared trials, in this process
//! or as one shard of the run.
//!
//! Owns: choosing the policy and the trial count from the arguments.
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
    /// The policy's name (default: the scenario's first).
    pub policy: Option<&'a str>,
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
    let policy = pick(model, args.policy)?;
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
