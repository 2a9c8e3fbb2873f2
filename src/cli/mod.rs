//! The command line: argument parsing, progress bars, exit codes.
//!
//! Owns: everything that knows clap or indicatif, the terminal and the exit
//! status (0 ok, 2 a user error, 1 an internal failure). The library below
//! never prints; this layer turns its results into text or JSON.
//! May use: every library module.

// The argument types' doc comments are clap's help text, written for the
// terminal (`[policies]` is a TOML table, `<scenario-name>` a placeholder),
// not rustdoc markup.
#![allow(rustdoc::broken_intra_doc_links, rustdoc::invalid_html_tags)]

mod check;
mod evaluate;
pub mod fit;
pub mod frontier;
mod interrupt;
mod progress;
mod shards;
pub mod text;

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// A user-facing error: one message, exit status 2.
#[derive(Debug)]
pub struct UserError(pub String);

impl<E: std::fmt::Display> From<E> for UserError {
    fn from(e: E) -> Self {
        UserError(e.to_string())
    }
}

/// wearout: choose replacement intervals and spares stock for a fleet by
/// the chance of meeting an availability target, not by averages.
#[derive(Debug, Parser)]
#[command(name = "wearout", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

/// Shared options for commands that run trials.
#[derive(Debug, clap::Args)]
pub struct RunOpts {
    /// Random seed (default: the scenario's `seed`).
    #[arg(long)]
    pub seed: Option<u64>,
    /// Availability target A* in (0, 1] (default: the scenario's).
    #[arg(long)]
    pub target: Option<f64>,
    /// Print one JSON object on stdout instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Worker threads (default: all cores). Never changes a result.
    #[arg(long)]
    pub threads: Option<usize>,
    /// Draw each trial's life parameters from the fits' sampling
    /// distributions (parts whose life comes from records); overrides the
    /// scenario's `parameter_uncertainty`.
    #[arg(long = "parameter-uncertainty")]
    pub parameter_uncertainty: bool,
    /// Run only share K of N of the trials (K from 0 to N - 1, e.g. a
    /// scheduler's array index) and write it to the shard file --out;
    /// combine the shards with `wearout merge`. For `frontier`, needs
    /// --policies.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<String>,
    /// The shard file to write (alone: the whole run as one shard).
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
}

impl RunOpts {
    /// Apply the options that change the model.
    pub(crate) fn apply(&self, model: &mut crate::model::Model) {
        if let Some(s) = self.seed {
            model.seed = s;
        }
        if self.parameter_uncertainty {
            model.parameter_uncertainty = true;
        }
    }
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Validate a scenario and summarise its fleet, part types and policies.
    Check {
        /// Scenario file (TOML); the embedded demo when omitted.
        file: Option<PathBuf>,
    },
    /// Cost one named policy on shared trials.
    Evaluate {
        /// Scenario file (TOML); the embedded demo when omitted.
        file: Option<PathBuf>,
        /// Name of a policy in the scenario's [policies] (default: the first).
        #[arg(long)]
        policy: Option<String>,
        /// Number of trials (default: the scenario's `trials`).
        #[arg(long)]
        trials: Option<u64>,
        /// Also write a report folder (index.html, summary.md, CSV tables,
        /// result.json, SVG figures) into DIR; without DIR, into
        /// reports/<scenario-name>/. Give the scenario FILE before --report
        /// when leaving DIR out.
        #[arg(long, value_name = "DIR", num_args = 0..=1)]
        report: Option<Option<PathBuf>>,
        #[command(flatten)]
        run: RunOpts,
    },
    /// Search replacement rules and stock levels together and list the
    /// policies no other beats on both cost and the chance of meeting the
    /// availability target.
    Frontier {
        /// Scenario file (TOML); the embedded demo when omitted.
        file: Option<PathBuf>,
        /// Search trials (default: the scenario's [search] trials, else 2000).
        #[arg(long)]
        trials: Option<u64>,
        /// Fresh trials to re-cost the frontier on (default: [search]
        /// validate_trials, else 10000).
        #[arg(long = "validate-trials")]
        validate_trials: Option<u64>,
        /// Evaluate every policy of the search space (small spaces only).
        #[arg(long)]
        exhaustive: bool,
        /// At most this many policies simulated in full during the search.
        #[arg(long = "max-full", default_value_t = crate::frontier::FrontierConfig::MAX_FULL)]
        max_full: usize,
        /// Skip the search: re-cost these policies (the output of a previous
        /// `frontier --json`, or an array of its policies) on the validation
        /// trials; with --shard K/N --out FILE, only a share of them.
        #[arg(long, value_name = "FILE.json")]
        policies: Option<PathBuf>,
        /// Also write a report folder (index.html, summary.md, CSV tables,
        /// result.json, SVG figures) into DIR; without DIR, into
        /// reports/<scenario-name>/. Give the scenario FILE before --report
        /// when leaving DIR out.
        #[arg(long, value_name = "DIR", num_args = 0..=1)]
        report: Option<Option<PathBuf>>,
        #[command(flatten)]
        run: RunOpts,
    },
    /// Combine shard files (from `--shard K/N --out FILE`) into the summary,
    /// report and JSON the single run gives, bit for bit.
    Merge {
        /// The shard files, in any order.
        shards: Vec<PathBuf>,
        /// Print one JSON object on stdout instead of the table.
        #[arg(long)]
        json: bool,
        /// Read this scenario file instead of the copy inside the shards
        /// (it must give the same scenario).
        #[arg(long, value_name = "FILE")]
        scenario: Option<PathBuf>,
        /// Also write a report folder, as `evaluate --report` does.
        #[arg(long, value_name = "DIR", num_args = 0..=1)]
        report: Option<Option<PathBuf>>,
    },
    /// Fit life distributions to maintenance records or a removal log (CSV).
    Fit(fit::FitCommand),
}

/// Run the command line; returns the process exit code.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    interrupt::install();
    let mut out = std::io::stdout().lock();
    let result = dispatch(cli, &mut out);
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(UserError(msg)) => {
            if msg == "broken pipe" {
                return ExitCode::SUCCESS;
            }
            if msg == "interrupted" {
                let _ = writeln!(std::io::stderr(), "{}", interrupt::MESSAGE);
                return ExitCode::from(interrupt::EXIT_INTERRUPTED);
            }
            let _ = writeln!(std::io::stderr(), "error: {msg}");
            ExitCode::from(2)
        }
    }
}

fn set_threads(threads: Option<usize>) -> Result<(), UserError> {
    if let Some(n) = threads {
        if n == 0 {
            return Err(UserError("--threads must be at least 1".into()));
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| UserError(format!("cannot set up {n} threads: {e}")))?;
    }
    Ok(())
}

fn dispatch(cli: Cli, out: &mut dyn Write) -> Result<(), UserError> {
    match cli.command {
        Command::Check { file } => check::run(file.as_deref(), out),
        Command::Evaluate {
            file,
            policy,
            trials,
            report,
            run,
        } => {
            set_threads(run.threads)?;
            let report = report.as_ref().map(|d| d.as_deref());
            evaluate::run(
                file.as_deref(),
                policy.as_deref(),
                trials,
                &run,
                report,
                out,
            )
        }
        Command::Frontier {
            file,
            trials,
            validate_trials,
            exhaustive,
            max_full,
            policies,
            report,
            run,
        } => {
            set_threads(run.threads)?;
            let report = report.as_ref().map(|d| d.as_deref());
            let args = frontier::FrontierArgs {
                file: file.as_deref(),
                trials,
                validate_trials,
                exhaustive,
                max_full,
                policies: policies.as_deref(),
            };
            frontier::run(&args, &run, report, out)
        }
        Command::Merge {
            shards,
            json,
            scenario,
            report,
        } => {
            let args = shards::MergeArgs {
                shards,
                json,
                scenario,
                report,
            };
            shards::merge(&args, out)
        }
        Command::Fit(command) => {
            let args = fit::FitArgs::from(command);
            fit::run(&args, out).map_err(|e| match e {
                crate::fit::FitError::Output { message, .. } if message.contains("Broken pipe") => {
                    UserError("broken pipe".into())
                }
                e => UserError(e.to_string()),
            })
        }
    }
}

/// Write a report folder when `--report` was given (`Some(None)`: the
/// scenario's default folder) and say on stderr where it landed.
pub(crate) fn write_report(
    dir: Option<Option<&std::path::Path>>,
    scenario: &str,
    make: impl FnOnce(
        &dyn crate::run::Progress,
    ) -> Result<crate::report::Report, crate::report::ReportError>,
) -> Result<(), UserError> {
    let Some(dir) = dir else {
        return Ok(());
    };
    let dir = dir.map_or_else(|| crate::report::default_dir(scenario), PathBuf::from);
    let bar = progress::Bar::new("report", 0);
    let report = make(&bar);
    bar.finish();
    let index = report?.write_to(&dir)?;
    let _ = writeln!(std::io::stderr(), "report written: {}", index.display());
    Ok(())
}

/// Map a write error: a closed pipe is not a failure.
pub(crate) fn io(e: std::io::Error) -> UserError {
    if e.kind() == std::io::ErrorKind::BrokenPipe {
        UserError("broken pipe".into())
    } else {
        UserError(format!("cannot write output: {e}"))
    }
}

/// Check a target typed on the command line.
pub(crate) fn check_target(t: Option<f64>, default: f64) -> Result<f64, UserError> {
    match t {
        None => Ok(default),
        Some(x) if x > 0.0 && x <= 1.0 => Ok(x),
        Some(x) => Err(UserError(format!(
            "--target must be in (0, 1], e.g. 0.92 (got {x})"
        ))),
    }
}
