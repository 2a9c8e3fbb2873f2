//! Re-costing a list of policies on fresh trials: the frontier search's
//! last step, and `wearout frontier --policies` (a list a user gives, e.g.
//! the `policies` of a previous `wearout frontier --json`), on one process
//! or spread over shards.
//!
//! Owns: the validation trial range (defined once, here), re-costing a
//! list of policies on a trial range ([`recost`]), the non-dominated
//! filter and the frontier of re-costed policies (cheapest first, paired
//! noise flags between neighbours), and reading a list of policies (JSON,
//! checked against the scenario with messages naming the file and the
//! entry).
//! May use: `model`, `run`, `summary`, `scenario` (its name suggestions),
//! `serde_json` (as a value tree; no derives). No I/O: the caller reads the
//! file.

use std::ops::Range;

use serde_json::Value;

use crate::model::{CostMeasure, Model, PartPolicy, Policy, Rule, Stock};
use crate::run::Progress;
use crate::summary::{Chance, MeanSe, Summary};

/// Validation trials start here, so they never overlap the search trials.
pub const VALIDATION_OFFSET: u64 = 1 << 40;

/// The validation trials of a run with `validate_trials` trials:
/// `VALIDATION_OFFSET ..`, disjoint from the search trials `0 ..`.
pub fn validation_range(validate_trials: u64) -> Range<u64> {
    VALIDATION_OFFSET..VALIDATION_OFFSET.saturating_add(validate_trials)
}

/// The chance levels the reports quote (the cheapest policy for each is
/// listed), and the thinning of the search frontier keeps the candidates
/// for: 50, 60, 70, 80, 90, 95 and 99 %.
pub const CHANCE_LEVELS: [f64; 7] = [0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 0.99];

/// A policy with its figures on one set of trials.
#[derive(Debug, Clone)]
pub struct Costed {
    pub policy: Policy,
    /// The cost measure and its standard error.
    pub cost: MeanSe,
    pub chance: Chance,
    pub summary: Summary,
}

/// Whether a frontier policy's difference from the previous (cheaper) one
/// is inside the noise, by a paired comparison on the same trials.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NoiseFlags {
    /// The chance difference is within two paired standard errors.
    pub chance_within_noise: bool,
    /// The cost difference is within two paired standard errors.
    pub cost_within_noise: bool,
    pub chance_diff: MeanSe,
    pub cost_diff: MeanSe,
}

impl NoiseFlags {
    /// The comparison in words, for tables: `same within noise`, `chance
    /// same within noise`, `cost same within noise` or `differs`.
    pub fn words(&self) -> &'static str {
        match (self.chance_within_noise, self.cost_within_noise) {
            (true, true) => "same within noise",
            (true, false) => "chance same within noise",
            (false, true) => "cost same within noise",
            (false, false) => "differs",
        }
    }
}

/// One row of the reported frontier.
#[derive(Debug, Clone)]
pub struct FrontierPoint {
    pub costed: Costed,
    /// Against the previous row (None for the cheapest).
    pub noise: Option<NoiseFlags>,
}

impl Costed {
    /// A policy's summary with its cost measure and chance.
    pub fn of(summary: Summary, measure: CostMeasure) -> Self {
        Costed {
            policy: summary.policy.clone(),
            cost: summary.cost_measure(measure),
            chance: summary.chance(),
            summary,
        }
    }
}

/// Re-cost `policies` on the trials `range`, in their order, each folded
/// through the same accumulator a single run uses; `None` if the observer
/// cancelled the run. The frontier search's last step and
/// `wearout frontier --policies` both come here.
pub fn recost(
    model: &Model,
    policies: &[Policy],
    range: Range<u64>,
    target: f64,
    measure: CostMeasure,
    progress: &dyn Progress,
) -> Option<Vec<Costed>> {
    policies
        .iter()
        .map(|p| {
            crate::run::evaluate(model, p, range.clone(), target, progress)
                .map(|s| Costed::of(s, measure))
        })
        .collect()
}

/// Non-dominated filter on (cost: lower better, chance: higher better);
/// returns indices sorted by cost, ties broken by higher chance.
pub fn non_dominated(points: &[(f64, f64)]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..points.len()).collect();
    idx.sort_by(|&a, &b| {
        points[a]
            .0
            .total_cmp(&points[b].0)
            .then(points[b].1.total_cmp(&points[a].1))
    });
    let mut out = Vec::new();
    let mut best = f64::NEG_INFINITY;
    for i in idx {
        if points[i].1 > best {
            best = points[i].1;
            out.push(i);
        }
    }
    out
}

/// The non-dominated policies among `recosted`, cheapest first, each with
/// its paired noise flags against the one before it; named `F1`, `F2`, ...
/// when `rename` (a search's frontier), else keeping their names (a list
/// the user gave).
pub fn frontier_points(
    recosted: &[Costed],
    measure: CostMeasure,
    rename: bool,
) -> Vec<FrontierPoint> {
    let pts: Vec<(f64, f64)> = recosted
        .iter()
        .map(|c| (c.cost.mean, c.chance.value))
        .collect();
    let front = non_dominated(&pts);
    let mut points: Vec<FrontierPoint> = Vec::with_capacity(front.len());
    for (k, &i) in front.iter().enumerate() {
        let mut costed = recosted[i].clone();
        if rename {
            costed.policy.name = format!("F{}", k + 1);
            costed.summary.policy.name = costed.policy.name.clone();
        }
        let noise = points.last().map(|prev: &FrontierPoint| {
            paired_noise(&prev.costed.summary, &costed.summary, measure)
        });
        points.push(FrontierPoint { costed, noise });
    }
    points
}

/// A move from a named policy to a frontier policy, with the paired
/// differences (the frontier policy's figures minus the named one's) on
/// the same trials.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Move {
    /// Index into the frontier's points.
    pub to: usize,
    pub diff: NoiseFlags,
}

/// Where a named policy of the scenario stands against the frontier,
/// re-costed on the same trials as the frontier's policies.
#[derive(Debug, Clone)]
pub struct Standing {
    pub costed: Costed,
    /// The frontier policy that sets exactly the same, if any.
    pub same_as: Option<usize>,
    /// The cheapest frontier policy with at least its chance (when it also
    /// costs no more, the named policy is dominated by it).
    pub up: Option<Move>,
    /// The frontier policy with the most chance among those costing no
    /// more than it.
    pub down: Option<Move>,
}

impl Standing {
    /// The frontier policy that dominates it (no dearer, no less likely to
    /// meet the target, better on one of the two), the one saving most.
    pub fn dominated_by(&self, points: &[FrontierPoint]) -> Option<usize> {
        if self.same_as.is_some() {
            return None;
        }
        let m = self.up?;
        let p = &points[m.to].costed;
        let (c, k) = (self.costed.cost.mean, self.costed.chance.value);
        (p.cost.mean <= c && p.chance.value >= k && (p.cost.mean < c || p.chance.value > k))
            .then_some(m.to)
    }
}

/// Where `named` stands against the frontier `points` (re-costed on the
/// same trials): the same policy, or the nearest frontier policies above
/// and below it in chance, with paired differences.
pub fn standing(named: Costed, points: &[FrontierPoint], measure: CostMeasure) -> Standing {
    let same_as = points
        .iter()
        .position(|p| p.costed.policy.parts == named.policy.parts);
    let (c, k) = (named.cost.mean, named.chance.value);
    let to = |i: usize| Move {
        to: i,
        diff: paired_noise(&named.summary, &points[i].costed.summary, measure),
    };
    let up = points
        .iter()
        .position(|p| p.costed.chance.value >= k)
        .map(to);
    let down = points
        .iter()
        .enumerate()
        .filter(|(_, p)| p.costed.cost.mean <= c)
        .max_by(|a, b| {
            a.1.costed
                .chance
                .value
                .total_cmp(&b.1.costed.chance.value)
                .then(b.0.cmp(&a.0))
        })
        .map(|(i, _)| to(i));
    Standing {
        costed: named,
        same_as,
        up,
        down,
    }
}

/// Paired noise flags between two policies on the same trials.
pub fn paired_noise(a: &Summary, b: &Summary, measure: CostMeasure) -> NoiseFlags {
    let n = a.trials().min(b.trials()) as usize;
    let mut dc = crate::summary::Moments::default();
    let mut dk = crate::summary::Moments::default();
    let ca = a.trial_costs(measure.basis);
    let cb = b.trial_costs(measure.basis);
    for t in 0..n {
        let ma = f64::from(u8::from(a.acc.trial_availability[t] >= a.target));
        let mb = f64::from(u8::from(b.acc.trial_availability[t] >= b.target));
        dk.push(mb - ma);
        dc.push(cb[t] - ca[t]);
    }
    let chance_diff = MeanSe::from(&dk);
    let cost_diff = MeanSe::from(&dc);
    NoiseFlags {
        chance_within_noise: chance_diff.mean.abs() <= 2.0 * chance_diff.se,
        cost_within_noise: cost_diff.mean.abs() <= 2.0 * cost_diff.se,
        chance_diff,
        cost_diff,
    }
}

/// A paired difference (`b - a`, trial by trial on the same trials): its
/// mean, the standard error of that mean, and whether it is inside the
/// noise (|mean| at most two standard errors).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairedDiff {
    pub diff: MeanSe,
    pub within_noise: bool,
}

impl PairedDiff {
    fn of(xs: impl Iterator<Item = f64>) -> Self {
        let mut m = crate::summary::Moments::default();
        for x in xs {
            m.push(x);
        }
        let diff = MeanSe::from(&m);
        PairedDiff {
            diff,
            within_noise: diff.mean.abs() <= 2.0 * diff.se,
        }
    }
}

/// Two policies compared on the same trials: each figure of `b` minus the
/// same of `a`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Paired {
    /// Total with the downtime penalty, without capital.
    pub total: PairedDiff,
    /// Spend: parts, labour, holding and the initial stock's capital.
    pub spend: PairedDiff,
    /// Whether the trial met the target (1 or 0): its mean is the
    /// difference of the chances.
    pub chance: PairedDiff,
    /// The trial's fleet availability.
    pub availability: PairedDiff,
}

/// Paired differences of `b` from `a`, costed on the same trials (the
/// standard error of a paired difference is the standard deviation of the
/// per-trial differences over the square root of the trial count, the
/// paired t-statistic's denominator: Student 1908, any statistics text).
pub fn paired(a: &Summary, b: &Summary) -> Paired {
    let n = a.trials().min(b.trials()) as usize;
    let (aa, ab) = (&a.acc.trial_availability, &b.acc.trial_availability);
    let diff_of = |x: &[f64], y: &[f64]| PairedDiff::of((0..n).map(|t| y[t] - x[t]));
    // The target in force: availability, or readiness with a ready-units
    // target.
    let met = |s: &Summary, t: usize| f64::from(u8::from(s.trial_measure()[t] >= s.target));
    Paired {
        total: diff_of(&a.acc.trial_total, &b.acc.trial_total),
        spend: diff_of(
            &a.trial_costs(crate::model::CostBasis::Spend),
            &b.trial_costs(crate::model::CostBasis::Spend),
        ),
        chance: PairedDiff::of((0..n).map(|t| met(b, t) - met(a, t))),
        availability: diff_of(aa, ab),
    }
}

/// The most policies one list may hold.
pub const MAX_POLICIES: usize = 10_000;
/// The largest stock level a list may give (as in scenario files).
pub const MAX_STOCK: u64 = 100_000;

/// A problem with a list of policies.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}: {path}{sep}{message}", sep = if path.is_empty() { "" } else { ": " })]
pub struct PoliciesError {
    pub file: String,
    /// Where in the JSON, e.g. `policies[2].rules.engine.interval`.
    pub path: String,
    pub message: String,
}

/// The cost measure of the frontier for `model` (the search table's, else
/// the default: mean spend).
pub fn measure(model: &Model) -> CostMeasure {
    model.search.as_ref().map(|s| s.cost).unwrap_or_default()
}

/// Read a list of policies: the JSON of `wearout frontier --json` (its
/// `policies`), a bare array of such entries, or an object of named
/// entries (`{"policies": {"today": {...}, "planned": {...}}}`, as the
/// scenario's `[policies.NAME]`). An entry takes either form:
///
/// - the scenario file's: one field per part type, each
///   `{"rule": ..., "interval_hours": hours, "stock": level}`
///   (`interval_fraction` of the characteristic life instead of
///   `interval_hours`, as in the scenario);
/// - the frontier JSON's: `rules` (part type -> `{"rule": ...,
///   "interval": hours or null}`) and `stock` (part type -> level).
///
/// Every part type of `model` needs a rule and a stock; `name` is
/// optional (an object's key names its entry).
///
/// # Errors
/// A [`PoliciesError`] naming the file, the entry and field, and what is
/// allowed.
pub fn parse_policies(model: &Model, file: &str, text: &str) -> Result<Vec<Policy>, PoliciesError> {
    let err = |path: String, message: String| PoliciesError {
        file: file.to_string(),
        path,
        message,
    };
    let root: Value = serde_json::from_str(text).map_err(|e| {
        err(
            String::new(),
            format!(
                "not JSON ({e}); give the output of `wearout frontier --json` or an array of its policies"
            ),
        )
    })?;
    let listed = |a: &'_ Vec<Value>| -> Vec<(String, Option<String>, Value)> {
        a.iter()
            .enumerate()
            .map(|(i, v)| (format!("policies[{i}]"), None, v.clone()))
            .collect()
    };
    let shape = "expected an object with a `policies` array (the output of `wearout frontier --json`) or object of named policies, or an array of policies";
    let list: Vec<(String, Option<String>, Value)> = match &root {
        Value::Array(a) => listed(a),
        Value::Object(o) => match o.get("policies") {
            Some(Value::Array(a)) => listed(a),
            Some(Value::Object(named)) => named
                .iter()
                .map(|(k, v)| (format!("policies.{k}"), Some(k.clone()), v.clone()))
                .collect(),
            _ => return Err(err(String::new(), shape.into())),
        },
        _ => return Err(err(String::new(), shape.into())),
    };
    if list.is_empty() {
        return Err(err(
            "policies".into(),
            "the list is empty; give at least one policy".into(),
        ));
    }
    if list.len() > MAX_POLICIES {
        return Err(err(
            "policies".into(),
            format!(
                "{} policies; at most {MAX_POLICIES} may be re-costed at once",
                list.len()
            ),
        ));
    }
    let names: Vec<&str> = model.parts.iter().map(|p| p.name.as_str()).collect();
    let mut out = Vec::with_capacity(list.len());
    for (i, (at, key_name, entry)) in list.iter().enumerate() {
        let at = at.as_str();
        let obj = entry.as_object().ok_or_else(|| {
            err(
                at.to_string(),
                "expected an object: one field per part type (`{\"rule\": ..., \"interval_hours\": ..., \"stock\": ...}`), or `rules` and `stock`".into(),
            )
        })?;
        let name = match (key_name, obj.get("name")) {
            (Some(k), _) if !k.is_empty() && k.len() <= 200 => k.clone(),
            (Some(_), _) => {
                return Err(err(
                    at.to_string(),
                    "expected a short name (1 to 200 characters)".into(),
                ));
            }
            (None, None | Some(Value::Null)) => format!("P{}", i + 1),
            (None, Some(Value::String(s))) if !s.is_empty() && s.len() <= 200 => s.clone(),
            (None, Some(_)) => {
                return Err(err(
                    format!("{at}.name"),
                    "expected a short text name (1 to 200 characters)".into(),
                ));
            }
        };
        let unknown = |path: String, k: &str| {
            let hint = crate::scenario::did_you_mean(k, names.iter().copied());
            err(
                path,
                format!(
                    "the scenario has no part type `{k}`{hint}; part types: {}",
                    names.join(", ")
                ),
            )
        };
        let level = |v: &Value, path: &str| {
            v.as_u64()
                .filter(|&s| s <= MAX_STOCK)
                .map(|s| s as u32)
                .ok_or_else(|| {
                    err(
                        path.to_string(),
                        format!("expected a whole number from 0 to {MAX_STOCK} (got {v})"),
                    )
                })
        };
        // Without sites a level; with sites an object as in the scenario
        // file: a level per site (or `every_site`) and `depot`.
        let stock_of = |v: &Value, path: String| {
            if !model.has_sites() {
                return level(v, &path).map(Stock::single);
            }
            let sites: Vec<&str> = model.sites.iter().map(|s| s.name.as_str()).collect();
            let form = format!(
                "an object with the level at each site ({}) or `every_site`{}",
                sites.join(", "),
                if model.depot.is_some() {
                    ", and `depot`"
                } else {
                    ""
                }
            );
            let Some(o) = v.as_object() else {
                return Err(err(
                    path,
                    format!("this scenario has sites: expected {form} (got {v})"),
                ));
            };
            let every = o
                .get("every_site")
                .map(|x| level(x, &format!("{path}.every_site")))
                .transpose()?;
            let mut at = Vec::with_capacity(sites.len());
            for name in &sites {
                let l = match o.get(*name) {
                    Some(x) => level(x, &format!("{path}.{name}"))?,
                    None => every.ok_or_else(|| {
                        err(
                            path.clone(),
                            format!("no level for site `{name}`; expected {form}"),
                        )
                    })?,
                };
                at.push(l);
            }
            let depot = match (o.get("depot"), model.depot.is_some()) {
                (Some(x), true) => level(x, &format!("{path}.depot"))?,
                (None, true) => {
                    return Err(err(
                        path,
                        format!("no level for the depot; expected {form}"),
                    ));
                }
                (Some(_), false) => {
                    return Err(err(
                        format!("{path}.depot"),
                        "a depot level, but the scenario has no [depot]".into(),
                    ));
                }
                (None, false) => 0,
            };
            for k in o.keys() {
                if k != "every_site" && k != "depot" && !sites.contains(&k.as_str()) {
                    return Err(err(
                        format!("{path}.{k}"),
                        format!("unknown key; expected {form}"),
                    ));
                }
            }
            Ok(Stock::at_sites(&at, depot))
        };
        let mut parts = Vec::with_capacity(model.parts.len());
        if obj.contains_key("rules") {
            // The frontier JSON's form.
            let table = |key: &str| {
                let t = obj.get(key).and_then(Value::as_object).ok_or_else(|| {
                    err(
                        format!("{at}.{key}"),
                        format!(
                            "expected an object with one entry per part type ({})",
                            names.join(", ")
                        ),
                    )
                })?;
                for k in t.keys() {
                    if !names.contains(&k.as_str()) {
                        return Err(unknown(format!("{at}.{key}.{k}"), k));
                    }
                }
                Ok(t)
            };
            let rules = table("rules")?;
            let stock = table("stock")?;
            for pt in &model.parts {
                let p = &pt.name;
                let r = rules.get(p).ok_or_else(|| {
                    err(
                        format!("{at}.rules"),
                        format!("part type `{p}` has no rule; every part type needs one"),
                    )
                })?;
                let rule = read_rule(r, pt.life.characteristic_life())
                    .map_err(|(field, m)| err(format!("{at}.rules.{p}{field}"), m))?;
                let s = stock.get(p).ok_or_else(|| {
                    err(
                        format!("{at}.stock"),
                        format!("part type `{p}` has no stock level; every part type needs one"),
                    )
                })?;
                parts.push(PartPolicy {
                    rule,
                    stock: stock_of(s, format!("{at}.stock.{p}"))?,
                });
            }
        } else {
            // The scenario file's form.
            for k in obj.keys() {
                if k != "name" && !names.contains(&k.as_str()) {
                    return Err(unknown(format!("{at}.{k}"), k));
                }
            }
            for pt in &model.parts {
                let p = &pt.name;
                let v = obj.get(p).ok_or_else(|| {
                    err(
                        at.to_string(),
                        format!(
                            "part type `{p}` has no entry; every part type needs one, e.g. \"{p}\": {{\"rule\": \"age\", \"interval_hours\": 8000, \"stock\": 1}} (or give `rules` and `stock` as `wearout frontier --json` writes them)"
                        ),
                    )
                })?;
                let rule = read_rule(v, pt.life.characteristic_life())
                    .map_err(|(field, m)| err(format!("{at}.{p}{field}"), m))?;
                let s = v.get("stock").ok_or_else(|| {
                    err(
                        format!("{at}.{p}.stock"),
                        "missing; give the base-stock level, a whole number".into(),
                    )
                })?;
                if let Some(o) = v.as_object() {
                    for k in o.keys() {
                        if ![
                            "rule",
                            "interval",
                            "interval_hours",
                            "interval_fraction",
                            "stock",
                        ]
                        .contains(&k.as_str())
                        {
                            return Err(err(
                                format!("{at}.{p}.{k}"),
                                "unknown field; allowed: rule, interval_hours, interval_fraction, stock".into(),
                            ));
                        }
                    }
                }
                parts.push(PartPolicy {
                    rule,
                    stock: stock_of(s, format!("{at}.{p}.stock"))?,
                });
            }
        }
        let policy = Policy { name, parts };
        if let Some(m) = model.safety_violation(&policy) {
            return Err(err(at.to_string(), m));
        }
        out.push(policy);
    }
    Ok(out)
}

/// One part type's rule: `{"rule": "age", "interval": 11200}` (the
/// frontier JSON's), or with `interval_hours`, or `interval_fraction` of
/// the part type's characteristic life `char_life` (the scenario's).
fn read_rule(v: &Value, char_life: f64) -> Result<Rule, (String, String)> {
    let o = v.as_object().ok_or_else(|| {
        (
            String::new(),
            "expected {\"rule\": \"run_to_failure\" | \"age\" | \"block\", \"interval_hours\": hours or null}".to_string(),
        )
    })?;
    let kind = o.get("rule").and_then(Value::as_str).ok_or_else(|| {
        (
            ".rule".to_string(),
            "expected one of \"run_to_failure\", \"age\", \"block\"".to_string(),
        )
    })?;
    let mut interval = None;
    for (key, scale) in [
        ("interval", 1.0),
        ("interval_hours", 1.0),
        ("interval_fraction", char_life),
    ] {
        match o.get(key) {
            None | Some(Value::Null) => {}
            Some(x) => match x.as_f64().map(|t| t * scale) {
                Some(t) if t.is_finite() && t > 0.0 => {
                    if interval.is_some() {
                        return Err((
                            format!(".{key}"),
                            "give only one of `interval_hours`, `interval_fraction` (or `interval`)".to_string(),
                        ));
                    }
                    interval = Some(t);
                }
                _ => {
                    let what = if key == "interval_fraction" {
                        "fraction of the characteristic life"
                    } else {
                        "number of hours"
                    };
                    return Err((
                        format!(".{key}"),
                        format!("expected a positive {what} (got {x})"),
                    ));
                }
            },
        }
    }
    match (kind, interval) {
        ("run_to_failure", None) => Ok(Rule::RunToFailure),
        ("run_to_failure", Some(_)) => Err((
            ".interval_hours".to_string(),
            "run_to_failure takes no interval; give null or leave it out".to_string(),
        )),
        ("age" | "block", None) => Err((
            ".interval_hours".to_string(),
            format!("rule `{kind}` needs an interval in hours (`interval_hours`)"),
        )),
        ("age", Some(t)) => Ok(Rule::Age(t)),
        ("block", Some(t)) => Ok(Rule::Block(t)),
        (other, _) => Err((
            ".rule".to_string(),
            format!("unknown rule `{other}`; expected run_to_failure, age or block"),
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn b0() -> Model {
        crate::scenario::parse("b0.toml", include_str!("../scenarios/b0.toml")).unwrap()
    }

    #[test]
    fn reads_a_frontier_json_and_names_mistakes() {
        let m = b0();
        let names: Vec<String> = m.parts.iter().map(|p| p.name.clone()).collect();
        let rules: Vec<String> = names
            .iter()
            .map(|n| format!("\"{n}\": {{\"rule\": \"age\", \"interval\": 5000}}"))
            .collect();
        let stock: Vec<String> = names.iter().map(|n| format!("\"{n}\": 1")).collect();
        let good = format!(
            "{{\"policies\": [{{\"name\": \"F1\", \"rules\": {{{}}}, \"stock\": {{{}}}}}]}}",
            rules.join(","),
            stock.join(",")
        );
        let ps = parse_policies(&m, "f.json", &good).unwrap();
        assert_eq!(ps.len(), 1);
        assert_eq!(ps[0].name, "F1");
        assert!(
            ps[0]
                .parts
                .iter()
                .all(|p| p.rule == Rule::Age(5000.0) && p.stock == Stock::single(1))
        );
        let bad_interval = good.replacen("5000", "-3", 1);
        let e = parse_policies(&m, "f.json", &bad_interval).unwrap_err();
        assert!(e.to_string().contains("policies[0].rules."), "{e}");
        assert!(e.to_string().contains("positive number of hours"), "{e}");
        let bad_stock = good.replacen(": 1", ": 1.5", 1);
        let e = parse_policies(&m, "f.json", &bad_stock).unwrap_err();
        assert!(e.to_string().contains("whole number"), "{e}");
        let e = parse_policies(&m, "f.json", "[1, 2").unwrap_err();
        assert!(e.to_string().starts_with("f.json: not JSON"), "{e}");
        let e = parse_policies(&m, "f.json", "{\"policies\": []}").unwrap_err();
        assert!(e.to_string().contains("empty"), "{e}");
    }

    /// The scenario file's field names read the same policies as the
    /// scenario itself; an object of named entries takes its keys as names.
    #[test]
    fn reads_the_scenario_field_names() {
        let m = b0();
        let want = &m.policies[0];
        let entry: Vec<String> = m
            .parts
            .iter()
            .zip(&want.parts)
            .map(|(pt, pp)| {
                let interval = pp
                    .rule
                    .interval()
                    .map_or(String::new(), |t| format!(", \"interval_hours\": {t}"));
                format!(
                    "\"{}\": {{\"rule\": \"{}\"{interval}, \"stock\": {}}}",
                    pt.name,
                    pp.rule.kind(),
                    pp.stock
                )
            })
            .collect();
        let text = format!("{{\"policies\": {{\"today\": {{{}}}}}}}", entry.join(", "));
        let ps = parse_policies(&m, "p.json", &text).unwrap();
        assert_eq!(ps.len(), 1);
        assert_eq!(ps[0].name, "today");
        assert_eq!(ps[0].parts, want.parts);
        // The same entry in an array, named by its field.
        let text = format!("[{{\"name\": \"x\", {}}}]", entry.join(", "));
        let ps = parse_policies(&m, "p.json", &text).unwrap();
        assert_eq!((ps[0].name.as_str(), &ps[0].parts), ("x", &want.parts));
        // A fraction of the characteristic life, as in scenario files.
        let p0 = &m.parts[0];
        let rest: Vec<String> = entry[1..].to_vec();
        let text = format!(
            "[{{\"{}\": {{\"rule\": \"age\", \"interval_fraction\": 0.5, \"stock\": 2}}, {}}}]",
            p0.name,
            rest.join(", ")
        );
        let ps = parse_policies(&m, "p.json", &text).unwrap();
        assert_eq!(
            ps[0].parts[0].rule,
            Rule::Age(0.5 * p0.life.characteristic_life())
        );
        // Mistakes name the entry and the field.
        let typo = text.replacen(&format!("\"{}\"", p0.name), "\"enginee\"", 1);
        let e = parse_policies(&m, "p.json", &typo).unwrap_err();
        assert!(e.to_string().contains("policies[0].enginee"), "{e}");
        let both = text.replacen(
            "\"interval_fraction\": 0.5",
            "\"interval_fraction\": 0.5, \"interval_hours\": 10",
            1,
        );
        let e = parse_policies(&m, "p.json", &both).unwrap_err();
        assert!(e.to_string().contains("only one of"), "{e}");
        let extra = text.replacen("\"stock\": 2", "\"stock\": 2, \"stok\": 1", 1);
        let e = parse_policies(&m, "p.json", &extra).unwrap_err();
        assert!(e.to_string().contains("unknown field"), "{e}");
    }
}
