//! Reports for people who read rather than run: a folder holding
//! `index.html` (one self-contained page with its figures inline),
//! `summary.md` (the same findings in Markdown), `frontier.csv`,
//! `policies.csv`, `trials.csv`, `result.json` (the `--json` shape) and
//! each figure as its own SVG file.
//!
//! Owns: turning a finished result into those files, and writing them so
//! that a run failing half-way leaves the previous report intact.
//! May use: `result`, `summary`, `frontier`, `recost`, `mean_life`, `model`,
//! `dist`, `analytic` (Poisson pipeline), `text`, `files` (the staging
//! folder), `run` (its progress observer), `plotters`, `serde_json`; and
//! only in `tables`, `csv` and `sim` to re-run the reported trials for
//! `trials.csv`. It runs no other simulation and never prints.
//!
//! Writing: every file is first written in full to a staging folder
//! inside the target folder, then each is renamed over its old version
//! (a rename within one folder is atomic), so a reader sees either the
//! old file or the new one. Before anything is renamed the targets are
//! checked (each absent or a plain file), so a failure while rendering,
//! staging or checking changes nothing. A manifest (`.wearout-report`)
//! lists the files written, so files of an earlier report that this one
//! no longer writes (e.g. a figure) are removed, and nothing else ever is.
//! The manifest is also the mark of a folder wearout wrote: a report is
//! written only into a new or empty folder or one holding a manifest
//! ([`check_dir`]), never over a folder of someone's own files.

mod doc;
mod finance;
mod html;
mod live;
mod network;
mod plots;
mod tables;
mod view;
mod words;

use std::path::{Path, PathBuf};

use crate::files;
use crate::frontier::FrontierResult;
use crate::model::Model;
use crate::result::{EvaluateJson, FrontierJson};
use crate::run::Progress;
use crate::summary::Summary;

pub use tables::TRIAL_COLUMNS;
use view::{Kind, View};

/// The manifest of the files a report wrote.
pub const MANIFEST: &str = ".wearout-report";

/// Why a report could not be made or written.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    #[error("cannot write the report into {dir}: {message}")]
    Write { dir: String, message: String },
    #[error(
        "will not write the report into {dir}: the folder holds other files ({found}) and no earlier wearout report (no {MANIFEST} file); give an empty or new folder with --report-dir DIR, so that nothing there is replaced"
    )]
    Occupied { dir: String, found: String },
    #[error("cannot draw the figure {figure}: {message}")]
    Plot { figure: String, message: String },
    #[error("cannot write a CSV table: {0}")]
    Csv(String),
    #[error("cannot write result.json: {0}")]
    Json(String),
    #[error("the result has no policies to report")]
    Empty,
    #[error(
        "re-running trial {trial} of policy {policy} for trials.csv gave other figures than the first run; this is a bug, please report it"
    )]
    Mismatch { policy: String, trial: u64 },
    #[error("interrupted")]
    Interrupted,
}

/// One file of a report.
#[derive(Debug, Clone, PartialEq)]
pub struct ReportFile {
    /// A plain file name (no folders).
    pub name: String,
    pub bytes: Vec<u8>,
}

/// A rendered report, held in memory until written.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Report {
    files: Vec<ReportFile>,
}

impl Report {
    /// The files, in writing order.
    pub fn files(&self) -> &[ReportFile] {
        &self.files
    }

    /// One file's bytes by name.
    pub fn file(&self, name: &str) -> Option<&[u8]> {
        self.files
            .iter()
            .find(|f| f.name == name)
            .map(|f| f.bytes.as_slice())
    }

    /// One file as text (all report files are UTF-8).
    pub fn text(&self, name: &str) -> Option<&str> {
        self.file(name).and_then(|b| std::str::from_utf8(b).ok())
    }

    /// Add (or replace) a file.
    pub fn push(&mut self, name: impl Into<String>, bytes: Vec<u8>) {
        let name = name.into();
        self.files.retain(|f| f.name != name);
        self.files.push(ReportFile { name, bytes });
    }

    /// Write the report into `dir` (created if missing); returns the path
    /// of `index.html`. See the module comment for how a failure leaves
    /// the previous report intact.
    ///
    /// # Errors
    /// [`ReportError::Write`] naming the folder and what went wrong.
    pub fn write_to(&self, dir: &Path) -> Result<PathBuf, ReportError> {
        let fail = |m: String| ReportError::Write {
            dir: dir.display().to_string(),
            message: m,
        };
        for f in &self.files {
            if !plain_name(&f.name) || f.name == MANIFEST {
                return Err(fail(format!("`{}` is not a plain file name", f.name)));
            }
        }
        check_dir(dir)?;
        std::fs::create_dir_all(dir).map_err(|e| fail(format!("cannot create the folder: {e}")))?;
        // The targets must be absent or plain files.
        for f in &self.files {
            let target = dir.join(&f.name);
            if std::fs::symlink_metadata(&target).is_ok_and(|m| !m.is_file()) {
                return Err(fail(format!(
                    "`{}` is in the way: it exists and is not a plain file",
                    target.display()
                )));
            }
        }
        let old = read_manifest(dir);
        let mut manifest: String = self.files.iter().map(|f| format!("{}\n", f.name)).collect();
        manifest.insert_str(0, "# files written by the last wearout report here\n");
        let mut all: Vec<(&str, &[u8])> = self
            .files
            .iter()
            .map(|f| (f.name.as_str(), f.bytes.as_slice()))
            .collect();
        all.push((MANIFEST, manifest.as_bytes()));

        // The staging folder is removed when this function returns, and by
        // the interrupt handler if the process is stopped before.
        let staging = files::TempDir::create(
            &dir.join(format!(".wearout-report-tmp-{}", std::process::id())),
        )
        .map_err(|e| fail(format!("cannot create a staging folder in it: {e}")))?;
        for (name, bytes) in &all {
            files::write_synced(&staging.path().join(name), bytes)
                .map_err(|e| fail(format!("{name}: {e}")))?;
        }
        for (name, _) in &all {
            std::fs::rename(staging.path().join(name), dir.join(name))
                .map_err(|e| fail(format!("{name}: {e}")))?;
        }
        drop(staging);
        // Files the previous report wrote and this one does not.
        for name in old {
            if plain_name(&name) && name != MANIFEST && self.file(&name).is_none() {
                let path = dir.join(&name);
                if std::fs::symlink_metadata(&path).is_ok_and(|m| m.is_file()) {
                    let _ = std::fs::remove_file(path);
                }
            }
        }
        Ok(dir.join("index.html"))
    }
}

/// A file name without folders, not hidden and not `..`.
fn plain_name(name: &str) -> bool {
    !name.is_empty()
        && !name.starts_with('.')
        && !name.contains(['/', '\\', '\0'])
        && Path::new(name).file_name().is_some_and(|f| f == name)
}

fn read_manifest(dir: &Path) -> Vec<String> {
    std::fs::read_to_string(dir.join(MANIFEST))
        .map(|s| {
            s.lines()
                .map(str::trim)
                .filter(|l| !l.is_empty() && !l.starts_with('#'))
                .map(String::from)
                .collect()
        })
        .unwrap_or_default()
}

/// The default report folder of a scenario: `reports/<name>/`, with any
/// character other than letters, digits, `-`, `_` and `.` replaced by `-`.
pub fn default_dir(scenario_name: &str) -> PathBuf {
    let mut name: String = scenario_name
        .chars()
        .map(|ch| {
            if ch.is_alphanumeric() || matches!(ch, '-' | '_' | '.') {
                ch
            } else {
                '-'
            }
        })
        .collect();
    if name.trim_matches('.').is_empty() {
        name = "scenario".to_string();
    }
    if name.starts_with('.') {
        name.insert(0, '_');
    }
    Path::new("reports").join(name)
}

/// The default report folder of an evaluation: `reports/<name>-evaluate-<policy>/`
/// (made safe as in [`default_dir`]), apart from the frontier's folder so
/// that neither replaces the other.
pub fn default_evaluate_dir(scenario_name: &str, policy: &str) -> PathBuf {
    default_dir(&format!("{scenario_name}-evaluate-{policy}"))
}

/// Whether a report may be written into `dir`: it is missing, or an empty
/// folder, or a folder holding the manifest of an earlier wearout report.
/// Any other folder (a user's own files) is refused, so nothing of theirs
/// is replaced.
///
/// # Errors
/// [`ReportError::Occupied`] naming the folder and a few of its files, or
/// [`ReportError::Write`] when it exists and is not a folder or cannot be
/// listed.
pub fn check_dir(dir: &Path) -> Result<(), ReportError> {
    let fail = |m: String| ReportError::Write {
        dir: dir.display().to_string(),
        message: m,
    };
    let meta = match std::fs::metadata(dir) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => return Err(fail(e.to_string())),
    };
    if !meta.is_dir() {
        return Err(fail("it exists and is not a folder".to_string()));
    }
    if dir.join(MANIFEST).is_file() {
        return Ok(());
    }
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .map_err(|e| fail(format!("cannot list it: {e}")))?
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    if names.is_empty() {
        return Ok(());
    }
    names.sort();
    let count = names.len();
    names.truncate(3);
    Err(ReportError::Occupied {
        dir: dir.display().to_string(),
        found: format!(
            "{}{}",
            names.join(", "),
            if count > 3 {
                format!(" and {} more", count - 3)
            } else {
                String::new()
            }
        ),
    })
}

/// The figures of a view, each with its caption and description.
fn figures(v: &View<'_>) -> Result<Vec<doc::Figure>, ReportError> {
    let mut out = Vec::new();
    let target = view::pct_trim(v.target, 1);
    let mut add = |file: &str, svg: String, caption: String, alt: String| {
        out.push(doc::Figure {
            file: file.to_string(),
            svg,
            caption,
            alt,
        });
    };
    if v.kind == Kind::Frontier {
        add(
            "frontier.svg",
            plots::frontier(v)?,
            format!(
                "Cost against the chance of meeting {}: every policy simulated (grey) and the non-dominated ones (blue, with 95 % intervals).",
                v.target_words()
            ),
            format!(
                "Scatter of cost against chance of meeting {target}, with the non-dominated policies joined by a line and labelled."
            ),
        );
    }
    add(
        "exceedance.svg",
        plots::exceedance(v)?,
        format!("Chance of reaching at least each fleet availability, for the policies singled out; the dashed line is the {target} target."),
        "Falling curves of the chance of reaching at least each availability level, one per policy, with the target marked.".into(),
    );
    add(
        "mean-life.svg",
        plots::mean_life(v)?,
        "The mean-life plan (diamonds) beside the spread of simulated futures (lines: 5-95 %, bars: 25-75 %, dots: means).".into(),
        "For each policy, the simulated range of availability and cost, with the mean-life plan's figure marked beside it.".into(),
    );
    add(
        "costs.svg",
        plots::costs(v)?,
        "Mean cost over the horizon by component, and the initial stock's capital.".into(),
        "Stacked horizontal bars of cost components per policy.".into(),
    );
    if v.model.has_sites() {
        add(
            "units-up.svg",
            plots::units_up(v)?,
            "Units up at each site: the share of the time with exactly that many units up, for the policies singled out; the pale band is short of the site's ready count, the diamonds the mean-life plan's expected units up.".into(),
            "One panel per site: bars of the share of the horizon at each count of units up, per policy, with the ready count marked by a dashed line.".into(),
        );
    }
    if let Some(svg) = plots::money_years(v)? {
        add(
            "money-years.svg",
            svg,
            "Running spend per year for the policies singled out: mean (line and dots) and the P10-P90 band of trials, the yearly budget (dashed black) and each policy's mean-life plan (dotted, flat).".into(),
            "One line per policy of mean spend per year with a shaded band from P10 to P90, a horizontal budget line and flat lines for the mean-life plans.".into(),
        );
    }
    add(
        "life.svg",
        plots::life(v)?,
        "Life of each part type (share still working at each age), with the intervals of the policies singled out, the mean life and any hard limit.".into(),
        "One survival curve per part type with vertical lines at the replacement intervals.".into(),
    );
    add(
        "stock.svg",
        plots::stock(v)?,
        "Base stock of each part type against the demand expected during one mean lead time (diamond) and its 5-95 % range.".into(),
        "Bars of base stock per policy beside the expected lead-time demand and its range, one panel per part type.".into(),
    );
    Ok(out)
}

fn json_bytes<T: serde::Serialize>(value: &T) -> Result<Vec<u8>, ReportError> {
    let mut s =
        serde_json::to_string_pretty(value).map_err(|e| ReportError::Json(e.to_string()))?;
    s.push('\n');
    Ok(s.into_bytes())
}

fn assemble(
    model: &Model,
    v: &View<'_>,
    json: Vec<u8>,
    progress: &dyn Progress,
) -> Result<Report, ReportError> {
    let figs = figures(v)?;
    let blocks = words::document(v, &figs);
    let title = match &blocks.first() {
        Some(doc::Block::Heading(_, t, _)) => t.clone(),
        _ => format!("wearout report: {}", model.name),
    };
    let generator = format!("wearout {}", env!("CARGO_PKG_VERSION"));
    let mut r = Report::default();
    let sets: Vec<String> = v
        .policies
        .iter()
        .map(|p| words::settings(model, p))
        .collect();
    let live = live::panel(v, &sets);
    r.push(
        "index.html",
        html::page(&title, &blocks, &generator, &live).into_bytes(),
    );
    let mut md = doc::to_markdown(&blocks);
    md.push_str(&format!(
        "\n\n*Made by {generator}. Figures and full tables: index.html in the same folder; the data behind every figure: the CSV files.*\n"
    ));
    r.push("summary.md", md.into_bytes());
    r.push("frontier.csv", tables::frontier_csv(v)?);
    r.push("policies.csv", tables::policies_csv(v)?);
    r.push("trials.csv", tables::trials_csv(model, v, progress)?);
    if model.has_sites() {
        r.push("sites.csv", tables::sites_csv(v)?);
        r.push("units-up.csv", tables::units_up_csv(v)?);
        r.push("stores.csv", tables::stores_csv(v)?);
    }
    if model.has_rotables() {
        r.push("rotables.csv", tables::rotables_csv(v)?);
    }
    if let Some(csv) = finance::money_csv(v) {
        r.push("money.csv", csv);
    }
    r.push("result.json", json);
    for f in figs {
        r.push(f.file, f.svg.into_bytes());
    }
    Ok(r)
}

/// The report of a frontier run: the model it ran on (after command-line
/// overrides), its result and the JSON built from them. Re-runs the
/// frontier policies' validation trials for `trials.csv` (progress goes to
/// `progress`).
///
/// # Errors
/// See [`ReportError`]; nothing is written here.
pub fn frontier_report(
    model: &Model,
    result: &FrontierResult,
    json: &FrontierJson,
    progress: &dyn Progress,
) -> Result<Report, ReportError> {
    if result.points.is_empty() {
        return Err(ReportError::Empty);
    }
    let rows = result
        .points
        .iter()
        .map(|pt| {
            let c = &pt.costed;
            (&c.policy, &c.summary, c.cost, c.chance, pt.noise)
        })
        .collect();
    let mut v = View::new(
        model,
        Kind::Frontier,
        result.target,
        result.cost,
        rows,
        &result.searched,
        result.search_trials,
    );
    v.answer = Some(json);
    assemble(model, &v, json_bytes(json)?, progress)
}

/// The report of an evaluation: the model, the summary of the evaluated
/// policy and the JSON built from them. Re-runs the evaluated trials for
/// `trials.csv`.
///
/// # Errors
/// See [`ReportError`]; nothing is written here.
pub fn evaluate_report(
    model: &Model,
    summary: &Summary,
    json: &EvaluateJson,
    progress: &dyn Progress,
) -> Result<Report, ReportError> {
    if summary.trials() == 0 {
        return Err(ReportError::Empty);
    }
    let measure = model.search.as_ref().map(|s| s.cost).unwrap_or_default();
    let cost = summary.cost_measure(measure);
    let rows = vec![(&summary.policy, summary, cost, summary.chance(), None)];
    let v = View::new(model, Kind::Evaluate, summary.target, measure, rows, &[], 0);
    assemble(model, &v, json_bytes(json)?, progress)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn default_dir_is_safe() {
        assert_eq!(default_dir("demo"), Path::new("reports").join("demo"));
        assert_eq!(default_dir("../x y"), Path::new("reports").join("_..-x-y"));
        assert_eq!(default_dir(".."), Path::new("reports").join("scenario"));
        assert_eq!(
            default_dir(".hidden"),
            Path::new("reports").join("_.hidden")
        );
        assert!(!plain_name("../a") && !plain_name(".x") && plain_name("a.csv"));
    }
}
