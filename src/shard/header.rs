//! What a shard says about the run it is a share of: the header line of
//! its file, and the scenario's content hash.

use std::ops::Range;

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use super::codec::Codec;
use super::{FORMAT_VERSION, MAGIC, ShardError, ShardSpec, TOOL_VERSION};
use crate::model::{Model, PartPolicy, Policy, Rule, Stock};
use crate::scenario::Source;

/// What kind of run a shard is a share of.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RunKind {
    /// `wearout evaluate`: one named policy.
    Evaluate,
    /// `wearout frontier --policies`: a fixed list of policies re-costed on
    /// the validation trials.
    FrontierValidation,
}

impl RunKind {
    pub(super) fn describe(self) -> &'static str {
        match self {
            RunKind::Evaluate => "an evaluate run",
            RunKind::FrontierValidation => "a frontier validation run",
        }
    }
}

/// One part type's rule and stock in a shard header.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PartRecord {
    pub part: String,
    pub rule: String,
    /// The interval in hours, for reading; `interval_bits` is exact.
    pub interval: Option<f64>,
    pub interval_bits: Option<String>,
    /// The total stock (the one level without sites).
    pub stock: u32,
    /// With sites: the level at each site, in site order.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stock_sites: Option<Vec<u32>>,
    /// With sites: the level at the depot.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stock_depot: Option<u32>,
}

/// A policy in a shard header.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PolicyRecord {
    pub name: String,
    pub parts: Vec<PartRecord>,
}

impl PolicyRecord {
    /// The record of `policy` on `model`.
    pub fn new(model: &Model, policy: &Policy) -> Self {
        PolicyRecord {
            name: policy.name.clone(),
            parts: policy
                .parts
                .iter()
                .zip(&model.parts)
                .map(|(pp, pt)| PartRecord {
                    part: pt.name.clone(),
                    rule: pp.rule.kind().to_string(),
                    interval: pp.rule.interval(),
                    interval_bits: pp.rule.interval().map(bits),
                    stock: pp.stock.total(),
                    stock_sites: (!pp.stock.is_single() || model.has_sites())
                        .then(|| pp.stock.site_levels().collect()),
                    stock_depot: (!pp.stock.is_single() || model.has_sites())
                        .then(|| pp.stock.depot()),
                })
                .collect(),
        }
    }

    /// The policy back, for `model` (part types matched by name and order).
    ///
    /// # Errors
    /// A message when the record does not fit the model.
    pub fn policy(&self, model: &Model) -> Result<Policy, String> {
        if self.parts.len() != model.parts.len() {
            return Err(format!(
                "policy `{}` has {} part types, the scenario {}",
                self.name,
                self.parts.len(),
                model.parts.len()
            ));
        }
        let mut parts = Vec::with_capacity(self.parts.len());
        for (r, pt) in self.parts.iter().zip(&model.parts) {
            if r.part != pt.name {
                return Err(format!(
                    "policy `{}` names part type `{}` where the scenario has `{}`",
                    self.name, r.part, pt.name
                ));
            }
            let interval = match &r.interval_bits {
                Some(b) => Some(unbits(b).ok_or_else(|| format!("bad interval bits `{b}`"))?),
                None => None,
            };
            let rule = match (r.rule.as_str(), interval) {
                ("run_to_failure", None) => Rule::RunToFailure,
                ("age", Some(t)) if t > 0.0 => Rule::Age(t),
                ("block", Some(t)) if t > 0.0 => Rule::Block(t),
                _ => {
                    return Err(format!(
                        "policy `{}`: `{}` with interval {:?} is not a rule",
                        self.name, r.rule, interval
                    ));
                }
            };
            let stock = match (&r.stock_sites, r.stock_depot) {
                (None, None) => Stock::single(r.stock),
                (Some(s), Some(d)) if !s.is_empty() => Stock::at_sites(s, d),
                _ => {
                    return Err(format!(
                        "policy `{}`: part type `{}` has an incomplete stock per site",
                        self.name, r.part
                    ));
                }
            };
            if stock.sites() != model.sites.len() || stock.total() != r.stock {
                return Err(format!(
                    "policy `{}`: the stock of part type `{}` does not fit the scenario's {} sites",
                    self.name,
                    r.part,
                    model.sites.len()
                ));
            }
            parts.push(PartPolicy { rule, stock });
        }
        Ok(Policy {
            name: self.name.clone(),
            parts,
        })
    }
}

/// The constants a record decoder rebuilds figures with, as exact bits.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CodecRecord {
    /// Units times horizon (the availability's denominator).
    pub unit_hours: String,
    /// Downtime penalty per unit-hour.
    pub penalty: String,
    /// Per part type: price, planned labour, unplanned labour.
    pub parts: Vec<[String; 3]>,
    /// Per part type: holding cost per spare-hour.
    pub holding: Vec<String>,
    /// Years of the money books per record (0: the scenario has no
    /// `[money]`, and records carry none).
    #[serde(default)]
    pub years: u64,
}

/// Everything a shard says about the run it is a share of.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ShardHeader {
    pub format: String,
    pub format_version: u32,
    pub tool_version: String,
    pub kind: RunKind,
    /// The scenario's name.
    pub scenario: String,
    /// SHA-256 of the validated model (seed aside): see [`scenario_hash`].
    pub scenario_hash: String,
    pub scenario_file: Option<String>,
    pub scenario_dir: Option<String>,
    pub scenario_text: String,
    pub seed: u64,
    /// The availability target, for reading; `target_bits` is exact.
    pub target: f64,
    pub target_bits: String,
    pub parameter_uncertainty: bool,
    pub policies: Vec<PolicyRecord>,
    /// The whole run's trials: `run_first .. run_first + run_trials`.
    pub run_first: u64,
    pub run_trials: u64,
    pub shard_index: u64,
    pub shard_count: u64,
    /// This shard's trials: `first .. end`.
    pub first: u64,
    pub end: u64,
    pub codec: CodecRecord,
}

impl ShardHeader {
    /// The header of shard `spec` of a run of `policies` on trials `run`.
    pub fn new(
        model: &Model,
        source: &Source,
        kind: RunKind,
        policies: &[Policy],
        run: Range<u64>,
        spec: ShardSpec,
        target: f64,
    ) -> Self {
        let r = spec.range(&run);
        ShardHeader {
            format: MAGIC.to_string(),
            format_version: FORMAT_VERSION,
            tool_version: TOOL_VERSION.to_string(),
            kind,
            scenario: model.name.clone(),
            scenario_hash: scenario_hash(model),
            scenario_file: source.file.clone(),
            scenario_dir: source.dir.clone(),
            scenario_text: source.text.clone(),
            seed: model.seed,
            target,
            target_bits: bits(target),
            parameter_uncertainty: model.parameter_uncertainty,
            policies: policies
                .iter()
                .map(|p| PolicyRecord::new(model, p))
                .collect(),
            run_first: run.start,
            run_trials: run.end - run.start,
            shard_index: spec.index,
            shard_count: spec.count,
            first: r.start,
            end: r.end,
            codec: Codec::new(model).record(),
        }
    }

    /// The scenario as the shard embeds it.
    pub fn source(&self) -> Source {
        Source {
            file: self.scenario_file.clone(),
            dir: self.scenario_dir.clone(),
            text: self.scenario_text.clone(),
        }
    }

    /// The run's whole trial range.
    pub fn run(&self) -> Range<u64> {
        self.run_first..self.run_first.saturating_add(self.run_trials)
    }

    /// This shard's trial range.
    pub fn range(&self) -> Range<u64> {
        self.first..self.end
    }

    /// The exact target.
    pub fn target(&self) -> f64 {
        unbits(&self.target_bits).unwrap_or(self.target)
    }

    /// Records this shard holds.
    pub fn records(&self) -> u128 {
        u128::from(self.end.saturating_sub(self.first)) * self.policies.len() as u128
    }

    pub(super) fn check(&self, file: &str) -> Result<(), ShardError> {
        let bad = |why: &str| ShardError::Damaged {
            file: file.to_string(),
            why: why.to_string(),
        };
        if self.format != MAGIC {
            return Err(bad("its header does not name the shard format"));
        }
        if self.format_version != FORMAT_VERSION {
            return Err(ShardError::Format {
                file: file.to_string(),
                found: self.format_version.to_string(),
            });
        }
        let run = self.run();
        if self.run_first.checked_add(self.run_trials).is_none()
            || self.first > self.end
            || self.first < run.start
            || self.end > run.end
            || self.shard_count == 0
            || self.shard_index >= self.shard_count
        {
            return Err(bad("its header's trial ranges do not fit together"));
        }
        if self.policies.is_empty() {
            return Err(bad("its header names no policy"));
        }
        if unbits(&self.target_bits).is_none() {
            return Err(bad("its header's target is unreadable"));
        }
        let n = self.codec.parts.len();
        if self.policies.iter().any(|p| p.parts.len() != n) {
            return Err(bad("its header's policies do not match its part types"));
        }
        Codec::from_record(&self.codec)
            .ok_or_else(|| bad("its header's constants are unreadable"))?;
        Ok(())
    }

    pub(super) fn describe_range(&self) -> String {
        trials(&self.range())
    }
}

/// SHA-256 (hex) of the validated model with its seed and its
/// parameter-uncertainty switch set aside (both are compared on their own,
/// for clearer messages). Two scenario files that
/// give the same model (comments, order of tables) have the same hash; a
/// change of any figure, including a records file a life is fitted to,
/// changes it.
pub fn scenario_hash(model: &Model) -> String {
    let mut m = model.clone();
    m.seed = 0;
    m.parameter_uncertainty = false;
    hex(&Sha256::digest(format!("{m:?}").as_bytes()))
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

pub(super) fn bits(x: f64) -> String {
    format!("{:016x}", x.to_bits())
}

pub(super) fn unbits(s: &str) -> Option<f64> {
    if s.len() != 16 {
        return None;
    }
    u64::from_str_radix(s, 16).ok().map(f64::from_bits)
}

pub(super) fn trials(r: &Range<u64>) -> String {
    if r.end <= r.start {
        "(none)".to_string()
    } else {
        format!("{}..{} ({} trials)", r.start, r.end, r.end - r.start)
    }
}
