//! Re-costing a fixed list of policies: the frontier's validation phase for
//! policies a user names (e.g. the `policies` of a previous
//! `wearout frontier --json`), on one process or spread over shards.
//!
//! Owns: reading such a list (JSON, checked against the scenario with
//! messages naming the file and the entry), the validation trial range, and
//! turning the re-costed summaries into a [`FrontierResult`] the same way
//! the search's last step does (non-dominated, cheapest first, paired noise
//! flags between neighbours).
//! May use: `model`, `frontier` (its public frontier filter and noise flags),
//! `summary`, `serde_json` (as a value tree; no derives). No I/O: the caller
//! reads the file.

use std::ops::Range;

use serde_json::Value;

use crate::frontier::{Costed, FrontierResult, SearchStats, VALIDATION_OFFSET, frontier_points};
use crate::model::{CostMeasure, Model, PartPolicy, Policy, Rule, Stock};
use crate::summary::Summary;

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

/// The validation trials of a frontier run with `validate_trials` trials.
pub fn validation_range(validate_trials: u64) -> Range<u64> {
    VALIDATION_OFFSET..VALIDATION_OFFSET.saturating_add(validate_trials)
}

/// The cost measure of the frontier for `model` (the search table's, else
/// the default: mean spend).
pub fn measure(model: &Model) -> CostMeasure {
    model.search.as_ref().map(|s| s.cost).unwrap_or_default()
}

/// Read a list of policies: the JSON of `wearout frontier --json` (its
/// `policies`), or a bare array of such entries. Each entry needs `rules`
/// (part type -> `{"rule": ..., "interval": hours or null}`) and `stock`
/// (part type -> level) for every part type of `model`; `name` is optional.
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
    let list = match &root {
        Value::Array(a) => a,
        Value::Object(o) => match o.get("policies") {
            Some(Value::Array(a)) => a,
            _ => {
                return Err(err(
                    String::new(),
                    "expected an object with a `policies` array (the output of `wearout frontier --json`), or an array of policies".into(),
                ));
            }
        },
        _ => {
            return Err(err(
                String::new(),
                "expected an object with a `policies` array, or an array of policies".into(),
            ));
        }
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
    for (i, entry) in list.iter().enumerate() {
        let at = format!("policies[{i}]");
        let obj = entry.as_object().ok_or_else(|| {
            err(
                at.clone(),
                "expected an object with `rules` and `stock`".into(),
            )
        })?;
        let name = match obj.get("name") {
            None | Some(Value::Null) => format!("P{}", i + 1),
            Some(Value::String(s)) if !s.is_empty() && s.len() <= 200 => s.clone(),
            Some(_) => {
                return Err(err(
                    format!("{at}.name"),
                    "expected a short text name (1 to 200 characters)".into(),
                ));
            }
        };
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
                    let hint = crate::scenario::suggest(k, names.iter().copied())
                        .map(|c| format!(" (did you mean `{c}`?)"))
                        .unwrap_or_default();
                    return Err(err(
                        format!("{at}.{key}.{k}"),
                        format!(
                            "the scenario has no part type `{k}`{hint}; part types: {}",
                            names.join(", ")
                        ),
                    ));
                }
            }
            Ok(t)
        };
        let rules = table("rules")?;
        let stock = table("stock")?;
        let mut parts = Vec::with_capacity(model.parts.len());
        for pt in &model.parts {
            let p = &pt.name;
            let r = rules.get(p).ok_or_else(|| {
                err(
                    format!("{at}.rules"),
                    format!("part type `{p}` has no rule; every part type needs one"),
                )
            })?;
            let rule =
                read_rule(r).map_err(|(field, m)| err(format!("{at}.rules.{p}{field}"), m))?;
            let s = stock.get(p).ok_or_else(|| {
                err(
                    format!("{at}.stock"),
                    format!("part type `{p}` has no stock level; every part type needs one"),
                )
            })?;
            let s = s.as_u64().filter(|&s| s <= MAX_STOCK).ok_or_else(|| {
                err(
                    format!("{at}.stock.{p}"),
                    format!("expected a whole number from 0 to {MAX_STOCK} (got {s})"),
                )
            })?;
            parts.push(PartPolicy {
                rule,
                stock: Stock::single(s as u32),
            });
        }
        let policy = Policy { name, parts };
        if let Some(m) = model.safety_violation(&policy) {
            return Err(err(at, m));
        }
        out.push(policy);
    }
    Ok(out)
}

/// One part type's rule: `{"rule": "age", "interval": 11200}`.
fn read_rule(v: &Value) -> Result<Rule, (String, String)> {
    let o = v.as_object().ok_or_else(|| {
        (
            String::new(),
            "expected {\"rule\": \"run_to_failure\" | \"age\" | \"block\", \"interval\": hours or null}".to_string(),
        )
    })?;
    let kind = o.get("rule").and_then(Value::as_str).ok_or_else(|| {
        (
            ".rule".to_string(),
            "expected one of \"run_to_failure\", \"age\", \"block\"".to_string(),
        )
    })?;
    let interval = match o.get("interval") {
        None | Some(Value::Null) => None,
        Some(x) => match x.as_f64() {
            Some(t) if t.is_finite() && t > 0.0 => Some(t),
            _ => {
                return Err((
                    ".interval".to_string(),
                    format!("expected a positive number of hours (got {x})"),
                ));
            }
        },
    };
    match (kind, interval) {
        ("run_to_failure", None) => Ok(Rule::RunToFailure),
        ("run_to_failure", Some(_)) => Err((
            ".interval".to_string(),
            "run_to_failure takes no interval; give null or leave it out".to_string(),
        )),
        ("age" | "block", None) => Err((
            ".interval".to_string(),
            format!("rule `{kind}` needs an interval in hours"),
        )),
        ("age", Some(t)) => Ok(Rule::Age(t)),
        ("block", Some(t)) => Ok(Rule::Block(t)),
        (other, _) => Err((
            ".rule".to_string(),
            format!("unknown rule `{other}`; expected run_to_failure, age or block"),
        )),
    }
}

/// The frontier of re-costed policies, as the search's last step builds it:
/// cost measure and chance of each summary, the non-dominated ones kept
/// cheapest first, each with its paired noise flags against the row above.
/// Names are kept as given. `seconds` is the time the re-costing took.
pub fn frontier_of(
    model: &Model,
    summaries: Vec<Summary>,
    validate_trials: u64,
    target: f64,
    seconds: f64,
) -> FrontierResult {
    let measure = measure(model);
    let recosted: Vec<Costed> = summaries
        .into_iter()
        .map(|s| Costed {
            policy: s.policy.clone(),
            cost: s.cost_measure(measure),
            chance: s.chance(),
            summary: s,
        })
        .collect();
    let points = frontier_points(&recosted, measure, false);
    let stats = SearchStats {
        recosted: recosted.len(),
        seconds_validation: seconds,
        ..SearchStats::default()
    };
    FrontierResult {
        points,
        searched: Vec::new(),
        space_size: model.search.as_ref().map_or(0, |s| s.size()),
        search_trials: 0,
        validate_trials,
        cost: measure,
        target,
        stats,
        search_frontier: Vec::new(),
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
}
