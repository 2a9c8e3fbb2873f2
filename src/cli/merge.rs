//! `wearout merge SHARD...`: put the shard files of one run back together
//! and show exactly what the single run shows (table, JSON, report).
//!
//! Owns: opening the files the user named and handing them to the
//! library's checks and fold (`wearout::shard`), which open no file.
//! May use: `wearout::shard`, `wearout::recost`, `wearout::frontier`,
//! `wearout::scenario`; the command layer's shared steps.

use std::io::Write;
use std::path::{Path, PathBuf};

use wearout::frontier::FrontierResult;
use wearout::recost::{self, Costed};
use wearout::shard::{self, Merged, Merger, RunKind};

use super::guard::{Run, guard};
use super::{CliError, Finished, show};

/// What `wearout merge` was asked.
pub struct MergeArgs<'a> {
    pub shards: &'a [PathBuf],
    pub json: bool,
    /// Read this scenario file instead of the text embedded in the shards.
    pub scenario: Option<&'a Path>,
    /// `--report` (`Some(None)`: the default folder) or `--report-dir DIR`.
    pub report: Option<Option<&'a Path>>,
}

/// Run `wearout merge`.
pub fn run(args: &MergeArgs<'_>, out: &mut dyn Write) -> Result<(), CliError> {
    let m = merged(args)?;
    match m.header.kind {
        RunKind::Evaluate => {
            let Some(summary) = m.summaries.first() else {
                return Err(CliError::user("the shards name no policy"));
            };
            show(
                Finished::Evaluate {
                    model: &m.model,
                    summary,
                },
                args.json,
                args.report,
                out,
            )
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
            show(
                Finished::Frontier {
                    model: &m.model,
                    result: &result,
                    exhaustive: false,
                },
                args.json,
                args.report,
                out,
            )
        }
    }
}

fn open_file(path: &Path) -> Result<std::fs::File, CliError> {
    std::fs::File::open(path)
        .map_err(|e| CliError::user(format!("cannot read shard file {}: {e}", path.display())))
}

/// Read, check and fold the shard files into the summaries a single run
/// gives.
fn merged(args: &MergeArgs<'_>) -> Result<Merged, CliError> {
    let mut infos = Vec::with_capacity(args.shards.len());
    for p in args.shards {
        let mut f = open_file(p)?;
        infos.push(shard::open(&p.display().to_string(), &mut f)?);
    }
    if infos.is_empty() {
        return Err(shard::MergeError::NoShards.into());
    }
    let given = args.scenario.map(wearout::scenario::load).transpose()?;
    let merger = Merger::new(infos, given.as_ref())?;
    guard(
        &merger.model,
        Run::Merge {
            policies: merger.policies.len(),
            trials: merger.header().run_trials,
        },
    )?;
    let paths = args.shards;
    Ok(merger.fold(|i| {
        std::fs::File::open(&paths[i]).map_err(|e| shard::ShardError::Read {
            file: paths[i].display().to_string(),
            why: e.to_string(),
        })
    })?)
}
