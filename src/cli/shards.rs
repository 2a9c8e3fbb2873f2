//! Sharded runs on the command line: `--shard K/N --out FILE` on
//! `evaluate` and on `frontier --policies`, `frontier --policies` itself
//! (re-costing a fixed list of policies on the validation trials), and
//! `wearout merge`; and the estimate of every run, announced or refused
//! before it starts.
//!
//! Owns: the glue between the command line, the files and `shard`,
//! `recost` and `estimate`.
//! May use: every library module; files through `files::TempFile`.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Instant;

use super::frontier::FrontierArgs;
use super::progress::Bar;
use super::{RunOpts, UserError, check_target, io};
use crate::averages::plan_on_averages;
use crate::estimate::{self, Estimate};
use crate::files::TempFile;
use crate::frontier::FrontierResult;
use crate::model::{Model, Policy};
use crate::recost::{self, Costed};
use crate::result::{EvaluateJson, FrontierJson};
use crate::scenario::{Loaded, Source};
use crate::shard::{self, Merged, Merger, RunKind, ShardHeader, ShardSpec};

/// The memory this machine has available (Linux `MemAvailable`), if known.
pub(crate) fn available_memory() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = s.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024.0)
}

/// Refuse a run past the limits, and announce a large one on stderr.
pub(crate) fn guard(model: &Model, est: &Estimate) -> Result<(), UserError> {
    est.check(model, available_memory())
        .map_err(|e| UserError(e.to_string()))?;
    if est.worth_announcing() {
        let _ = writeln!(std::io::stderr(), "estimate: {}", est.describe());
    }
    Ok(())
}

/// Check an `evaluate` run before it starts.
pub(crate) fn guard_evaluate(model: &Model, policy: &Policy, trials: u64) -> Result<(), UserError> {
    let est = estimate::evaluate(
        model,
        std::slice::from_ref(policy),
        trials,
        rayon::current_num_threads(),
        true,
        false,
    );
    guard(model, &est)
}

/// The shard asked for: `--shard K/N` (default the whole run) and `--out`.
fn shard_request(opts: &RunOpts) -> Result<(ShardSpec, PathBuf), UserError> {
    let spec = match &opts.shard {
        Some(s) => ShardSpec::parse(s)?,
        None => ShardSpec::WHOLE,
    };
    let out = opts.out.clone().ok_or_else(|| {
        UserError(format!(
            "--shard {spec} needs --out FILE: the shard file to write (merge the files with `wearout merge`)"
        ))
    })?;
    if opts.json {
        return Err(UserError(
            "--json does not go with --shard/--out: a shard has no summary of its own; pass --json to `wearout merge`".into(),
        ));
    }
    Ok((spec, out))
}

/// Whether the options ask for a shard file.
pub(crate) fn wants_shard(opts: &RunOpts) -> bool {
    opts.shard.is_some() || opts.out.is_some()
}

/// Run a shard and write its file atomically; print one line about it.
fn write_file(
    header: &ShardHeader,
    model: &Model,
    policies: &[Policy],
    path: &Path,
    out: &mut dyn Write,
) -> Result<(), UserError> {
    let trials = header.end - header.first;
    let est = estimate::evaluate(
        model,
        policies,
        trials,
        rayon::current_num_threads(),
        false,
        true,
    );
    guard(model, &est)?;
    let bar = Bar::new("shard", trials.saturating_mul(policies.len() as u64));
    let cannot = |e: std::io::Error| UserError(format!("cannot write {}: {e}", path.display()));
    let mut file = TempFile::create(path).map_err(cannot)?;
    let written = shard::write_shard(header, model, policies, &bar, file.writer())
        .map_err(|e| UserError(e.to_string()))?;
    bar.finish();
    if super::interrupt::cancelled() {
        return Err(UserError("interrupted".into()));
    }
    file.commit().map_err(cannot)?;
    let per_policy = if policies.len() > 1 {
        format!(" x {} policies", policies.len())
    } else {
        String::new()
    };
    writeln!(
        out,
        "shard {}/{} of `{}`: trials {}..{} ({} trials{per_policy}) written to {} in {:.1} s: {} bytes, {:.1} bytes per trial{}",
        header.shard_index,
        header.shard_count,
        header.scenario,
        header.first,
        header.end,
        trials,
        path.display(),
        written.seconds,
        written.bytes,
        if written.records > 0 {
            written.record_bytes as f64 / written.records as f64
        } else {
            0.0
        },
        if policies.len() > 1 { " and policy" } else { "" }
    )
    .map_err(io)
}

/// `wearout evaluate ... --shard K/N --out FILE`.
pub(crate) fn evaluate_shard(
    source: &Source,
    model: &Model,
    policy: &Policy,
    trials: u64,
    target: f64,
    opts: &RunOpts,
    out: &mut dyn Write,
) -> Result<(), UserError> {
    let (spec, path) = shard_request(opts)?;
    let header = ShardHeader::new(
        model,
        source,
        RunKind::Evaluate,
        std::slice::from_ref(policy),
        0..trials,
        spec,
        target,
    );
    write_file(&header, model, std::slice::from_ref(policy), &path, out)
}

/// Load the scenario and the fixed list of policies of `frontier --policies`.
fn fixed_setup(
    args: &FrontierArgs<'_>,
    opts: &RunOpts,
    policies_file: &Path,
) -> Result<(Loaded, Vec<Policy>, u64, f64), UserError> {
    let mut loaded = crate::scenario::load_or_demo(args.file)?;
    let model = &mut loaded.model;
    opts.apply(model);
    let target = check_target(opts.target, model.target)?;
    if args.exhaustive || args.trials.is_some() {
        return Err(UserError(
            "--policies re-costs the given policies on the validation trials only; drop --exhaustive and --trials (use --validate-trials)".into(),
        ));
    }
    let text = std::fs::read_to_string(policies_file).map_err(|e| {
        UserError(format!(
            "cannot read policies file {}: {e}",
            policies_file.display()
        ))
    })?;
    let policies = recost::parse_policies(model, &policies_file.display().to_string(), &text)?;
    let validate = args
        .validate_trials
        .or(model.search.as_ref().map(|s| s.validate_trials))
        .unwrap_or(10_000);
    if validate == 0 {
        return Err(UserError("--validate-trials must be at least 1".into()));
    }
    Ok((loaded, policies, validate, target))
}

/// `wearout frontier --policies FILE.json`: re-cost a fixed list of
/// policies on the validation trials in this process (used by `run` and
/// by reports).
pub(crate) fn compute_fixed(
    args: &FrontierArgs<'_>,
    opts: &RunOpts,
    policies_file: &Path,
) -> Result<(Model, FrontierResult, FrontierJson), UserError> {
    let (loaded, policies, validate, target) = fixed_setup(args, opts, policies_file)?;
    let model = loaded.model;
    let est = estimate::evaluate(
        &model,
        &policies,
        validate,
        rayon::current_num_threads(),
        true,
        false,
    );
    guard(&model, &est)?;
    let bar = Bar::new("validation", validate.saturating_mul(policies.len() as u64));
    let t0 = Instant::now();
    let recosted = recost::recost(
        &model,
        &policies,
        recost::validation_range(validate),
        target,
        recost::measure(&model),
        &bar,
    )
    .ok_or_else(|| UserError("interrupted".into()))?;
    bar.finish();
    let result = FrontierResult::of_list(
        &model,
        recosted,
        validate,
        target,
        t0.elapsed().as_secs_f64(),
    );
    let json = FrontierJson::new(&model, &result, false);
    Ok((model, result, json))
}

/// `wearout frontier --policies FILE.json --shard K/N --out FILE`.
pub(crate) fn frontier_shard(
    args: &FrontierArgs<'_>,
    opts: &RunOpts,
    policies_file: &Path,
    out: &mut dyn Write,
) -> Result<(), UserError> {
    let (spec, path) = shard_request(opts)?;
    let (Loaded { model, source }, policies, validate, target) =
        fixed_setup(args, opts, policies_file)?;
    let header = ShardHeader::new(
        &model,
        &source,
        RunKind::FrontierValidation,
        &policies,
        recost::validation_range(validate),
        spec,
        target,
    );
    write_file(&header, &model, &policies, &path, out)
}

/// What `wearout merge` was asked.
pub struct MergeArgs {
    pub shards: Vec<PathBuf>,
    pub json: bool,
    /// Read this scenario file instead of the text embedded in the shards.
    pub scenario: Option<PathBuf>,
    /// `--report [DIR]`.
    pub report: Option<Option<PathBuf>>,
}

fn open_file(path: &Path) -> Result<std::fs::File, UserError> {
    std::fs::File::open(path)
        .map_err(|e| UserError(format!("cannot read shard file {}: {e}", path.display())))
}

/// Read, check and fold shard files into the summaries a single run gives.
///
/// # Errors
/// When a file cannot be read or is no shard, or the shards are not the
/// whole of one run (see [`shard::plan`]).
pub fn merge_files(args: &MergeArgs) -> Result<Merged, UserError> {
    let mut infos = Vec::with_capacity(args.shards.len());
    for p in &args.shards {
        let mut f = open_file(p)?;
        infos.push(shard::open(&p.display().to_string(), &mut f)?);
    }
    if infos.is_empty() {
        return Err(shard::MergeError::NoShards.into());
    }
    let given = args
        .scenario
        .as_deref()
        .map(crate::scenario::load)
        .transpose()?;
    let merger = Merger::new(infos, given.as_ref())?;
    guard(
        &merger.model,
        &estimate::merge(
            &merger.model,
            merger.policies.len(),
            merger.header().run_trials,
        ),
    )?;
    let paths = &args.shards;
    Ok(merger.fold(|i| {
        std::fs::File::open(&paths[i]).map_err(|e| shard::ShardError::Read {
            file: paths[i].display().to_string(),
            why: e.to_string(),
        })
    })?)
}

/// `wearout merge SHARD...`: print what the single run prints.
pub(crate) fn merge(args: &MergeArgs, out: &mut dyn Write) -> Result<(), UserError> {
    let m = merge_files(args)?;
    let report = args.report.as_ref().map(|d| d.as_deref());
    match m.header.kind {
        RunKind::Evaluate => {
            let (Some(s), Some(p)) = (m.summaries.first(), m.policies.first()) else {
                return Err(UserError("the shards name no policy".into()));
            };
            let plan = plan_on_averages(&m.model, p);
            let json = EvaluateJson::new(&m.model, s, &plan);
            if args.json {
                let s =
                    serde_json::to_string_pretty(&json).map_err(|e| UserError(e.to_string()))?;
                writeln!(out, "{s}").map_err(io)?;
            } else {
                write!(out, "{}", super::evaluate::render(&m.model, &json)).map_err(io)?;
            }
            super::write_report(report, &m.model.name, |progress| {
                crate::report::evaluate_report(&m.model, s, &json, progress)
            })
        }
        RunKind::FrontierValidation => {
            let measure = recost::measure(&m.model);
            let recosted = m
                .summaries
                .into_iter()
                .map(|s| Costed::of(s, measure))
                .collect();
            let result = FrontierResult::of_list(
                &m.model,
                recosted,
                m.header.run_trials,
                m.header.target(),
                m.seconds,
            );
            let json = FrontierJson::new(&m.model, &result, false);
            if args.json {
                let s =
                    serde_json::to_string_pretty(&json).map_err(|e| UserError(e.to_string()))?;
                writeln!(out, "{s}").map_err(io)?;
            } else {
                write!(out, "{}", super::frontier::render(&m.model, &result, &json)).map_err(io)?;
            }
            super::write_report(report, &m.model.name, |progress| {
                crate::report::frontier_report(&m.model, &result, &json, progress)
            })
        }
    }
}
