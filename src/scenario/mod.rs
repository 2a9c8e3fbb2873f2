//! Scenario files: TOML in, a validated [`Model`] out.
//!
//! Owns: the scenario file format (documented field by field in
//! `docs/scenario-format.md`), the embedded demo scenario, and every check
//! of what a user typed, with errors naming the file, field path, line and
//! what is allowed. The only module that knows TOML.
//! Files: `tree` (the TOML walker with its places for messages) and
//! `network` (the keys of sites, a depot, lateral supply, repair, ready
//! units and stock per site).
//! May use: `model`, `dist`, the `tree` walker; `fit` (records reader and
//! maximum-likelihood fits) and `uncertainty` for a life fitted to records,
//! the only file the scenario layer reads besides the scenario itself.

mod network;
mod tree;

use std::path::Path;

use thiserror::Error;
use toml::de::DeTable;

use crate::dist::{DistError, Hours, LeadTime, Life};
use crate::fit::{
    DEFAULT_CONFIDENCE, Family, Fit, Record, Sample, fit_assumed_shape, fit_mle, fit_part,
    read_records_or_log, select_parts,
};
use crate::model::{
    CostBasis, CostMeasure, CostStatistic, FleetGroup, InitialAge, LifeSource, Model,
    MoneySettings, PartPolicy, PartSearch, PartType, Policy, Position, Rule, SearchSpace, Site,
    UnitType,
};
use crate::uncertainty::LifeUncertainty;
use tree::{Tbl, Text, Val, each};

pub use tree::{did_you_mean, suggest};

/// The demo scenario compiled into the binary.
pub const DEMO: &str = include_str!("../../scenarios/demo.toml");
/// The name under which the embedded demo is reported.
pub const DEMO_FILE: &str = "scenarios/demo.toml (embedded)";

/// A problem with a scenario file, with its place.
#[derive(Debug, Clone, Error, PartialEq)]
#[error("{file}:{line}:{column}: {}{message}", if path.is_empty() { String::new() } else { format!("{path}: ") })]
pub struct ScenarioError {
    pub file: String,
    /// Dotted field path, e.g. `parts.engine.life.shape`.
    pub path: String,
    pub line: usize,
    pub column: usize,
    pub message: String,
}

/// Loading a scenario failed.
#[derive(Debug, Error)]
pub enum LoadError {
    #[error("cannot read scenario file {file}: {reason}")]
    Unreadable { file: String, reason: String },
    #[error(transparent)]
    Invalid(#[from] ScenarioError),
}

/// Where a scenario came from, with its text as it was read: what a shard
/// file embeds so that a merge can rebuild the model anywhere.
#[derive(Debug, Clone, PartialEq)]
pub struct Source {
    /// The path as given (`None`: the embedded demo).
    pub file: Option<String>,
    /// The absolute folder of the file, for the records files it names.
    pub dir: Option<String>,
    /// The scenario text as read.
    pub text: String,
}

impl Source {
    /// The embedded demo's source.
    pub fn demo() -> Self {
        Source {
            file: None,
            dir: None,
            text: DEMO.to_string(),
        }
    }

    /// The name the scenario is reported under: its path as given, or
    /// [`DEMO_FILE`].
    pub fn label(&self) -> &str {
        self.file.as_deref().unwrap_or(DEMO_FILE)
    }

    /// Parse and validate the text again, records files read from `dir`.
    ///
    /// # Errors
    /// As [`parse_with_base`].
    pub fn parse(&self) -> Result<Model, ScenarioError> {
        match &self.file {
            Some(f) => parse_with_base(
                f,
                &self.text,
                Some(Path::new(self.dir.as_deref().unwrap_or("."))),
            ),
            None => parse(DEMO_FILE, &self.text),
        }
    }
}

/// A scenario loaded: the validated model and where it came from.
#[derive(Debug, Clone)]
pub struct Loaded {
    pub model: Model,
    pub source: Source,
}

/// Load and validate a scenario file, keeping its text.
///
/// # Errors
/// When the file cannot be read or is not a valid scenario.
pub fn load(path: &Path) -> Result<Loaded, LoadError> {
    let file = path.display().to_string();
    let bytes = std::fs::read(path).map_err(|e| LoadError::Unreadable {
        file: file.clone(),
        reason: e.to_string(),
    })?;
    let text = String::from_utf8(bytes).map_err(|_| LoadError::Unreadable {
        file: file.clone(),
        reason: "it is not UTF-8 text".to_string(),
    })?;
    let base = path.parent().unwrap_or(Path::new(""));
    let model = parse_with_base(&file, &text, Some(base))?;
    // The folder as an absolute path, so that a shard merged elsewhere
    // still finds the records files the scenario names.
    let dir = if base.as_os_str().is_empty() {
        Path::new(".")
    } else {
        base
    };
    let dir = std::fs::canonicalize(dir).unwrap_or_else(|_| dir.to_path_buf());
    Ok(Loaded {
        model,
        source: Source {
            file: Some(file),
            dir: Some(dir.display().to_string()),
            text,
        },
    })
}

/// Load a scenario file, or the embedded demo when `path` is `None`.
///
/// # Errors
/// As [`load`].
pub fn load_or_demo(path: Option<&Path>) -> Result<Loaded, LoadError> {
    match path {
        Some(p) => load(p),
        None => {
            let source = Source::demo();
            Ok(Loaded {
                model: source.parse()?,
                source,
            })
        }
    }
}

/// Parse and validate scenario text; `file` names it in errors.
///
/// # Errors
/// When the text is not a valid scenario.
pub fn parse(file: &str, text: &str) -> Result<Model, ScenarioError> {
    parse_with_base(file, text, None)
}

/// Parse and validate scenario text whose records references (`life = {
/// records = "..." }`) are relative to the folder `base` (the scenario
/// file's folder); with `None` (text not read from a file) a records
/// reference is an error.
///
/// # Errors
/// When the text is not a valid scenario, or a referenced records file
/// cannot be read or fitted.
pub fn parse_with_base(
    file: &str,
    text: &str,
    base: Option<&Path>,
) -> Result<Model, ScenarioError> {
    let src = Text { file, text };
    let doc = DeTable::parse(text).map_err(|e| {
        let span = e.span().unwrap_or(0..0);
        let msg = e.message().trim().to_string();
        src.error("", span, format!("TOML syntax error: {msg}"))
    })?;
    let root = Tbl::root(src, &doc);
    read_model(&root, base)
}

const ROOT_KEYS: &[&str] = &[
    "scenario",
    "defaults",
    "parts",
    "units",
    "fleet",
    "policies",
    "search",
    "sites",
    "depot",
    "lateral",
    "ready_units",
    "money",
];

fn dist_err(v: &Val<'_, '_>, e: DistError) -> ScenarioError {
    v.error(e.to_string())
}

struct Defaults {
    holding: Option<HoldingSpec>,
    lead_time: Option<LeadTime>,
    initial_age: Option<AgeSpec>,
}

#[derive(Clone, Copy)]
enum HoldingSpec {
    PerHour(f64),
    Fraction { fraction: f64, per_hours: f64 },
}

impl HoldingSpec {
    fn per_spare_hour(self, price: f64) -> f64 {
        match self {
            HoldingSpec::PerHour(r) => r,
            HoldingSpec::Fraction {
                fraction,
                per_hours,
            } => fraction * price / per_hours,
        }
    }
}

fn read_holding(v: Val<'_, '_>) -> Result<HoldingSpec, ScenarioError> {
    let t = v.table()?;
    if t.has("per_spare_hour") && (t.has("fraction_of_price") || t.has("per_hours")) {
        return Err(t.error(
            "give either `per_spare_hour`, or `fraction_of_price` with `per_hours`, not both",
        ));
    }
    let out = if t.has("per_spare_hour") {
        HoldingSpec::PerHour(t.need("per_spare_hour", "cost per spare per hour", |v| {
            v.non_negative()
        })?)
    } else {
        let fraction = t.need(
            "fraction_of_price",
            "e.g. 0.2 (with per_hours = 6000: 20 % of price per 6 000 h), or give per_spare_hour",
            |v| v.non_negative(),
        )?;
        let per_hours = t.need(
            "per_hours",
            "hours the fraction is quoted for, e.g. 8760",
            |v| v.positive(),
        )?;
        HoldingSpec::Fraction {
            fraction,
            per_hours,
        }
    };
    t.finish(&["per_spare_hour", "fraction_of_price", "per_hours"])?;
    Ok(out)
}

fn read_lead(v: Val<'_, '_>) -> Result<LeadTime, ScenarioError> {
    let t = v.table()?;
    let kind = t.need("dist", "one of fixed, lognormal, gamma", |v| {
        v.one_of(&["fixed", "lognormal", "gamma"])
    })?;
    let out = match kind {
        "fixed" => {
            let h = t.need("hours", "the lead time in hours", |v| v.non_negative())?;
            t.finish(&["dist", "hours"])?;
            LeadTime::fixed(h)
        }
        "lognormal" => {
            let m = t.need("median_hours", "the median lead time in hours", |v| {
                v.positive()
            })?;
            let s = t.need(
                "log_sd",
                "the standard deviation of ln(lead time), e.g. 0.4",
                |v| v.non_negative(),
            )?;
            t.finish(&["dist", "median_hours", "log_sd"])?;
            LeadTime::lognormal(m, s)
        }
        _ => {
            let m = t.need("mean_hours", "the mean lead time in hours", |v| {
                v.positive()
            })?;
            let cv = t.need("cv", "coefficient of variation, e.g. 0.5", |v| v.positive())?;
            t.finish(&["dist", "mean_hours", "cv"])?;
            LeadTime::gamma(m, cv)
        }
    };
    out.map_err(|e| dist_err(&v, e))
}

fn read_life(v: Val<'_, '_>) -> Result<Life, ScenarioError> {
    let t = v.table()?;
    let kind = t.need(
        "dist",
        "one of weibull, lognormal, gamma, exponential",
        |v| v.one_of(&["weibull", "lognormal", "gamma", "exponential"]),
    )?;
    let life = match kind {
        "weibull" => {
            let shape = t.need("shape", "the Weibull shape (beta), e.g. 2.2", |v| {
                v.positive()
            })?;
            let location = t.with("location", |v| v.non_negative())?.unwrap_or(0.0);
            let scale = t.with("scale", |v| v.positive())?;
            let mean = t.with("mean", |v| v.positive())?;
            t.finish(&["dist", "shape", "scale", "mean", "location"])?;
            match (scale, mean) {
                (Some(s), None) => Life::weibull3(shape, s, location),
                (None, Some(m)) => {
                    if m <= location {
                        return Err(t.error("the mean life must be greater than the location"));
                    }
                    Life::weibull_from_mean(shape, m, location)
                }
                _ => {
                    return Err(t.error(
                        "give exactly one of `scale` (characteristic life, hours) or `mean` (mean life / MTBF, hours)",
                    ));
                }
            }
        }
        "lognormal" => {
            let mu = t.with("mu", |v| v.finite())?;
            let median = t.with("median_hours", |v| v.positive())?;
            let sigma = t.need("sigma", "standard deviation of ln(life)", |v| v.positive())?;
            t.finish(&["dist", "mu", "median_hours", "sigma"])?;
            match (mu, median) {
                (Some(mu), None) => Life::lognormal(mu, sigma),
                (None, Some(m)) => Life::lognormal(m.ln(), sigma),
                _ => {
                    return Err(
                        t.error("give exactly one of `mu` (mean of ln(life)) or `median_hours`")
                    );
                }
            }
        }
        "gamma" => {
            let shape = t.need("shape", "the gamma shape k", |v| {
                let k = v.positive()?;
                // The survival function of an aged part costs about `k`
                // steps; beyond this a trial could run for hours.
                if k > 1e4 {
                    return Err(v.error(format!(
                        "a gamma shape of {k} is beyond what can be simulated; allowed: up to 10 000 (a spread of lives of at least 1 % of the mean)"
                    )));
                }
                Ok(k)
            })?;
            let scale = t.with("scale", |v| v.positive())?;
            let mean = t.with("mean", |v| v.positive())?;
            t.finish(&["dist", "shape", "scale", "mean"])?;
            match (scale, mean) {
                (Some(s), None) => Life::gamma(shape, s),
                (None, Some(m)) => Life::gamma(shape, m / shape),
                _ => return Err(t.error("give exactly one of `scale` or `mean` (hours)")),
            }
        }
        _ => {
            let mean = t.need("mean", "the mean life (MTBF), hours", |v| v.positive())?;
            t.finish(&["dist", "mean"])?;
            Life::exponential(mean)
        }
    };
    life.map_err(|e| dist_err(&v, e))
}

/// The families a records reference may ask for; `best` is the lowest AIC.
const RECORDS_DISTS: &[&str] = &[
    "weibull",
    "weibull3",
    "lognormal",
    "gamma",
    "exponential",
    "best",
];

/// A part's life: given as parameters, or fitted to records (then with the
/// fit's sampling uncertainty).
type LifeRead = (Life, Option<LifeUncertainty>, Option<LifeSource>);

fn read_life_or_records(
    v: Val<'_, '_>,
    part: &str,
    base: Option<&Path>,
) -> Result<LifeRead, ScenarioError> {
    if v.is_table() && v.table()?.has("records") {
        let (life, u, source) = read_records_life(v, part, base)?;
        Ok((life, Some(u), Some(source)))
    } else {
        Ok((read_life(v)?, None, None))
    }
}

/// `life = { records = "file.csv", dist = "weibull", part = "..." }`: read
/// the records (relative to `base`; a removal log with its current meter
/// readings from `meters = "..."`), pick the part's rows, fit by maximum
/// likelihood, or with `assumed_shape = B` fit the Weibull of that shape
/// (which also works without failures). Without `part`, a file of one part
/// is used whole, and a file of several parts is searched for the
/// scenario's part name (exact, then ignoring ASCII case).
fn read_records_life(
    v: Val<'_, '_>,
    part: &str,
    base: Option<&Path>,
) -> Result<(Life, LifeUncertainty, LifeSource), ScenarioError> {
    let t = v.table()?;
    // Each field's place, for errors raised after the table is read.
    let (rel, at_records) = t.need(
        "records",
        "the records CSV file (or a removal log), relative to the scenario file's folder",
        |v| {
            let s = v.string()?;
            if s.trim().is_empty() {
                return Err(v.error(
                    "give the path of a records CSV file, relative to the scenario file's folder",
                ));
            }
            Ok((s.to_string(), v.error(String::new())))
        },
    )?;
    let (dist, at_dist) = t.need(
        "dist",
        "the family to fit: one of weibull, weibull3, lognormal, gamma, exponential, or best (lowest AIC)",
        |v| Ok((v.one_of(RECORDS_DISTS)?, v.error(String::new()))),
    )?;
    let wanted = t.with("part", |v| {
        let s = v.string()?;
        if s.trim().is_empty() {
            return Err(v.error("give the part's name as it appears in the records' part column"));
        }
        Ok((s.to_string(), v.error(String::new())))
    })?;
    let meters = t.with("meters", |v| {
        let s = v.string()?;
        if s.trim().is_empty() {
            return Err(v.error(
                "give the path of the units' current meter readings (CSV: unit, meter), relative to the scenario file's folder",
            ));
        }
        Ok((s.to_string(), v.error(String::new())))
    })?;
    let assumed = t.with("assumed_shape", |v| {
        let b = v.positive()?;
        if b > 1e3 {
            return Err(v.error(format!(
                "the assumed Weibull shape must be at most 1000 (got {b})"
            )));
        }
        Ok(b)
    })?;
    t.finish(&["records", "dist", "part", "meters", "assumed_shape"])?;
    let err_at = |at: &ScenarioError, message: String| ScenarioError {
        message,
        ..at.clone()
    };
    if assumed.is_some() && dist != "weibull" {
        return Err(err_at(
            &at_dist,
            format!(
                "`assumed_shape` fixes a Weibull shape, so `dist` must be \"weibull\" (got \"{dist}\")"
            ),
        ));
    }
    let Some(base) = base else {
        return Err(err_at(
            &at_records,
            format!(
                "records file `{rel}` cannot be found: this scenario text was not read from a file, so there is no folder to look in; load the scenario from a file, or give the life as parameters, e.g. {{ dist = \"weibull\", shape = 2.2, scale = 14000 }}"
            ),
        ));
    };
    let path = base.join(&rel);
    let shown = path.display().to_string();
    let meters_path = meters.as_ref().map(|(m, _)| base.join(m));
    let (records, _) = read_records_or_log(&path, meters_path.as_deref()).map_err(|e| {
        let at = match (&meters, &e) {
            (Some((m, at)), crate::fit::FitError::Io { path, .. })
                if path.ends_with(m.as_str()) =>
            {
                at
            }
            _ => &at_records,
        };
        err_at(at, e.to_string())
    })?;
    let sample = match &wanted {
        Some((name, at_part)) => {
            one_part(&records, name).map_err(|m| err_at(at_part, format!("{shown}: {m}")))?
        }
        None => {
            let all = crate::fit::samples_by_part(&records);
            if all.len() == 1 {
                all.into_iter()
                    .next()
                    .ok_or_else(|| err_at(&at_records, format!("{shown}: no records")))?
            } else {
                one_part(&records, part).map_err(|_| {
                    let names: Vec<String> = all.iter().map(|s| format!("'{}'", s.part())).collect();
                    err_at(
                        &at_records,
                        format!(
                            "{shown} holds records of several parts ({}) and none is named '{part}'; say which with `part = \"...\"` in this life table",
                            names.join(", ")
                        ),
                    )
                })?
            }
        }
    };
    let (fit, how, passed_over) = match assumed {
        Some(b) => fit_assumed_shape(&sample, b, DEFAULT_CONFIDENCE)
            .map(|f| (f, format!("weibull with the assumed shape {b}"), None))
            .map_err(|e| e.to_string()),
        None => fit_records(&sample, dist),
    }
    .map_err(|m| err_at(&at_records, format!("{shown}: {m}")))?;
    let u = LifeUncertainty::from_fit(&fit, &sample)
        .map_err(|e| err_at(&at_records, format!("{shown}: {e}")))?;
    let caution = match (passed_over, fit.reliable, &fit.reliability_note) {
        (Some(p), _, _) => Some(p),
        (None, false, Some(note)) => Some(format!(
            "the {} fit's standard errors are not to be trusted: {note}",
            fit.distribution.name()
        )),
        _ => None,
    };
    let source = LifeSource {
        file: rel,
        records_part: sample.part().to_string(),
        failures: fit.failures,
        suspensions: fit.suspensions,
        family: fit.distribution.name().to_string(),
        how,
        caution,
    };
    Ok((fit.life(), u, source))
}

/// The one sample of the records named `name`.
fn one_part(records: &[Record], name: &str) -> Result<Sample, String> {
    let mut chosen = select_parts(records, Some(name)).map_err(|e| e.to_string())?;
    if chosen.len() == 1 {
        Ok(chosen.remove(0))
    } else {
        let names: Vec<String> = chosen.iter().map(|s| format!("'{}'", s.part())).collect();
        Err(format!(
            "several parts match '{name}' when case is ignored ({}); give the exact name",
            names.join(", ")
        ))
    }
}

/// Fit one family by maximum likelihood, or every family and keep the
/// lowest AIC among the fits whose standard errors can be trusted (`best`;
/// the lowest AIC of all when none can). Returns the fit, how it was
/// chosen, and, when the lowest-AIC fit was passed over, why.
fn fit_records(sample: &Sample, dist: &str) -> Result<(Fit, String, Option<String>), String> {
    if dist == "best" {
        let fits = fit_part(sample).map_err(|e| e.to_string())?;
        let lowest = fits.best();
        let reliable = fits.best_reliable();
        return match (lowest, reliable) {
            (Some(l), Some(r)) if l.distribution != r.distribution => Ok((
                r.clone(),
                "lowest AIC among the fits that can be trusted".to_string(),
                Some(format!(
                    "the lowest-AIC fit, {}, was passed over ({}); {}, the best of the families whose fit can be trusted, is used",
                    l.distribution.name(),
                    l.reliability_note
                        .as_deref()
                        .unwrap_or("its standard errors are not to be trusted"),
                    r.distribution.name()
                )),
            )),
            (Some(_), Some(r)) => Ok((r.clone(), "lowest AIC".to_string(), None)),
            (Some(l), None) => Ok((
                l.clone(),
                "lowest AIC; no family's fit can be trusted".to_string(),
                None,
            )),
            (None, _) => Err(format!(
                "no family could be fitted: {}",
                fits.not_fitted
                    .iter()
                    .map(|n| format!("{}: {}", n.distribution.name(), n.reason))
                    .collect::<Vec<_>>()
                    .join("; ")
            )),
        };
    }
    let family = Family::ALL
        .into_iter()
        .find(|f| f.name() == dist)
        .ok_or_else(|| format!("unknown family `{dist}`"))?;
    fit_mle(sample, family)
        .map(|f| (f, "asked for".to_string(), None))
        .map_err(|e| e.to_string())
}

fn read_pair(v: Val<'_, '_>, what: &str, positive: bool) -> Result<(f64, f64), ScenarioError> {
    let t = v.table()?;
    let get = |v: Val<'_, '_>| {
        if positive {
            v.positive()
        } else {
            v.non_negative()
        }
    };
    let p = t.need("planned", what, get)?;
    let u = t.need("unplanned", what, get)?;
    t.finish(&["planned", "unplanned"])?;
    Ok((p, u))
}

fn read_part(
    name: &str,
    v: Val<'_, '_>,
    defaults: &Defaults,
    base: Option<&Path>,
) -> Result<PartType, ScenarioError> {
    let t = v.table()?;
    let (life, life_uncertainty, life_source) = t.need(
        "life",
        "the life distribution, e.g. { dist = \"weibull\", shape = 2.2, scale = 14000 }, or fitted to records: { records = \"removals.csv\", dist = \"weibull\" }",
        |v| read_life_or_records(v, name, base),
    )?;
    let price = t.need("price", "price of one spare", |v| v.non_negative())?;
    let (labour_planned, labour_unplanned) = t.need(
        "labour",
        "labour cost per replacement: { planned = .., unplanned = .. }",
        |v| read_pair(v, "labour cost (at least 0)", false),
    )?;
    let (duration_planned, duration_unplanned) = t.need(
        "duration_hours",
        "hours the unit is down per replacement: { planned = .., unplanned = .. }",
        |v| read_pair(v, "hours (at least 0)", false),
    )?;
    let lead_time = match t.with("lead_time", read_lead)? {
        Some(l) => l,
        None => defaults.lead_time.ok_or_else(|| {
            t.error("missing field `lead_time` (and no [defaults] lead_time): e.g. { dist = \"lognormal\", median_hours = 600, log_sd = 0.4 }")
        })?,
    };
    let holding = match t.with("holding", read_holding)? {
        Some(h) => h,
        None => defaults.holding.ok_or_else(|| {
            t.error("missing field `holding` (and no [defaults] holding): e.g. { fraction_of_price = 0.2, per_hours = 8760 }")
        })?,
    };
    let hard_limit = t.with("hard_limit_hours", |v| v.positive())?;
    let repair = t.with("repair", network::read_repair)?;
    let safety = t.with("safety_critical", |v| v.boolean())?;
    if safety == Some(false) && hard_limit.is_some() {
        return Err(t.error(
            "a part with `hard_limit_hours` is safety-critical here (never run to failure, never kept past the limit); remove `safety_critical = false` or the limit",
        ));
    }
    if safety == Some(true) && hard_limit.is_none() {
        return Err(t.error(
            "a safety-critical part needs `hard_limit_hours`: the age (hours) it may never be kept past",
        ));
    }
    t.finish(&[
        "life",
        "price",
        "labour",
        "duration_hours",
        "lead_time",
        "holding",
        "hard_limit_hours",
        "safety_critical",
        "repair",
    ])?;
    Ok(PartType {
        name: name.to_string(),
        life,
        price,
        labour_planned,
        labour_unplanned,
        duration_planned,
        duration_unplanned,
        lead_time,
        holding_per_hour: holding.per_spare_hour(price),
        hard_limit,
        life_uncertainty,
        life_source,
        repair,
    })
}

/// The index of the part type named `name`, or an error at `at` saying
/// that `who` names a part type the scenario does not define, with the
/// closest name and the list.
fn part_named(
    parts: &[PartType],
    name: &str,
    at: &Val<'_, '_>,
    who: &str,
) -> Result<usize, ScenarioError> {
    parts.iter().position(|p| p.name == name).ok_or_else(|| {
        let names: Vec<&str> = parts.iter().map(|p| p.name.as_str()).collect();
        at.error(format!(
            "{who} names part type `{name}`, which the scenario does not define{}; part types: {}",
            did_you_mean(name, names.iter().copied()),
            names.join(", ")
        ))
    })
}

fn check_name(v: &Val<'_, '_>, name: &str) -> Result<(), ScenarioError> {
    if !name.is_empty()
        && name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        Ok(())
    } else {
        Err(v.error(format!(
            "`{name}` is not a valid name; allowed: letters, digits, `_` and `-`"
        )))
    }
}

/// An initial-age spec, with fractions of each part's characteristic life
/// resolved per part type.
enum AgeSpec {
    New,
    Fixed(Hours),
    UniformHours(Hours, Hours),
    UniformFraction(f64, f64),
    List(Vec<Hours>),
}

fn read_age(v: Val<'_, '_>) -> Result<AgeSpec, ScenarioError> {
    if let toml::de::DeValue::String(_) = v.value {
        v.one_of(&["new"])?;
        return Ok(AgeSpec::New);
    }
    let t = v.table()?;
    let kind = t.need("kind", "one of new, fixed, uniform, list", |v| {
        v.one_of(&["new", "fixed", "uniform", "list"])
    })?;
    let out = match kind {
        "new" => {
            t.finish(&["kind"])?;
            AgeSpec::New
        }
        "fixed" => {
            let h = t.need("hours", "the age in hours", |v| v.non_negative())?;
            t.finish(&["kind", "hours"])?;
            AgeSpec::Fixed(h)
        }
        "uniform" => {
            let lh = t.with("low_hours", |v| v.non_negative())?;
            let hh = t.with("high_hours", |v| v.non_negative())?;
            let lf = t.with("low_fraction", |v| v.non_negative())?;
            let hf = t.with("high_fraction", |v| v.non_negative())?;
            t.finish(&[
                "kind",
                "low_hours",
                "high_hours",
                "low_fraction",
                "high_fraction",
            ])?;
            match (lh, hh, lf, hf) {
                (Some(a), Some(b), None, None) if a <= b => AgeSpec::UniformHours(a, b),
                (None, None, Some(a), Some(b)) if a <= b => AgeSpec::UniformFraction(a, b),
                _ => {
                    return Err(t.error(
                        "give `low_hours` and `high_hours`, or `low_fraction` and `high_fraction` (of each part's characteristic life), with low <= high",
                    ));
                }
            }
        }
        _ => {
            let hours = t.need("hours", "one age (hours) per unit of the group", |v| {
                each(&v, |x| x.non_negative())
            })?;
            t.finish(&["kind", "hours"])?;
            AgeSpec::List(hours)
        }
    };
    Ok(out)
}

fn resolve_age(spec: &AgeSpec, part: &PartType) -> InitialAge {
    let c = part.life.characteristic_life();
    match spec {
        AgeSpec::New => InitialAge::New,
        AgeSpec::Fixed(h) => InitialAge::Fixed(*h),
        AgeSpec::UniformHours(a, b) => InitialAge::Uniform { low: *a, high: *b },
        AgeSpec::UniformFraction(a, b) => InitialAge::Uniform {
            low: a * c,
            high: b * c,
        },
        AgeSpec::List(v) => InitialAge::List(v.clone()),
    }
}

fn read_rule(t: &Tbl<'_, '_>, part: &PartType) -> Result<Rule, ScenarioError> {
    let kind = t.need("rule", "one of run_to_failure, age, block", |v| {
        v.one_of(&["run_to_failure", "age", "block"])
    })?;
    let hours = t.with("interval_hours", |v| v.positive())?;
    let frac = t.with("interval_fraction", |v| v.positive())?;
    let interval = match (hours, frac) {
        (Some(h), None) => Some(h),
        (None, Some(f)) => Some(f * part.life.characteristic_life()),
        (None, None) => None,
        _ => return Err(t.error("give only one of `interval_hours` and `interval_fraction`")),
    };
    match (kind, interval) {
        ("run_to_failure", None) => Ok(Rule::RunToFailure),
        ("run_to_failure", Some(_)) => Err(t.error(
            "run_to_failure takes no interval; remove `interval_hours`/`interval_fraction` or use rule = \"age\"",
        )),
        (_, None) => Err(t.error(format!(
            "rule `{kind}` needs `interval_hours` (hours) or `interval_fraction` (of the part's characteristic life)"
        ))),
        ("age", Some(x)) => Ok(Rule::Age(x)),
        (_, Some(x)) => Ok(Rule::Block(x)),
    }
}

fn read_policy(
    name: &str,
    v: Val<'_, '_>,
    parts: &[PartType],
    layout: &network::Layout,
) -> Result<Policy, ScenarioError> {
    let t = v.table()?;
    let mut out: Vec<Option<PartPolicy>> = vec![None; parts.len()];
    t.entries(|key, v| {
        let pid = part_named(parts, key, &v, "policy")?;
        let pt = v.table()?;
        let rule = read_rule(&pt, &parts[pid])?;
        let stock = pt.need(
            "stock",
            "base-stock level S (a whole number, 0 or more)",
            |v| network::read_stock(v, layout),
        )?;
        pt.finish(&["rule", "interval_hours", "interval_fraction", "stock"])?;
        out[pid] = Some(PartPolicy { rule, stock });
        Ok(())
    })?;
    let mut parts_out = Vec::with_capacity(parts.len());
    for (i, p) in out.into_iter().enumerate() {
        match p {
            Some(p) => parts_out.push(p),
            None => {
                return Err(t.error(format!(
                    "policy `{name}` leaves out part type `{}`; every part type needs a rule and a stock level",
                    parts[i].name
                )));
            }
        }
    }
    Ok(Policy {
        name: name.to_string(),
        parts: parts_out,
    })
}

fn read_intervals(t: &Tbl<'_, '_>, part: &PartType) -> Result<Option<Vec<Hours>>, ScenarioError> {
    let c = part.life.characteristic_life();
    let range = |v: Val<'_, '_>| -> Result<Vec<f64>, ScenarioError> {
        let r = v.table()?;
        let from = r.need("from", "first value", |v| v.positive())?;
        let to = r.need("to", "last value", |v| v.positive())?;
        let step = r.need("step", "step between values", |v| v.positive())?;
        r.finish(&["from", "to", "step"])?;
        if to < from {
            return Err(r.error("`to` must be at least `from`"));
        }
        let n = ((to - from) / step + 1e-9).floor() as usize + 1;
        if n > 1000 {
            return Err(r.error(format!(
                "this range has {n} values; at most 1000 are allowed"
            )));
        }
        Ok((0..n).map(|i| from + i as f64 * step).collect())
    };
    let list = |v: Val<'_, '_>| {
        let l = each(&v, |x| x.positive())?;
        if l.is_empty() {
            return Err(v.error("the list of intervals is empty; give at least one"));
        }
        Ok(l)
    };
    let mut found: Vec<Vec<Hours>> = Vec::new();
    if let Some(v) = t.with("interval_hours", list)? {
        found.push(v);
    }
    if let Some(v) = t.with("interval_fractions", list)? {
        found.push(v.iter().map(|f| f * c).collect());
    }
    if let Some(v) = t.with("interval_hours_range", range)? {
        found.push(v);
    }
    if let Some(v) = t.with("interval_fraction_range", range)? {
        found.push(v.iter().map(|f| f * c).collect());
    }
    match found.len() {
        0 => Ok(None),
        1 => Ok(found.pop()),
        _ => Err(t.error(
            "give only one of interval_hours, interval_fractions, interval_hours_range, interval_fraction_range",
        )),
    }
}

const SEARCH_PART_KEYS: &[&str] = &[
    "rules",
    "interval_hours",
    "interval_fractions",
    "interval_hours_range",
    "interval_fraction_range",
    "stock",
];

fn read_part_search(
    t: &Tbl<'_, '_>,
    part: &PartType,
    fallback: Option<&Tbl<'_, '_>>,
    layout: &network::Layout,
) -> Result<PartSearch, ScenarioError> {
    // A key missing from the part's table comes from [search.every_part].
    let pick = |key: &str| -> Option<&Tbl<'_, '_>> {
        if t.has(key) {
            Some(t)
        } else {
            fallback.filter(|f| f.has(key))
        }
    };
    let rules_tbl = pick("rules").unwrap_or(t);
    let kinds = rules_tbl
        .with("rules", |v| {
            each(&v, |x| {
                x.one_of(&["run_to_failure", "age", "block"])
                    .map(str::to_string)
            })
        })?
        .unwrap_or_else(|| vec!["run_to_failure".to_string()]);
    // Intervals come wholly from the part's own table if it names any,
    // otherwise wholly from [search.every_part].
    const INTERVAL_KEYS: [&str; 4] = [
        "interval_hours",
        "interval_fractions",
        "interval_hours_range",
        "interval_fraction_range",
    ];
    let iv_tbl = if INTERVAL_KEYS.iter().any(|k| t.has(k)) {
        t
    } else {
        INTERVAL_KEYS.iter().find_map(|k| pick(k)).unwrap_or(t)
    };
    let intervals = read_intervals(iv_tbl, part)?;
    let stock_tbl = pick("stock").unwrap_or(t);
    let (smin, smax, locations) =
        match stock_tbl.with("stock", |v| network::read_stock_ranges(v, layout))? {
            Some(r) => r,
            None if layout.implicit => (0, 0, None),
            None => network::read_stock_ranges_default(layout),
        };
    let mut rules = Vec::new();
    let mut seen = std::collections::HashSet::new();
    for k in &kinds {
        if !seen.insert(k.clone()) {
            continue;
        }
        match k.as_str() {
            "run_to_failure" => rules.push(Rule::RunToFailure),
            kind => {
                let Some(iv) = &intervals else {
                    return Err(t.error(format!(
                        "rule `{kind}` in the search needs intervals: interval_hours, interval_fractions or a range"
                    )));
                };
                for &x in iv {
                    rules.push(if kind == "age" {
                        Rule::Age(x)
                    } else {
                        Rule::Block(x)
                    });
                }
            }
        }
    }
    // Safety-critical parts: never run to failure, never past the hard limit.
    if let Some(limit) = part.hard_limit {
        rules.retain(
            |r| matches!(r.interval(), Some(x) if x <= limit * (1.0 + crate::model::LIMIT_SLACK)),
        );
        if rules.is_empty() {
            return Err(t.error(format!(
                "part type `{}` is safety-critical (hard limit {limit} h): the search space leaves it no allowed rule; give age or block intervals at or below the limit",
                part.name
            )));
        }
    }
    Ok(PartSearch {
        rules,
        stock_min: smin,
        stock_max: smax,
        locations,
    })
}

/// `[money]`: the operating hours of a year, the discount rate and the
/// yearly budgets of running spend (MODEL.md, "Money over time").
fn read_money(
    v: Val<'_, '_>,
    parts: &[PartType],
    horizon: Hours,
) -> Result<MoneySettings, ScenarioError> {
    let t = v.table()?;
    let hours_per_year = t.need(
        "hours_per_year",
        "the operating hours of a calendar year (> 0), e.g. 4000",
        |v| {
            let x = v.number()?;
            if x > 0.0 && x.is_finite() {
                Ok(x)
            } else {
                Err(v.error(format!(
                    "the operating hours of a year must be a finite number greater than 0 (got {x}); e.g. 4000 for a fleet run 4 000 hours a year"
                )))
            }
        },
    )?;
    if horizon / hours_per_year > 1e6 {
        return Err(t.error(format!(
            "hours_per_year = {hours_per_year} makes the horizon of {horizon} h more than a million years; allowed: at least horizon_hours / 1 000 000"
        )));
    }
    let discount_rate = t
        .with("discount_rate", |v| {
            let x = v.number()?;
            if x > -1.0 && x.is_finite() {
                Ok(x)
            } else {
                Err(v.error(format!(
                    "a discount rate is a finite fraction per year above -1 (-100 %), e.g. 0.06 for 6 % (got {x})"
                )))
            }
        })?
        .unwrap_or(0.0);
    let budget_value = |v: Val<'_, '_>| {
        let x = v.number()?;
        if x >= 0.0 && x.is_finite() {
            Ok(x)
        } else {
            Err(v.error(format!(
                "a yearly budget is a finite amount of 0 or more (got {x})"
            )))
        }
    };
    let budget = t.with("yearly_budget", budget_value)?;
    let mut part_budgets = vec![None; parts.len()];
    t.with("yearly_budget_by_part", |v| {
        let b = v.table()?;
        b.entries(|key, v| {
            let pid = part_named(parts, key, &v, "yearly_budget_by_part")?;
            part_budgets[pid] = Some(budget_value(v)?);
            Ok(())
        })?;
        Ok(())
    })?;
    t.finish(&[
        "hours_per_year",
        "discount_rate",
        "yearly_budget",
        "yearly_budget_by_part",
    ])?;
    Ok(MoneySettings {
        hours_per_year,
        discount_rate,
        budget,
        part_budgets,
    })
}

fn read_search(
    v: Val<'_, '_>,
    parts: &[PartType],
    layout: &network::Layout,
    has_money: bool,
) -> Result<SearchSpace, ScenarioError> {
    let t = v.table()?;
    let basis = t
        .with("cost", |v| {
            let s = v.one_of(&["spend", "total", "pv_spend"])?;
            if s == "pv_spend" && !has_money {
                return Err(v.error(
                    "cost = \"pv_spend\" needs a [money] table with hours_per_year (and a discount_rate); allowed without it: spend, total",
                ));
            }
            Ok(s)
        })?
        .map(|s| match s {
            "spend" => CostBasis::Spend,
            "pv_spend" => CostBasis::PvSpend,
            _ => CostBasis::TotalWithPenalty,
        })
        .unwrap_or(CostBasis::Spend);
    let statistic = t
        .with("statistic", |v| {
            let s = v.string()?;
            if s == "mean" {
                return Ok(CostStatistic::Mean);
            }
            match s.strip_prefix('p').and_then(|n| n.parse::<f64>().ok()) {
                Some(p) if p > 0.0 && p < 100.0 => Ok(CostStatistic::Percentile(p)),
                _ => Err(v.error(format!(
                    "`{s}` is not a statistic; allowed: mean, or a percentile such as p90"
                ))),
            }
        })?
        .unwrap_or(CostStatistic::Mean);
    let spares_budget = t.with("spares_budget", |v| v.positive())?;
    let search_trials = t
        .with("trials", |v| v.integer(1, 100_000_000))?
        .unwrap_or(2000) as u64;
    let validate_trials = t
        .with("validate_trials", |v| v.integer(1, 100_000_000))?
        .unwrap_or(10_000) as u64;
    // [search.every_part] fills in what a part's own table leaves out.
    let every_raw = t.with("every_part", |v| Ok((v.value.clone(), v.span)))?;
    let every_path = t.child_path("every_part");
    let every_val = every_raw.as_ref().map(|(value, span)| Val {
        src: t.src,
        path: &every_path,
        span: *span,
        value,
    });
    let every_tbl = match &every_val {
        Some(v) => {
            let e = v.table()?;
            for k in SEARCH_PART_KEYS {
                e.with(k, |_| Ok(()))?;
            }
            e.finish(SEARCH_PART_KEYS)?;
            Some(e)
        }
        None => None,
    };
    let mut per_part: Vec<Option<PartSearch>> = vec![None; parts.len()];
    t.with("parts", |v| {
        let pt = v.table()?;
        pt.entries(|key, v| {
            let pid = part_named(parts, key, &v, "the search")?;
            let tb = v.table()?;
            let ps = read_part_search(&tb, &parts[pid], every_tbl.as_ref(), layout)?;
            tb.finish(SEARCH_PART_KEYS)?;
            per_part[pid] = Some(ps);
            Ok(())
        })?;
        Ok(())
    })?;
    let mut out = Vec::with_capacity(parts.len());
    for (i, ps) in per_part.into_iter().enumerate() {
        match ps {
            Some(ps) => out.push(ps),
            None => match &every_tbl {
                Some(e) => out.push(read_part_search(e, &parts[i], None, layout)?),
                None => {
                    return Err(t.error(format!(
                        "the search does not say what to try for part type `{}`: add [search.parts.{}] or [search.every_part]",
                        parts[i].name, parts[i].name
                    )));
                }
            },
        }
    }
    t.finish(&[
        "cost",
        "statistic",
        "spares_budget",
        "trials",
        "validate_trials",
        "every_part",
        "parts",
    ])?;
    Ok(SearchSpace {
        parts: out,
        spares_budget,
        cost: CostMeasure { basis, statistic },
        search_trials,
        validate_trials,
    })
}

/// The `[scenario]` table.
struct ScenarioTable {
    name: String,
    description: String,
    horizon: Hours,
    downtime_penalty: f64,
    /// The availability target; optional with a `[ready_units]` target.
    target: Option<f64>,
    seed: u64,
    trials: u64,
    currency: String,
    parameter_uncertainty: bool,
}

/// A whole scenario file: each table in turn, then the model checked as a
/// whole (a named policy that breaks a safety-critical part's limit).
fn read_model(root: &Tbl<'_, '_>, base: Option<&Path>) -> Result<Model, ScenarioError> {
    let sc = read_scenario_table(root)?;
    let defaults = read_defaults(root)?;
    let parts = read_parts(root, &defaults, base)?;
    let unit_types = read_unit_types(root, &parts)?;
    let sites = network::read_sites(root)?;
    let groups = read_fleet(root, &parts, &unit_types, &sites, &defaults)?;
    let mut layout = network::Layout::new(&sites, false);
    network::check_sites_used(root, &layout, &groups)?;
    let depot = network::read_depot(root, &layout)?;
    layout.depot = depot.is_some();
    let lateral = network::read_lateral(root, &layout)?;
    let ready = network::read_ready(root, &layout, &groups)?;
    let policies = read_policies(root, &parts, &layout)?;
    let money = root.with("money", |v| read_money(v, &parts, sc.horizon))?;
    let search = root.with("search", |v| {
        read_search(v, &parts, &layout, money.is_some())
    })?;
    root.finish(ROOT_KEYS)?;

    let units = Model::flatten_units(&unit_types, &groups);
    let (ready, target) = match ready {
        Some((r, share)) => (Some(r), share),
        // Without [ready_units] the availability target was required.
        None => (None, sc.target.unwrap_or(1.0)),
    };
    let model = Model {
        name: sc.name,
        description: sc.description,
        horizon: sc.horizon,
        downtime_penalty: sc.downtime_penalty,
        target,
        availability_target: sc.target,
        ready,
        seed: sc.seed,
        trials: sc.trials,
        parts,
        unit_types,
        groups,
        units,
        sites,
        depot,
        lateral,
        policies: policies.iter().map(|(p, _)| p.clone()).collect(),
        search,
        currency: sc.currency,
        parameter_uncertainty: sc.parameter_uncertainty,
        money,
    };
    for (p, span) in &policies {
        if let Some(msg) = model.safety_violation(p) {
            return Err(root
                .src
                .error(&format!("policies.{}", p.name), span.0..span.1, msg));
        }
    }
    Ok(model)
}

/// `[scenario]`: name, horizon, penalty, target and the run's defaults.
fn read_scenario_table(root: &Tbl<'_, '_>) -> Result<ScenarioTable, ScenarioError> {
    root.need("scenario", "the [scenario] table with name, horizon_hours, ...", |v| {
        let t = v.table()?;
        let name = t.need("name", "a short name, e.g. \"quarry\"", |v| {
            let s = v.string()?;
            check_name(&v, s)?;
            Ok(s.to_string())
        })?;
        let description = t.with("description", |v| v.string().map(str::to_string))?.unwrap_or_default();
        let horizon = t.need("horizon_hours", "the planning horizon in operating hours (> 0)", |v| {
            let h = v.positive()?;
            if h > 1e9 {
                return Err(v.error(format!(
                    "a horizon of {h} h is beyond what can be simulated (about 114 000 years); allowed: up to 1e9 hours"
                )));
            }
            Ok(h)
        })?;
        let penalty = t.need("downtime_penalty_per_hour", "cost per unit-hour down (0 or more)", |v| v.non_negative())?;
        let read_target = |v: Val<'_, '_>| {
            let x = v.number()?;
            if x > 0.0 && x <= 1.0 {
                Ok(x)
            } else {
                Err(v.error(format!("must be in (0, 1], e.g. 0.92 (got {x})")))
            }
        };
        // With a ready-units target in force the availability target is optional.
        let target = if root.has("ready_units") {
            t.with("target_availability", read_target)?
        } else {
            Some(t.need("target_availability", "the availability target A*, in (0, 1] (or give a [ready_units] target)", read_target)?)
        };
        let seed = t.with("seed", |v| v.integer(0, u64::MAX as i128))?.unwrap_or(1) as u64;
        let trials = t.with("trials", |v| v.integer(1, 1_000_000_000))?.unwrap_or(2000) as u64;
        let currency = t.with("currency", |v| v.string().map(str::to_string))?.unwrap_or_default();
        let uncertainty = t
            .with("parameter_uncertainty", |v| v.boolean())?
            .unwrap_or(false);
        t.finish(&[
            "name",
            "description",
            "horizon_hours",
            "downtime_penalty_per_hour",
            "target_availability",
            "seed",
            "trials",
            "currency",
            "parameter_uncertainty",
        ])?;
        Ok(ScenarioTable {
            name,
            description,
            horizon,
            downtime_penalty: penalty,
            target,
            seed,
            trials,
            currency,
            parameter_uncertainty: uncertainty,
        })
    })
}

/// `[defaults]`: holding cost, lead time and initial age for part types
/// and fleet entries that give none.
fn read_defaults(root: &Tbl<'_, '_>) -> Result<Defaults, ScenarioError> {
    Ok(root
        .with("defaults", |v| {
            let t = v.table()?;
            let holding = t.with("holding", read_holding)?;
            let lead_time = t.with("lead_time", read_lead)?;
            let initial_age = t.with("initial_age", read_age)?;
            t.finish(&["holding", "lead_time", "initial_age"])?;
            Ok(Defaults {
                holding,
                lead_time,
                initial_age,
            })
        })?
        .unwrap_or(Defaults {
            holding: None,
            lead_time: None,
            initial_age: None,
        }))
}

/// `[parts.NAME]`: at least one part type.
fn read_parts(
    root: &Tbl<'_, '_>,
    defaults: &Defaults,
    base: Option<&Path>,
) -> Result<Vec<PartType>, ScenarioError> {
    root.need("parts", "at least one [parts.NAME] table", |v| {
        let t = v.table()?;
        let parts = t.entries(|key, v| {
            check_name(&v, key)?;
            read_part(key, v, defaults, base)
        })?;
        if parts.is_empty() {
            return Err(v.error("define at least one part type as [parts.NAME]"));
        }
        Ok(parts)
    })
}

/// `[units.NAME]`: unit types as lists of positions of part types.
fn read_unit_types(root: &Tbl<'_, '_>, parts: &[PartType]) -> Result<Vec<UnitType>, ScenarioError> {
    root.need(
        "units",
        "at least one [units.NAME] table with positions",
        |v| {
            let t = v.table()?;
            let out = t.entries(|key, v| {
                check_name(&v, key)?;
                let ut = v.table()?;
                let mut counts = std::collections::HashMap::<String, usize>::new();
                let positions = ut.need(
                    "positions",
                    "a list of part types, e.g. [\"engine\", \"pump\", \"pump\"]",
                    |v| {
                        let ps = each(&v, |x| {
                            let (pname, part) = if x.is_table() {
                                let pt = x.table()?;
                                let n = pt.need("name", "the position's name", |v| {
                                    v.string().map(str::to_string)
                                })?;
                                let p = pt.need("part", "the part type it holds", |v| {
                                    v.string().map(str::to_string)
                                })?;
                                pt.finish(&["name", "part"])?;
                                (Some(n), p)
                            } else {
                                (None, x.string()?.to_string())
                            };
                            let pid = part_named(parts, &part, &x, "position")?;
                            let c = counts.entry(part.clone()).or_insert(0);
                            *c += 1;
                            let name = pname.unwrap_or_else(|| {
                                if *c == 1 {
                                    part.clone()
                                } else {
                                    format!("{part}#{c}")
                                }
                            });
                            Ok(Position { name, part: pid })
                        })?;
                        if ps.is_empty() {
                            return Err(v.error("a unit type needs at least one position"));
                        }
                        for (i, p) in ps.iter().enumerate() {
                            if ps[..i].iter().any(|q: &Position| q.name == p.name) {
                                return Err(v.error(format!(
                                    "two positions are named `{}`; position names must differ",
                                    p.name
                                )));
                            }
                        }
                        if ps.len() > 65_000 {
                            return Err(v.error("at most 65 000 positions per unit type"));
                        }
                        Ok(ps)
                    },
                )?;
                ut.finish(&["positions"])?;
                Ok(UnitType {
                    name: key.to_string(),
                    positions,
                })
            })?;
            if out.is_empty() {
                return Err(v.error("define at least one unit type as [units.NAME]"));
            }
            Ok(out)
        },
    )
}

/// `[[fleet]]`: how many units of each type, and their parts' initial
/// ages.
fn read_fleet(
    root: &Tbl<'_, '_>,
    parts: &[PartType],
    unit_types: &[UnitType],
    sites: &[Site],
    defaults: &Defaults,
) -> Result<Vec<FleetGroup>, ScenarioError> {
    let unit_names: Vec<&str> = unit_types.iter().map(|u| u.name.as_str()).collect();
    root.need(
        "fleet",
        "one or more [[fleet]] entries with unit and count",
        |v| {
            let gs = each(&v, |x| {
                let t = x.table()?;
                let unit = t.need("unit", "the unit type", |v| {
                    let s = v.string()?;
                    unit_types.iter().position(|u| u.name == s).ok_or_else(|| {
                        let hint = did_you_mean(s, unit_names.iter().copied());
                        v.error(format!(
                            "unit type `{s}` is not defined{hint}; unit types: {}",
                            unit_names.join(", ")
                        ))
                    })
                })?;
                let count = t.need("count", "how many units of this type (1 or more)", |v| {
                    v.integer(1, 1_000_000)
                })? as usize;
                let site = network::read_group_site(&t, sites)?;
                let age = t.with("initial_age", read_age)?;
                let mut by_part: Vec<(usize, AgeSpec)> = Vec::new();
                t.with("initial_age_by_part", |v| {
                    let bt = v.table()?;
                    bt.entries(|key, v| {
                        let pid = part_named(parts, key, &v, "initial_age_by_part")?;
                        by_part.push((pid, read_age(v)?));
                        Ok(())
                    })?;
                    Ok(())
                })?;
                t.finish(&[
                    "unit",
                    "count",
                    "initial_age",
                    "initial_age_by_part",
                    "site",
                ])?;
                let mut initial_age = Vec::with_capacity(parts.len());
                for (pid, part) in parts.iter().enumerate() {
                    let spec = by_part
                        .iter()
                        .find(|(p, _)| *p == pid)
                        .map(|(_, s)| s)
                        .or(age.as_ref())
                        .or(defaults.initial_age.as_ref())
                        .unwrap_or(&AgeSpec::New);
                    if let AgeSpec::List(l) = spec
                        && l.len() != count
                    {
                        return Err(t.error(format!(
                        "an initial-age list needs one age per unit: {} given for {count} units",
                        l.len()
                    )));
                    }
                    initial_age.push(resolve_age(spec, part));
                }
                Ok(FleetGroup {
                    unit_type: unit,
                    count,
                    site,
                    initial_age,
                })
            })?;
            if gs.is_empty() {
                return Err(v.error("the fleet needs at least one [[fleet]] entry"));
            }
            let total: usize = gs.iter().map(|g| g.count).sum();
            if total > 1_000_000 {
                return Err(v.error(format!(
                    "the fleet has {total} units; at most 1 000 000 are allowed"
                )));
            }
            Ok(gs)
        },
    )
}

/// Where a value stands in the file: byte offsets.
type Span = (usize, usize);

/// `[policies.NAME]`: the named policies, each with its place for
/// messages.
fn read_policies(
    root: &Tbl<'_, '_>,
    parts: &[PartType],
    layout: &network::Layout,
) -> Result<Vec<(Policy, Span)>, ScenarioError> {
    Ok(root
        .with("policies", |v| {
            let t = v.table()?;
            t.entries(|key, v| {
                check_name(&v, key)?;
                let p = read_policy(key, v, parts, layout)?;
                Ok((p, v.span))
            })
        })?
        .unwrap_or_default())
}
