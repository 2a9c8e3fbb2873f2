//! Writing a shard file: `--shard K/N --out FILE` on `evaluate` and on
//! `frontier --policies`. (`wearout merge` puts the shards together; see
//! `merge`.)
//!
//! Owns: what the options ask for (a share and a file, and what does not
//! go with them), and running a share into its file atomically with one
//! line about it on the output.
//! May use: `wearout::shard` (the format), `wearout::files`, the command
//! layer's guard.

use std::io::Write;
use std::ops::Range;
use std::path::PathBuf;

use wearout::files::TempFile;
use wearout::model::Policy;
use wearout::scenario::Loaded;
use wearout::shard::{self, RunKind, ShardHeader, ShardSpec};

use super::guard::{Run, guard};
use super::progress::Bar;
use super::{CliError, RunOpts, interrupt};

/// A shard file asked for: the share, and the file to write.
pub struct Request {
    spec: ShardSpec,
    path: PathBuf,
}

/// Whether the options ask for a shard file.
pub fn wanted(opts: &RunOpts) -> bool {
    opts.shard.is_some() || opts.out.is_some()
}

/// The shard file the options ask for (`--shard K/N`, default the whole
/// run, and `--out`), if any. `report`: whether `--report` was given too.
///
/// # Errors
/// When `--report` or `--json` is given with them, `--out` is missing or
/// `K/N` is not a share.
pub fn request(opts: &RunOpts, report: bool) -> Result<Option<Request>, CliError> {
    if !wanted(opts) {
        return Ok(None);
    }
    if report {
        return Err(CliError::user(
            "--report does not go with --shard/--out: pass --report to `wearout merge`",
        ));
    }
    let spec = match &opts.shard {
        Some(s) => ShardSpec::parse(s)?,
        None => ShardSpec::WHOLE,
    };
    let path = opts.out.clone().ok_or_else(|| {
        CliError::user(format!(
            "--shard {spec} needs --out FILE: the shard file to write (merge the files with `wearout merge`)"
        ))
    })?;
    if opts.json {
        return Err(CliError::user(
            "--json does not go with --shard/--out: a shard has no summary of its own; pass --json to `wearout merge`",
        ));
    }
    Ok(Some(Request { spec, path }))
}

impl Request {
    /// Run this share of the run of `policies` on trials `run` of the
    /// scenario `loaded` (options applied) and write its file atomically;
    /// print one line about it.
    ///
    /// # Errors
    /// When the run is refused by the guard, is interrupted, or the file
    /// cannot be written.
    pub fn write(
        &self,
        loaded: &Loaded,
        kind: RunKind,
        policies: &[Policy],
        run: Range<u64>,
        target: f64,
        out: &mut dyn Write,
    ) -> Result<(), CliError> {
        let model = &loaded.model;
        let header = ShardHeader::new(
            model,
            &loaded.source,
            kind,
            policies,
            run,
            self.spec,
            target,
        );
        let trials = header.end - header.first;
        guard(model, Run::Shard { policies, trials })?;
        let path = &self.path;
        let bar = Bar::new("shard", trials.saturating_mul(policies.len() as u64));
        let cannot =
            |e: std::io::Error| CliError::user(format!("cannot write {}: {e}", path.display()));
        let mut file = TempFile::create(path).map_err(cannot)?;
        let written = shard::write_shard(&header, model, policies, &bar, file.writer())?;
        bar.finish();
        if interrupt::cancelled() {
            return Err(CliError::Interrupted);
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
            if policies.len() > 1 {
                " and policy"
            } else {
                ""
            }
        )?;
        Ok(())
    }
}
