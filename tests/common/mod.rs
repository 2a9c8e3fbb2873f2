//! Shared helpers for the integration tests: build a model from scenario
//! text, run trials, and compare figures within their standard errors.
#![allow(dead_code)]

use wearout::model::Model;
use wearout::run::{Quiet, evaluate};
use wearout::summary::Summary;

/// Parse scenario text, panicking with the error (tests only).
pub fn model(text: &str) -> Model {
    match wearout::scenario::parse("test.toml", text) {
        Ok(m) => m,
        Err(e) => panic!("test scenario invalid: {e}"),
    }
}

/// Evaluate the named policy on trials `0..n`.
pub fn run(model: &Model, policy: &str, n: u64) -> Summary {
    let p = model
        .policy(policy)
        .expect("policy in test scenario")
        .clone();
    evaluate(model, &p, 0..n, model.target, &Quiet).expect("not cancelled")
}

/// Assert `|x - expected| <= k * se`, with a readable message.
pub fn within(what: &str, x: f64, expected: f64, se: f64, k: f64) {
    let gap = (x - expected).abs();
    assert!(
        gap <= k * se,
        "{what}: got {x}, expected {expected}; gap {gap} is more than {k} x se {se}"
    );
}

/// A one-part scenario: `positions` positions of one part type on `units`
/// units. Fields are the scenario's, in its units (hours, money).
pub struct OnePart<'a> {
    pub life: &'a str,
    pub units: usize,
    pub positions: usize,
    pub horizon: f64,
    pub price: f64,
    pub labour_planned: f64,
    pub labour_unplanned: f64,
    pub duration_planned: f64,
    pub duration_unplanned: f64,
    pub lead: &'a str,
    pub policy: &'a str,
}

impl OnePart<'_> {
    /// The scenario text, with the policy named `x`.
    pub fn text(&self) -> String {
        let pos = vec!["\"p\""; self.positions].join(", ");
        format!(
            r#"
[scenario]
name = "t"
horizon_hours = {horizon}
downtime_penalty_per_hour = 0
target_availability = 0.9
seed = 99

[parts.p]
life = {life}
price = {price}
labour = {{ planned = {lp}, unplanned = {lu} }}
duration_hours = {{ planned = {dp}, unplanned = {du} }}
lead_time = {lead}
holding = {{ per_spare_hour = 0 }}

[units.u]
positions = [{pos}]

[[fleet]]
unit = "u"
count = {units}

[policies.x]
p = {policy}
"#,
            horizon = self.horizon,
            life = self.life,
            price = self.price,
            lp = self.labour_planned,
            lu = self.labour_unplanned,
            dp = self.duration_planned,
            du = self.duration_unplanned,
            lead = self.lead,
            units = self.units,
            policy = self.policy,
        )
    }
}
