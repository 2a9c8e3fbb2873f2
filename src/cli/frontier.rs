//! `wearout frontier`: search intervals and stock levels together and list
//! the non-dominated policies; with `--policies FILE.json`, re-cost a given
//! list instead, in this process or as one shard of the run.
//!
//! Owns: the search's and the list's settings from the arguments (trial
//! counts, `--exhaustive`, `--max-full`, the policies file).
//! May use: the library's `frontier`, `recost`, `scenario`, `model`; the
//! command layer's shared steps.

use std::io::Write;
use std::path::Path;
use std::time::Instant;

use wearout::frontier::{FrontierConfig, FrontierResult, search};
use wearout::model::Policy;
use wearout::recost;
use wearout::shard::RunKind;

use super::guard::{Run, guard};
use super::progress::Bar;
use super::{CliError, Finished, Prepared, RunOpts, prepare, shard, show};

/// What the command line asked of a frontier run.
pub struct FrontierArgs<'a> {
    pub file: Option<&'a Path>,
    pub trials: Option<u64>,
    pub validate_trials: Option<u64>,
    pub exhaustive: bool,
    pub max_full: usize,
    /// Re-cost these policies instead of searching (`--policies`).
    pub policies: Option<&'a Path>,
    /// `--report` (`Some(None)`: the default folder) or `--report-dir DIR`.
    pub report: Option<Option<&'a Path>>,
}

/// Run `wearout frontier`.
pub fn run(args: &FrontierArgs<'_>, opts: &RunOpts, out: &mut dyn Write) -> Result<(), CliError> {
    match args.policies {
        Some(file) => given_list(args, file, opts, out),
        None => {
            if shard::wanted(opts) {
                return Err(CliError::user(
                    "--shard/--out on frontier need --policies FILE.json: a search cannot be split, but re-costing a fixed list of policies (e.g. a previous --json) can",
                ));
            }
            searched(args, opts, out)
        }
    }
}

/// The search.
fn searched(args: &FrontierArgs<'_>, opts: &RunOpts, out: &mut dyn Write) -> Result<(), CliError> {
    let Prepared { loaded, target } = prepare(args.file, opts)?;
    let model = &loaded.model;
    let space = model.search.as_ref().ok_or_else(|| {
        CliError::user(format!(
            "scenario `{}` has no [search] table, so there is nothing to search; add one (docs/scenario-format.md)",
            model.name
        ))
    })?;
    let search_trials = args.trials.unwrap_or(space.search_trials);
    let validate_trials = args.validate_trials.unwrap_or(space.validate_trials);
    if search_trials == 0 || validate_trials == 0 {
        return Err(CliError::user(
            "--trials and --validate-trials must be at least 1",
        ));
    }
    let config = FrontierConfig {
        exhaustive: args.exhaustive,
        max_full: args.max_full,
        ..FrontierConfig::new(search_trials, validate_trials, target)
    };
    guard(model, Run::Search(&config))?;
    let bar = Bar::new("frontier", 0);
    let result = search(model, &config, &bar)?;
    bar.finish();
    show(
        Finished::Frontier {
            model,
            result: &result,
            exhaustive: args.exhaustive,
        },
        opts.json,
        args.report,
        out,
    )
}

/// `--policies FILE.json`: re-cost the list on the validation trials, in
/// this process or as one shard.
fn given_list(
    args: &FrontierArgs<'_>,
    file: &Path,
    opts: &RunOpts,
    out: &mut dyn Write,
) -> Result<(), CliError> {
    let request = shard::request(opts, args.report.is_some())?;
    let Prepared { loaded, target } = prepare(args.file, opts)?;
    let model = &loaded.model;
    if args.exhaustive || args.trials.is_some() {
        return Err(CliError::user(
            "--policies re-costs the given policies on the validation trials only; drop --exhaustive and --trials (use --validate-trials)",
        ));
    }
    let text = std::fs::read_to_string(file).map_err(|e| {
        CliError::user(format!("cannot read policies file {}: {e}", file.display()))
    })?;
    let policies: Vec<Policy> = recost::parse_policies(model, &file.display().to_string(), &text)?;
    let validate = args
        .validate_trials
        .or(model.search.as_ref().map(|s| s.validate_trials))
        .unwrap_or(10_000);
    if validate == 0 {
        return Err(CliError::user("--validate-trials must be at least 1"));
    }
    let range = recost::validation_range(validate);
    if let Some(request) = request {
        return request.write(
            &loaded,
            RunKind::FrontierValidation,
            &policies,
            range,
            target,
            out,
        );
    }
    guard(
        model,
        Run::Summaries {
            policies: &policies,
            trials: validate,
        },
    )?;
    let bar = Bar::new("validation", validate.saturating_mul(policies.len() as u64));
    let t0 = Instant::now();
    let recosted = recost::recost(
        model,
        &policies,
        range,
        target,
        recost::measure(model),
        &bar,
    )
    .ok_or(CliError::Interrupted)?;
    bar.finish();
    let result = FrontierResult::of_list(
        model,
        recosted,
        validate,
        target,
        t0.elapsed().as_secs_f64(),
    );
    show(
        Finished::Frontier {
            model,
            result: &result,
            exhaustive: false,
        },
        opts.json,
        args.report,
        out,
    )
}
