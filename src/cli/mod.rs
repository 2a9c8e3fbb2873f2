//! The command line: argument parsing, the steps every command shares,
//! exit statuses. Part of the `wearout` binary, not of the library: the
//! library knows nothing of clap, indicatif or ctrlc.
//!
//! Owns: the arguments (clap), the steps the commands share (load the
//! scenario and apply the options to it, check the target, show a result
//! as JSON or as the terminal's table and write its report folder), and
//! the dispatch to each command's module: `evaluate`, `frontier`,
//! `merge`, `fit`; `shard` writes shard files, `guard` checks a run's size
//! before it starts, `render` holds the terminal's tables, `error` the
//! exit statuses, `interrupt` and `progress` the signals and the bars.
//! May use: every library module.

// The argument types' doc comments are clap's help text, written for the
// terminal (`[policies]` is a TOML table, `<scenario-name>` a placeholder),
// not rustdoc markup.
#![allow(rustdoc::broken_intra_doc_links, rustdoc::invalid_html_tags)]

mod error;
mod evaluate;
mod fit;
mod frontier;
mod guard;
mod interrupt;
mod merge;
mod progress;
mod render;
mod render_money;
mod shard;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand};
use wearout::frontier::FrontierResult;
use wearout::mean_life::mean_life_plan;
use wearout::model::Model;
use wearout::report::{Report, ReportError};
use wearout::result::{EvaluateJson, FrontierJson};
use wearout::run::Progress;
use wearout::scenario::{Loaded, load_or_demo};
use wearout::summary::Summary;

pub use error::CliError;

/// wearout: choose replacement intervals and spares stock for a fleet by
/// the chance of meeting an availability target, not by mean figures.
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
    fn apply(&self, model: &mut Model) {
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
        /// Name of a policy in the scenario's [policies] (default: the
        /// first). Give it two or more times to compare the policies on the
        /// same trials: each one's figures and its paired differences from
        /// the first, with their standard errors.
        #[arg(long)]
        policy: Vec<String>,
        /// Number of trials (default: the scenario's `trials`).
        #[arg(long)]
        trials: Option<u64>,
        /// Also write a report folder (index.html, summary.md, CSV tables,
        /// result.json, SVG figures) into the default folder,
        /// reports/<scenario-name>-evaluate-<policy>/. (--report=DIR, with the equals sign, is read as
        /// --report-dir DIR.)
        #[arg(long, value_name = "DIR", num_args = 0..=1, require_equals = true)]
        report: Option<Option<PathBuf>>,
        /// Write the report folder into DIR (created if missing; it must be
        /// empty or hold an earlier wearout report).
        #[arg(long = "report-dir", value_name = "DIR", conflicts_with = "report")]
        report_dir: Option<PathBuf>,
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
        #[arg(long = "max-full", default_value_t = wearout::frontier::FrontierConfig::MAX_FULL)]
        max_full: usize,
        /// Skip the search: re-cost these policies (the output of a previous
        /// `frontier --json`, or an array of its policies) on the validation
        /// trials; with --shard K/N --out FILE, only a share of them.
        #[arg(long, value_name = "FILE.json")]
        policies: Option<PathBuf>,
        /// Also write a report folder (index.html, summary.md, CSV tables,
        /// result.json, SVG figures) into the default folder,
        /// reports/<scenario-name>/. (--report=DIR, with the equals sign, is read as
        /// --report-dir DIR.)
        #[arg(long, value_name = "DIR", num_args = 0..=1, require_equals = true)]
        report: Option<Option<PathBuf>>,
        /// Write the report folder into DIR (created if missing; it must be
        /// empty or hold an earlier wearout report).
        #[arg(long = "report-dir", value_name = "DIR", conflicts_with = "report")]
        report_dir: Option<PathBuf>,
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
        /// Also write a report folder, as `evaluate --report` or `frontier
        /// --report` does, into its default folder. (--report=DIR, with
        /// the equals sign, is read as --report-dir DIR.)
        #[arg(long, value_name = "DIR", num_args = 0..=1, require_equals = true)]
        report: Option<Option<PathBuf>>,
        /// Write the report folder into DIR (created if missing; it must be
        /// empty or hold an earlier wearout report).
        #[arg(long = "report-dir", value_name = "DIR", conflicts_with = "report")]
        report_dir: Option<PathBuf>,
    },
    /// Fit life distributions to maintenance records or a removal log (CSV).
    Fit(fit::FitCommand),
}

/// Run the command line; returns the process's exit status.
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
    match dispatch(cli, &mut out) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            if let Some(m) = e.message() {
                let _ = writeln!(std::io::stderr(), "{m}");
            }
            ExitCode::from(e.exit_status())
        }
    }
}

fn set_threads(threads: Option<usize>) -> Result<(), CliError> {
    if let Some(n) = threads {
        if n == 0 {
            return Err(CliError::user("--threads must be at least 1"));
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| CliError::user(format!("cannot set up {n} threads: {e}")))?;
    }
    Ok(())
}

fn dispatch(cli: Cli, out: &mut dyn Write) -> Result<(), CliError> {
    match cli.command {
        Command::Check { file } => {
            let loaded = load_or_demo(file.as_deref())?;
            warn(&loaded.model);
            write!(out, "{}", render::check(&loaded))?;
            Ok(())
        }
        Command::Evaluate {
            file,
            policy,
            trials,
            report,
            report_dir,
            run,
        } => {
            set_threads(run.threads)?;
            let report = report_choice(&report, &report_dir);
            not_a_folder(file.as_deref(), report)?;
            let args = evaluate::EvaluateArgs {
                file: file.as_deref(),
                policies: policy.iter().map(String::as_str).collect(),
                trials,
                report,
            };
            evaluate::run(&args, &run, out)
        }
        Command::Frontier {
            file,
            trials,
            validate_trials,
            exhaustive,
            max_full,
            policies,
            report,
            report_dir,
            run,
        } => {
            set_threads(run.threads)?;
            let report = report_choice(&report, &report_dir);
            not_a_folder(file.as_deref(), report)?;
            let args = frontier::FrontierArgs {
                file: file.as_deref(),
                trials,
                validate_trials,
                exhaustive,
                max_full,
                policies: policies.as_deref(),
                report,
            };
            frontier::run(&args, &run, out)
        }
        Command::Merge {
            shards,
            json,
            scenario,
            report,
            report_dir,
        } => {
            let args = merge::MergeArgs {
                shards: &shards,
                json,
                scenario: scenario.as_deref(),
                report: report_choice(&report, &report_dir),
            };
            merge::run(&args, out)
        }
        Command::Fit(command) => {
            let args = fit::FitArgs::from(command);
            // The fit's errors keep no I/O error kind, so the writer
            // itself notes a closed pipe.
            let mut watched = Watched {
                inner: out,
                closed: false,
            };
            fit::run(&args, &mut watched).map_err(|e| {
                if watched.closed {
                    CliError::BrokenPipe
                } else {
                    e.into()
                }
            })
        }
    }
}

/// The report folder asked for: `Some(Some(DIR))` from `--report-dir DIR`
/// (or the older `--report=DIR`), `Some(None)` from `--report` alone (the
/// default folder), `None` without either.
fn report_choice<'a>(
    report: &'a Option<Option<PathBuf>>,
    report_dir: &'a Option<PathBuf>,
) -> Option<Option<&'a Path>> {
    match report_dir {
        Some(d) => Some(Some(d.as_path())),
        None => report.as_ref().map(|d| d.as_deref()),
    }
}

/// Check the report's folder before the run: a folder given must be new,
/// empty or an earlier report. And `--report` no longer takes a folder
/// after a space, so `evaluate --report out` reads `out` as the scenario
/// file: when that "scenario" is a folder, say what was probably meant.
fn not_a_folder(file: Option<&Path>, report: Option<Option<&Path>>) -> Result<(), CliError> {
    // A folder given for the report is checked before any trial is run.
    if let Some(Some(dir)) = report {
        wearout::report::check_dir(dir)?;
    }
    if let (Some(f), Some(None)) = (file, report)
        && f.is_dir()
    {
        return Err(CliError::user(format!(
            "`{}` is a folder, not a scenario file; --report takes no folder after a space (it writes to the default folder): to write the report into `{}`, use --report-dir {}",
            f.display(),
            f.display(),
            f.display()
        )));
    }
    Ok(())
}

/// A writer that notes whether its reader went away.
struct Watched<'a> {
    inner: &'a mut dyn Write,
    closed: bool,
}

impl Watched<'_> {
    fn note<T>(&mut self, r: std::io::Result<T>) -> std::io::Result<T> {
        if let Err(e) = &r
            && e.kind() == std::io::ErrorKind::BrokenPipe
        {
            self.closed = true;
        }
        r
    }
}

impl Write for Watched<'_> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        let r = self.inner.write(buf);
        self.note(r)
    }

    fn flush(&mut self) -> std::io::Result<()> {
        let r = self.inner.flush();
        self.note(r)
    }
}

/// A scenario loaded with the command line's options applied, and the
/// availability target to run with.
struct Prepared {
    loaded: Loaded,
    target: f64,
}

/// Load the scenario (the embedded demo without `file`), apply the run
/// options and check `--target`.
fn prepare(file: Option<&Path>, opts: &RunOpts) -> Result<Prepared, CliError> {
    let mut loaded = load_or_demo(file)?;
    opts.apply(&mut loaded.model);
    let target = match opts.target {
        None => loaded.model.target,
        Some(x) if x > 0.0 && x <= 1.0 => x,
        Some(x) => {
            return Err(CliError::user(format!(
                "--target must be in (0, 1], e.g. 0.92 (got {x})"
            )));
        }
    };
    Ok(Prepared { loaded, target })
}

/// Print the model's warnings (legal but suspicious values) on stderr,
/// one `warning:` line each; the run goes ahead. Runs print them once the
/// run's own checks have passed (in `guard`), so a refused run shows only
/// its error.
fn warn(model: &Model) {
    let mut err = std::io::stderr().lock();
    for w in model.warnings() {
        let _ = writeln!(err, "warning: {w}");
    }
}

/// A finished result to show.
enum Finished<'a> {
    /// One policy's summary (`evaluate`, or the merge of its shards).
    Evaluate {
        model: &'a Model,
        summary: &'a Summary,
    },
    /// A frontier (`frontier`, `frontier --policies`, or the merge of its
    /// shards).
    Frontier {
        model: &'a Model,
        result: &'a FrontierResult,
        exhaustive: bool,
    },
}

/// Print `finished` on `out`, as one JSON object with `json`, else as the
/// terminal's table; then write its report folder when `report` is given
/// (`Some(None)`: the scenario's default folder).
fn show(
    finished: Finished<'_>,
    json: bool,
    report: Option<Option<&Path>>,
    out: &mut dyn Write,
) -> Result<(), CliError> {
    match finished {
        Finished::Evaluate { model, summary } => {
            let plan = mean_life_plan(model, &summary.policy);
            let j = EvaluateJson::new(model, summary, &plan);
            print(out, json, &j, || render::evaluate(model, &j))?;
            let default = wearout::report::default_evaluate_dir(&model.name, &summary.policy.name);
            write_report(report, default, |bar| {
                wearout::report::evaluate_report(model, summary, &j, bar)
            })
        }
        Finished::Frontier {
            model,
            result,
            exhaustive,
        } => {
            let j = FrontierJson::new(model, result, exhaustive);
            print(out, json, &j, || render::frontier(model, result, &j))?;
            write_report(report, wearout::report::default_dir(&model.name), |bar| {
                wearout::report::frontier_report(model, result, &j, bar)
            })
        }
    }
}

/// `value` as pretty JSON with `json`, else `text()`.
fn print<T: serde::Serialize>(
    out: &mut dyn Write,
    json: bool,
    value: &T,
    text: impl FnOnce() -> String,
) -> Result<(), CliError> {
    if json {
        writeln!(out, "{}", serde_json::to_string_pretty(value)?)?;
    } else {
        write!(out, "{}", text())?;
    }
    Ok(())
}

/// Write a report folder when `--report` or `--report-dir` was given
/// (`Some(None)`: the folder `default`) and say on stderr where it landed.
fn write_report(
    dir: Option<Option<&Path>>,
    default: PathBuf,
    make: impl FnOnce(&dyn Progress) -> Result<Report, ReportError>,
) -> Result<(), CliError> {
    let Some(dir) = dir else {
        return Ok(());
    };
    let dir = dir.map_or(default, PathBuf::from);
    // Refuse a folder that is neither empty nor an earlier report before
    // the report is made (the trials re-run for trials.csv take time).
    wearout::report::check_dir(&dir)?;
    let bar = progress::Bar::new("report", 0);
    let report = make(&bar);
    bar.finish();
    let index = report?.write_to(&dir)?;
    let _ = writeln!(std::io::stderr(), "report written: {}", index.display());
    Ok(())
}
