//! Shard files: one process's share of a run's trial indices, and merging
//! shards back into exactly the run one process would have made.
//!
//! Owns: the shard file format (a header line, compact per-trial outcomes
//! in trial order, a checked trailer), how a run's trial range is split into
//! `K/N` shares, the checks that shards belong to one run, and reading the
//! outcomes back in trial order so that they fold through the same
//! [`Accumulator`](crate::summary::Accumulator) as a single run.
//! May use: `model`, `outcome`, `sim`, `run`, `scenario` (to rebuild the
//! model a shard names), `serde`/`serde_json` (the header line), `sha2`.
//! Reads and writes only the streams it is handed; opens no file itself.
//!
//! # Format (version 1)
//!
//! ```text
//! wearout-shard 1\n                       magic line
//! {"format":"wearout-shard",...}\n        header: one line of JSON (ShardHeader)
//! records                                 trial-major: for each trial of first..end,
//!                                         for each policy, one encoded TrialOutcome
//! "WOSHEND1" u64 records  f64 seconds     trailer, little-endian
//! [32 bytes]                              SHA-256 of every byte before it
//! ```
//!
//! A record is lossless: decoding gives back the very `TrialOutcome` the
//! simulator returned (every field, bit for bit). Counts are LEB128 varints;
//! hours and money are raw IEEE-754 doubles, except that zeros take no
//! bytes, and figures the simulator builds by repeated addition of one
//! constant (parts bought, labour) or by one product or quotient (downtime
//! penalty, availability) are rebuilt by the same arithmetic from their
//! counts. Each rebuilt figure is checked against the real one when
//! written; where they differ (never seen, but cheap to guard) the raw value
//! is stored and a flag says so.

use std::fmt;
use std::io::{BufRead, BufReader, Read, Seek, SeekFrom, Write};
use std::ops::Range;
use std::time::Instant;

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use crate::model::{Model, PartPolicy, Policy, Rule};
use crate::outcome::{PartOutcome, TrialOutcome};
use crate::run::{BLOCK, Progress, for_each_trial};
use crate::scenario::{Loaded, Source};
use crate::sim::Simulator;

/// The first word of every shard file.
pub const MAGIC: &str = "wearout-shard";
/// The shard format this code writes and reads.
pub const FORMAT_VERSION: u32 = 1;
/// The version of wearout that writes shards (the crate version).
pub const TOOL_VERSION: &str = env!("CARGO_PKG_VERSION");
const TRAILER_MAGIC: &[u8; 8] = b"WOSHEND1";
/// Trailer bytes: magic, record count, seconds, SHA-256.
pub const TRAILER_LEN: u64 = 8 + 8 + 8 + 32;
/// The longest header line read (the embedded scenario text is in it).
const MAX_HEADER: u64 = 256 << 20;

/// Why a shard could not be written, read or split.
#[derive(Debug, thiserror::Error)]
pub enum ShardError {
    #[error("--shard {given}: {why}")]
    BadSpec { given: String, why: String },
    #[error("{file}: not a wearout shard file ({why})")]
    NotAShard { file: String, why: String },
    #[error(
        "{file}: shard format version {found}, but this wearout reads version {FORMAT_VERSION}; merge it with the wearout that wrote it"
    )]
    Format { file: String, found: String },
    #[error("{file}: the shard file is damaged ({why}); write this shard again")]
    Damaged { file: String, why: String },
    #[error("cannot read {file}: {why}")]
    Read { file: String, why: String },
    #[error("cannot write the shard file: {0}")]
    Write(String),
    #[error("interrupted")]
    Interrupted,
}

/// Why shards could not be merged.
#[derive(Debug, thiserror::Error)]
pub enum MergeError {
    #[error(
        "no shard files given; name the shard files to merge, e.g. `wearout merge run-*.shard`"
    )]
    NoShards,
    #[error(transparent)]
    Shard(#[from] ShardError),
    #[error(
        "shards of different wearout versions: {a_file} was written by wearout {a}, {b_file} by wearout {b}; write every shard of a run with one version"
    )]
    Versions {
        a_file: String,
        a: String,
        b_file: String,
        b: String,
    },
    #[error(
        "{file} was written by wearout {found}, and this is wearout {this}; merge shards with the version that wrote them, so the figures are those a single run of that version gives"
    )]
    ThisVersion {
        file: String,
        found: String,
        this: String,
    },
    #[error(
        "shards of different scenarios: {a}, {b}; a scenario file that changed between shards counts as another scenario; merge only the shards of one run"
    )]
    Scenarios {
        /// `FILE is of scenario `NAME` (content HASH)`.
        a: String,
        b: String,
    },
    #[error(
        "shards of different {what}: {a_file} has {a}, {b_file} has {b}; merge only the shards of one run"
    )]
    Differs {
        what: &'static str,
        a_file: String,
        a: String,
        b_file: String,
        b: String,
    },
    #[error(
        "shards overlap: {a_file} holds trials {a_range} and {b_file} trials {b_range}{}; every trial must come from exactly one shard; leave one of them out", if *same { " (the same share given twice?)" } else { "" }
    )]
    Overlap {
        a_file: String,
        a_range: String,
        b_file: String,
        b_range: String,
        same: bool,
    },
    #[error(
        "shards missing: no shard given holds trials {missing} of the run's trials {run}; write the missing {shards} and merge all the shards again"
    )]
    Missing {
        missing: String,
        run: String,
        shards: String,
    },
    #[error(
        "{file}: its embedded scenario `{name}` no longer gives content {hashes} when read again{hint}"
    )]
    Rebuilt {
        file: String,
        name: String,
        /// `X (got Y)`.
        hashes: String,
        hint: String,
    },
    #[error("{file}: its embedded scenario cannot be read again: {why}")]
    Scenario { file: String, why: String },
    #[error("{file}: {why}")]
    Policies { file: String, why: String },
}

/// One share of a run: shard `index` of `count` (counting from 0).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ShardSpec {
    pub index: u64,
    pub count: u64,
}

impl ShardSpec {
    /// The whole run as one shard.
    pub const WHOLE: ShardSpec = ShardSpec { index: 0, count: 1 };

    /// Parse `K/N` (shard K of N, K from 0 to N - 1).
    ///
    /// # Errors
    /// When the text is not two whole numbers with `K < N`.
    pub fn parse(s: &str) -> Result<Self, ShardError> {
        let bad = |why: String| ShardError::BadSpec {
            given: s.to_string(),
            why,
        };
        let (k, n) = s
            .trim()
            .split_once('/')
            .ok_or_else(|| bad("expected K/N, e.g. 3/16: shard K (counting from 0) of N".into()))?;
        let k: u64 = k.trim().parse().map_err(|_| {
            bad(format!(
                "K must be a whole number from 0 to N - 1 (got `{}`)",
                k.trim()
            ))
        })?;
        let n: u64 = n.trim().parse().map_err(|_| {
            bad(format!(
                "N must be a whole number of 1 or more (got `{}`)",
                n.trim()
            ))
        })?;
        if n == 0 {
            return Err(bad("N must be at least 1".into()));
        }
        if k >= n {
            return Err(bad(format!(
                "K counts from 0, so it must be below N: the shards of {n} are 0/{n} to {}/{n} (a scheduler index that starts at 1 needs 1 taken off)",
                n - 1
            )));
        }
        Ok(ShardSpec { index: k, count: n })
    }

    /// This shard's trial indices of the run `run`: contiguous, in order, the
    /// shares of all `count` shards tiling `run` exactly.
    pub fn range(&self, run: &Range<u64>) -> Range<u64> {
        let len = u128::from(run.end.saturating_sub(run.start));
        let at = |k: u64| run.start + (len * u128::from(k) / u128::from(self.count)) as u64;
        at(self.index)..at(self.index + 1)
    }
}

impl fmt::Display for ShardSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

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
    fn describe(self) -> &'static str {
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
    pub stock: u32,
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
                    stock: pp.stock,
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
            parts.push(PartPolicy {
                rule,
                stock: r.stock,
            });
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

    fn check(&self, file: &str) -> Result<(), ShardError> {
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

    fn describe_range(&self) -> String {
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

fn bits(x: f64) -> String {
    format!("{:016x}", x.to_bits())
}

fn unbits(s: &str) -> Option<f64> {
    if s.len() != 16 {
        return None;
    }
    u64::from_str_radix(s, 16).ok().map(f64::from_bits)
}

fn trials(r: &Range<u64>) -> String {
    if r.end <= r.start {
        "(none)".to_string()
    } else {
        format!("{}..{} ({} trials)", r.start, r.end, r.end - r.start)
    }
}

// ---------------------------------------------------------------- records

/// Encodes and decodes per-trial outcomes of one model.
#[derive(Debug, Clone, PartialEq)]
pub struct Codec {
    unit_hours: f64,
    penalty: f64,
    /// Per part type: price, planned labour, unplanned labour.
    parts: Vec<[f64; 3]>,
}

const T_AVAIL_RAW: u8 = 1;
const T_UP_ZERO: u8 = 2;
const T_WAIT_ZERO: u8 = 4;
const T_UNPL_ZERO: u8 = 8;
const T_PLAN_ZERO: u8 = 16;

const P_DOWN_ZERO: u8 = 1;
const P_HOLD_ZERO: u8 = 2;
const P_COST_RAW: u8 = 4;
const P_LP_RAW: u8 = 8;
const P_LU_RAW: u8 = 16;
const P_DT_RAW: u8 = 32;

/// `c` added to 0 `n` times, as the simulator adds it once per event.
fn repeated_sum(c: f64, n: u64) -> f64 {
    if n == 0 || c == 0.0 {
        return 0.0;
    }
    // A whole number whose multiples up to n c stay below 2^53: every
    // partial sum is exact, so the sum is the exact product.
    if c.fract() == 0.0 && c.abs() * (n as f64) <= 9_007_199_254_740_992.0 {
        return c * n as f64;
    }
    let mut s = 0.0;
    for _ in 0..n {
        s += c;
    }
    s
}

fn same(a: f64, b: f64) -> bool {
    a.to_bits() == b.to_bits()
}

/// The count `n` with `repeated_sum(c, n) == x` exactly, if there is one
/// near `x / c`.
fn count_of(x: f64, c: f64) -> Option<u64> {
    if same(x, 0.0) {
        return Some(0);
    }
    if c == 0.0 || !c.is_finite() || !x.is_finite() {
        return None;
    }
    let guess = (x / c).round();
    if !(0.0..4.0e9).contains(&guess) {
        return None;
    }
    let g = guess as u64;
    [g, g.saturating_sub(1), g + 1]
        .into_iter()
        .find(|&n| same(repeated_sum(c, n), x))
}

fn availability_of(up: f64, unit_hours: f64) -> f64 {
    // The simulator's own arithmetic (`sim::Run::finish`).
    if unit_hours > 0.0 {
        up / unit_hours
    } else {
        1.0
    }
}

fn put_varint(out: &mut Vec<u8>, mut x: u64) {
    while x >= 0x80 {
        out.push((x as u8) | 0x80);
        x >>= 7;
    }
    out.push(x as u8);
}

fn put_f64(out: &mut Vec<u8>, x: f64) {
    out.extend_from_slice(&x.to_le_bytes());
}

/// A byte source that counts what it consumed.
struct Bytes<R> {
    inner: R,
    read: u64,
}

impl<R: Read> Bytes<R> {
    fn u8(&mut self) -> std::io::Result<u8> {
        let mut b = [0u8; 1];
        self.inner.read_exact(&mut b)?;
        self.read += 1;
        Ok(b[0])
    }
    fn f64(&mut self) -> std::io::Result<f64> {
        let mut b = [0u8; 8];
        self.inner.read_exact(&mut b)?;
        self.read += 8;
        Ok(f64::from_le_bytes(b))
    }
    fn varint(&mut self) -> std::io::Result<u64> {
        let mut x = 0u64;
        for shift in (0..64).step_by(7) {
            let b = self.u8()?;
            x |= u64::from(b & 0x7f) << shift;
            if b & 0x80 == 0 {
                return Ok(x);
            }
        }
        Err(std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            "a count longer than 64 bits",
        ))
    }
    fn count(&mut self) -> std::io::Result<u32> {
        u32::try_from(self.varint()?)
            .map_err(|_| std::io::Error::new(std::io::ErrorKind::InvalidData, "a count past 2^32"))
    }
}

impl Codec {
    /// The codec of `model`.
    pub fn new(model: &Model) -> Self {
        Codec {
            unit_hours: model.units.len() as f64 * model.horizon,
            penalty: model.downtime_penalty,
            parts: model
                .parts
                .iter()
                .map(|p| [p.price, p.labour_planned, p.labour_unplanned])
                .collect(),
        }
    }

    fn record(&self) -> CodecRecord {
        CodecRecord {
            unit_hours: bits(self.unit_hours),
            penalty: bits(self.penalty),
            parts: self
                .parts
                .iter()
                .map(|[a, b, c]| [bits(*a), bits(*b), bits(*c)])
                .collect(),
        }
    }

    fn from_record(r: &CodecRecord) -> Option<Self> {
        let mut parts = Vec::with_capacity(r.parts.len());
        for [a, b, c] in &r.parts {
            parts.push([unbits(a)?, unbits(b)?, unbits(c)?]);
        }
        Some(Codec {
            unit_hours: unbits(&r.unit_hours)?,
            penalty: unbits(&r.penalty)?,
            parts,
        })
    }

    /// Append the record of `o` to `out`.
    ///
    /// # Panics
    /// When `o` has another number of part types than the model (a bug).
    pub fn encode(&self, o: &TrialOutcome, out: &mut Vec<u8>) {
        assert_eq!(o.parts.len(), self.parts.len(), "one entry per part type");
        let mut tag = 0u8;
        if !same(availability_of(o.up_hours, self.unit_hours), o.availability) {
            tag |= T_AVAIL_RAW;
        }
        for (x, flag) in [
            (o.up_hours, T_UP_ZERO),
            (o.down_waiting, T_WAIT_ZERO),
            (o.down_unplanned, T_UNPL_ZERO),
            (o.down_planned, T_PLAN_ZERO),
        ] {
            if same(x, 0.0) {
                tag |= flag;
            }
        }
        out.push(tag);
        if tag & T_AVAIL_RAW != 0 {
            put_f64(out, o.availability);
        }
        for (x, flag) in [
            (o.up_hours, T_UP_ZERO),
            (o.down_waiting, T_WAIT_ZERO),
            (o.down_unplanned, T_UNPL_ZERO),
            (o.down_planned, T_PLAN_ZERO),
        ] {
            if tag & flag == 0 {
                put_f64(out, x);
            }
        }
        put_varint(out, o.events);
        for (p, &[price, lp, lu]) in o.parts.iter().zip(&self.parts) {
            let mut tag = 0u8;
            if same(p.down_hours, 0.0) {
                tag |= P_DOWN_ZERO;
            }
            if same(p.holding, 0.0) {
                tag |= P_HOLD_ZERO;
            }
            if !same(repeated_sum(price, u64::from(p.orders)), p.parts_cost) {
                tag |= P_COST_RAW;
            }
            if !same(repeated_sum(lp, u64::from(p.planned)), p.labour_planned) {
                tag |= P_LP_RAW;
            }
            let unplanned = count_of(p.labour_unplanned, lu);
            if unplanned.is_none() {
                tag |= P_LU_RAW;
            }
            if !same(p.down_hours * self.penalty, p.downtime_cost) {
                tag |= P_DT_RAW;
            }
            out.push(tag);
            put_varint(out, u64::from(p.failures));
            put_varint(out, u64::from(p.planned));
            put_varint(out, u64::from(p.stockouts));
            put_varint(out, u64::from(p.orders));
            if let Some(n) = unplanned {
                put_varint(out, n);
            }
            if tag & P_DOWN_ZERO == 0 {
                put_f64(out, p.down_hours);
            }
            if tag & P_HOLD_ZERO == 0 {
                put_f64(out, p.holding);
            }
            for (flag, x) in [
                (P_COST_RAW, p.parts_cost),
                (P_LP_RAW, p.labour_planned),
                (P_LU_RAW, p.labour_unplanned),
                (P_DT_RAW, p.downtime_cost),
            ] {
                if tag & flag != 0 {
                    put_f64(out, x);
                }
            }
        }
    }

    fn decode<R: Read>(&self, r: &mut Bytes<R>) -> std::io::Result<TrialOutcome> {
        let tag = r.u8()?;
        let avail_raw = if tag & T_AVAIL_RAW != 0 {
            Some(r.f64()?)
        } else {
            None
        };
        let mut vals = [0.0f64; 4];
        for (v, flag) in vals
            .iter_mut()
            .zip([T_UP_ZERO, T_WAIT_ZERO, T_UNPL_ZERO, T_PLAN_ZERO])
        {
            if tag & flag == 0 {
                *v = r.f64()?;
            }
        }
        let [up_hours, down_waiting, down_unplanned, down_planned] = vals;
        let events = r.varint()?;
        let mut parts = Vec::with_capacity(self.parts.len());
        for &[price, lp, lu] in &self.parts {
            let tag = r.u8()?;
            let failures = r.count()?;
            let planned = r.count()?;
            let stockouts = r.count()?;
            let orders = r.count()?;
            let unplanned = if tag & P_LU_RAW == 0 {
                Some(r.count()?)
            } else {
                None
            };
            let down_hours = if tag & P_DOWN_ZERO == 0 {
                r.f64()?
            } else {
                0.0
            };
            let holding = if tag & P_HOLD_ZERO == 0 {
                r.f64()?
            } else {
                0.0
            };
            let parts_cost = if tag & P_COST_RAW != 0 {
                r.f64()?
            } else {
                repeated_sum(price, u64::from(orders))
            };
            let labour_planned = if tag & P_LP_RAW != 0 {
                r.f64()?
            } else {
                repeated_sum(lp, u64::from(planned))
            };
            let labour_unplanned = match unplanned {
                Some(n) => repeated_sum(lu, u64::from(n)),
                None => r.f64()?,
            };
            let downtime_cost = if tag & P_DT_RAW != 0 {
                r.f64()?
            } else {
                down_hours * self.penalty
            };
            parts.push(PartOutcome {
                failures,
                planned,
                stockouts,
                orders,
                down_hours,
                parts_cost,
                labour_planned,
                labour_unplanned,
                downtime_cost,
                holding,
            });
        }
        Ok(TrialOutcome {
            availability: avail_raw.unwrap_or_else(|| availability_of(up_hours, self.unit_hours)),
            up_hours,
            down_waiting,
            down_unplanned,
            down_planned,
            parts,
            events,
        })
    }

    /// Decode one record from `bytes` (for tests and tools); returns the
    /// outcome and the bytes it took.
    ///
    /// # Errors
    /// When the bytes end early or hold an impossible count.
    pub fn decode_slice(&self, bytes: &[u8]) -> std::io::Result<(TrialOutcome, usize)> {
        let mut r = Bytes {
            inner: bytes,
            read: 0,
        };
        let o = self.decode(&mut r)?;
        Ok((o, r.read as usize))
    }
}

// ---------------------------------------------------------------- writing

/// A [`Write`] that hashes and counts what passes through.
struct Hashing<W> {
    inner: W,
    hash: Sha256,
    bytes: u64,
}

impl<W: Write> Hashing<W> {
    fn put(&mut self, b: &[u8]) -> Result<(), ShardError> {
        self.hash.update(b);
        self.bytes += b.len() as u64;
        self.inner
            .write_all(b)
            .map_err(|e| ShardError::Write(e.to_string()))
    }
}

/// What [`write_shard`] wrote.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Written {
    /// Per-trial records (trials times policies).
    pub records: u64,
    /// Bytes of the whole file.
    pub bytes: u64,
    /// Bytes of the records alone.
    pub record_bytes: u64,
    pub seconds: f64,
}

/// Run the trials of `header`'s shard for each of `policies` (the header's,
/// in its order) and write the shard file to `out`.
///
/// # Errors
/// [`ShardError::Interrupted`] when the observer cancels the run, and
/// [`ShardError::Write`] when `out` fails. Nothing is written that a reader
/// would take for a whole shard unless the run completed: the trailer comes
/// last.
pub fn write_shard<W: Write>(
    header: &ShardHeader,
    model: &Model,
    policies: &[Policy],
    progress: &dyn Progress,
    out: W,
) -> Result<Written, ShardError> {
    let start = Instant::now();
    let codec = Codec::new(model);
    let mut w = Hashing {
        inner: out,
        hash: Sha256::new(),
        bytes: 0,
    };
    w.put(format!("{MAGIC} {FORMAT_VERSION}\n").as_bytes())?;
    let json = serde_json::to_string(header).map_err(|e| ShardError::Write(e.to_string()))?;
    w.put(json.as_bytes())?;
    w.put(b"\n")?;
    let head_bytes = w.bytes;
    let sims: Vec<Simulator<'_>> = policies.iter().map(|p| Simulator::new(model, p)).collect();
    let mut outcomes: Vec<Vec<TrialOutcome>> = vec![Vec::new(); policies.len()];
    let mut buf: Vec<u8> = Vec::new();
    let mut records = 0u64;
    let mut t = header.first;
    while t < header.end {
        let e = t.saturating_add(BLOCK).min(header.end);
        for (sim, v) in sims.iter().zip(outcomes.iter_mut()) {
            v.clear();
            if !for_each_trial(sim, t..e, progress, |_, o| v.push(o.clone())) {
                return Err(ShardError::Interrupted);
            }
        }
        buf.clear();
        for i in 0..(e - t) as usize {
            for v in &outcomes {
                codec.encode(&v[i], &mut buf);
                records += 1;
            }
        }
        w.put(&buf)?;
        t = e;
    }
    if progress.cancelled() {
        return Err(ShardError::Interrupted);
    }
    let record_bytes = w.bytes - head_bytes;
    let seconds = start.elapsed().as_secs_f64();
    w.put(TRAILER_MAGIC)?;
    w.put(&records.to_le_bytes())?;
    w.put(&seconds.to_le_bytes())?;
    let digest = w.hash.clone().finalize();
    w.inner
        .write_all(&digest)
        .and_then(|()| w.inner.flush())
        .map_err(|e| ShardError::Write(e.to_string()))?;
    Ok(Written {
        records,
        bytes: w.bytes + 32,
        record_bytes,
        seconds,
    })
}

// ---------------------------------------------------------------- reading

/// A shard file whose header and checksum have been read and checked.
#[derive(Debug, Clone, PartialEq)]
pub struct ShardInfo {
    /// The name it is reported under.
    pub file: String,
    pub header: ShardHeader,
    /// Seconds the shard's run took (from its trailer).
    pub seconds: f64,
    /// Where the records start.
    body_offset: u64,
    /// Where the trailer starts.
    body_end: u64,
}

/// Read and check a shard file's header and trailer, and its checksum over
/// the whole file (so a damaged or truncated file is refused before any
/// record is decoded).
///
/// # Errors
/// When the file is not a shard, is of another format version, is
/// truncated or damaged, or cannot be read.
pub fn open<R: Read + Seek>(file: &str, r: &mut R) -> Result<ShardInfo, ShardError> {
    let io = |e: std::io::Error| ShardError::Read {
        file: file.to_string(),
        why: e.to_string(),
    };
    let damaged = |why: String| ShardError::Damaged {
        file: file.to_string(),
        why,
    };
    let len = r.seek(SeekFrom::End(0)).map_err(io)?;
    r.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut br = BufReader::new(&mut *r);
    let mut magic = Vec::new();
    (&mut br)
        .take(64)
        .read_until(b'\n', &mut magic)
        .map_err(io)?;
    let want = format!("{MAGIC} {FORMAT_VERSION}\n");
    if magic != want.as_bytes() {
        let text = String::from_utf8_lossy(&magic);
        if magic.last() != Some(&b'\n') && want.as_bytes().starts_with(&magic) && !magic.is_empty()
        {
            return Err(damaged("it ends inside its first line".into()));
        }
        if let Some(v) = text.strip_prefix(&format!("{MAGIC} ")) {
            let v = v.trim();
            if !v.is_empty() && v.chars().all(|c| c.is_ascii_digit()) {
                return Err(ShardError::Format {
                    file: file.to_string(),
                    found: v.to_string(),
                });
            }
        }
        return Err(ShardError::NotAShard {
            file: file.to_string(),
            why: format!("it does not start with `{MAGIC} {FORMAT_VERSION}`"),
        });
    }
    let mut line = Vec::new();
    (&mut br)
        .take(MAX_HEADER)
        .read_until(b'\n', &mut line)
        .map_err(io)?;
    if line.last() != Some(&b'\n') {
        return Err(damaged("its header line is cut short".into()));
    }
    let header: ShardHeader = serde_json::from_slice(&line[..line.len() - 1])
        .map_err(|e| damaged(format!("its header is not readable: {e}")))?;
    drop(br);
    header.check(file)?;
    let body_offset = (magic.len() + line.len()) as u64;
    if len < body_offset + TRAILER_LEN {
        return Err(damaged(
            "it has no trailer: it was cut short, perhaps by a stopped run".into(),
        ));
    }
    let body_end = len - TRAILER_LEN;
    let mut trailer = [0u8; TRAILER_LEN as usize];
    r.seek(SeekFrom::Start(body_end)).map_err(io)?;
    r.read_exact(&mut trailer).map_err(io)?;
    if &trailer[..8] != TRAILER_MAGIC {
        return Err(damaged(
            "it has no trailer: it was cut short, perhaps by a stopped run".into(),
        ));
    }
    let mut u = [0u8; 8];
    u.copy_from_slice(&trailer[8..16]);
    let records = u64::from_le_bytes(u);
    u.copy_from_slice(&trailer[16..24]);
    let seconds = f64::from_le_bytes(u);
    // The checksum of everything before it.
    r.seek(SeekFrom::Start(0)).map_err(io)?;
    let mut hash = Sha256::new();
    let mut left = len - 32;
    let mut buf = vec![0u8; 1 << 16];
    while left > 0 {
        let n = left.min(buf.len() as u64) as usize;
        r.read_exact(&mut buf[..n]).map_err(io)?;
        hash.update(&buf[..n]);
        left -= n as u64;
    }
    if hash.finalize().as_slice() != &trailer[24..] {
        return Err(damaged("its checksum does not match its contents".into()));
    }
    if u128::from(records) != header.records() {
        return Err(damaged(format!(
            "it holds {records} records where its header calls for {}",
            header.records()
        )));
    }
    Ok(ShardInfo {
        file: file.to_string(),
        header,
        seconds,
        body_offset,
        body_end,
    })
}

/// Decode the records of an opened shard in trial order, calling `each`
/// with (policy index, trial index, outcome).
///
/// # Errors
/// When the file cannot be read or its records do not decode to exactly
/// the trials its header names.
pub fn read_outcomes<R: Read + Seek>(
    info: &ShardInfo,
    r: &mut R,
    mut each: impl FnMut(usize, u64, &TrialOutcome),
) -> Result<(), ShardError> {
    let damaged = |why: String| ShardError::Damaged {
        file: info.file.clone(),
        why,
    };
    let codec = Codec::from_record(&info.header.codec)
        .ok_or_else(|| damaged("its header's constants are unreadable".into()))?;
    r.seek(SeekFrom::Start(info.body_offset))
        .map_err(|e| ShardError::Read {
            file: info.file.clone(),
            why: e.to_string(),
        })?;
    let mut br = Bytes {
        inner: BufReader::with_capacity(1 << 16, r),
        read: 0,
    };
    let n_pol = info.header.policies.len();
    for t in info.header.range() {
        for p in 0..n_pol {
            let o = codec
                .decode(&mut br)
                .map_err(|e| damaged(format!("record of trial {t}: {e}")))?;
            each(p, t, &o);
        }
    }
    if info.body_offset + br.read != info.body_end {
        return Err(damaged(
            "its records do not end where its trailer starts".into(),
        ));
    }
    Ok(())
}

// ---------------------------------------------------------------- merging

/// Check that `shards` are shares of one run, made by `this_version`, that
/// together hold every trial of it exactly once. Returns the order to fold
/// them in (by first trial).
///
/// # Errors
/// A [`MergeError`] naming the first two shards that disagree, the shards
/// that overlap, or every missing range of trials and the shares to write.
pub fn plan(shards: &[ShardInfo], this_version: &str) -> Result<Vec<usize>, MergeError> {
    let first = shards.first().ok_or(MergeError::NoShards)?;
    let a = &first.header;
    for s in &shards[1..] {
        let b = &s.header;
        let differs = |what: &'static str, x: String, y: String| MergeError::Differs {
            what,
            a_file: first.file.clone(),
            a: x,
            b_file: s.file.clone(),
            b: y,
        };
        if a.tool_version != b.tool_version {
            return Err(MergeError::Versions {
                a_file: first.file.clone(),
                a: a.tool_version.clone(),
                b_file: s.file.clone(),
                b: b.tool_version.clone(),
            });
        }
        if a.kind != b.kind {
            return Err(differs(
                "kinds of run",
                a.kind.describe().into(),
                b.kind.describe().into(),
            ));
        }
        if a.scenario_hash != b.scenario_hash {
            let say = |file: &str, h: &ShardHeader| {
                let hash: String = h.scenario_hash.chars().take(12).collect();
                format!("{file} is of scenario `{}` (content {hash})", h.scenario)
            };
            return Err(MergeError::Scenarios {
                a: say(&first.file, a),
                b: say(&s.file, b).replacen(" is of", " of", 1),
            });
        }
        if a.seed != b.seed {
            return Err(differs(
                "seeds",
                format!("seed {}", a.seed),
                format!("seed {}", b.seed),
            ));
        }
        if a.parameter_uncertainty != b.parameter_uncertainty {
            let say = |on: bool| {
                if on {
                    "parameter uncertainty on".to_string()
                } else {
                    "parameter uncertainty off".to_string()
                }
            };
            return Err(differs(
                "parameter-uncertainty settings",
                say(a.parameter_uncertainty),
                say(b.parameter_uncertainty),
            ));
        }
        if a.target_bits != b.target_bits {
            return Err(differs(
                "availability targets",
                format!("target {}", a.target),
                format!("target {}", b.target),
            ));
        }
        if a.policies != b.policies {
            let names = |h: &ShardHeader| {
                let v: Vec<String> = h.policies.iter().map(|p| format!("`{}`", p.name)).collect();
                format!("policies {}", v.join(", "))
            };
            let (x, y) = (names(a), names(b));
            let (x, y) = if x == y {
                (format!("{x} (same names, other rules or stock levels)"), y)
            } else {
                (x, y)
            };
            return Err(differs("policies", x, y));
        }
        if a.run() != b.run() {
            return Err(differs(
                "runs (trial counts)",
                format!("a share of trials {}", trials(&a.run())),
                format!("a share of trials {}", trials(&b.run())),
            ));
        }
    }
    if a.tool_version != this_version {
        return Err(MergeError::ThisVersion {
            file: first.file.clone(),
            found: a.tool_version.clone(),
            this: this_version.to_string(),
        });
    }
    // Coverage: sort by first trial, walk, collect overlaps and gaps.
    let mut order: Vec<usize> = (0..shards.len()).collect();
    order.sort_by_key(|&i| (shards[i].header.first, shards[i].header.end));
    let run = a.run();
    let mut cursor = run.start;
    let mut last: Option<usize> = None;
    let mut gaps: Vec<Range<u64>> = Vec::new();
    for &i in &order {
        let h = &shards[i].header;
        if h.first == h.end {
            continue;
        }
        if h.first < cursor {
            let j = last.unwrap_or(i);
            let p = &shards[j].header;
            return Err(MergeError::Overlap {
                a_file: shards[j].file.clone(),
                a_range: p.describe_range(),
                b_file: shards[i].file.clone(),
                b_range: h.describe_range(),
                same: p.range() == h.range(),
            });
        }
        if h.first > cursor {
            gaps.push(cursor..h.first);
        }
        cursor = h.end;
        last = Some(i);
    }
    if cursor < run.end {
        gaps.push(cursor..run.end);
    }
    if !gaps.is_empty() {
        let n = a.shard_count;
        let spec_hits = |k: u64| {
            let r = ShardSpec { index: k, count: n }.range(&run);
            r.start < r.end && gaps.iter().any(|g| g.start < r.end && r.start < g.end)
        };
        // At most a readable list of shares.
        let mut ks: Vec<String> = Vec::new();
        let mut total = 0u64;
        for k in 0..n {
            if spec_hits(k) {
                total += 1;
                if ks.len() < 20 {
                    ks.push(format!("{k}/{n}"));
                }
            }
        }
        let shards_text = if total as usize > ks.len() {
            format!(
                "shares {}, ... ({total} in all, `--shard K/{n}`)",
                ks.join(", ")
            )
        } else if total == 1 {
            format!("share {} (`--shard {}`)", ks[0], ks[0])
        } else {
            let last = ks.pop().unwrap_or_default();
            format!("shares {} and {last} (`--shard K/{n}`)", ks.join(", "))
        };
        let mut missing: Vec<String> = gaps.iter().take(20).map(trials).collect();
        if gaps.len() > 20 {
            missing.push(format!("and {} more ranges", gaps.len() - 20));
        }
        return Err(MergeError::Missing {
            missing: missing.join(", "),
            run: trials(&run),
            shards: shards_text,
        });
    }
    Ok(order)
}

/// Rebuild the model a shard was run on from its embedded scenario text
/// (records files it names are read from the scenario's folder), with the
/// shard's seed and parameter-uncertainty setting, and check it against the
/// shard's content hash. With `given` (a scenario file named on the command
/// line, loaded) that scenario is checked instead.
///
/// # Errors
/// When the text no longer parses or gives another model.
pub fn model_for(info: &ShardInfo, given: Option<&Loaded>) -> Result<Model, MergeError> {
    let h = &info.header;
    let mut model = match given {
        Some(loaded) => loaded.model.clone(),
        None => h.source().parse().map_err(|e| MergeError::Scenario {
            file: info.file.clone(),
            why: e.to_string(),
        })?,
    };
    model.seed = h.seed;
    model.parameter_uncertainty = h.parameter_uncertainty;
    let found = scenario_hash(&model);
    if found != h.scenario_hash {
        let has_records = h.scenario_text.contains("records");
        return Err(MergeError::Rebuilt {
            file: info.file.clone(),
            name: h.scenario.clone(),
            hashes: format!(
                "{} (got {})",
                h.scenario_hash.chars().take(12).collect::<String>(),
                found.chars().take(12).collect::<String>()
            ),
            hint: if given.is_some() {
                "; the scenario file given is not the one the shards were run on".to_string()
            } else if has_records {
                "; a records file the scenario fits lives to has changed since the shards were written".to_string()
            } else {
                "; it was written by another build of wearout".to_string()
            },
        });
    }
    if Codec::from_record(&h.codec).as_ref() != Some(&Codec::new(&model)) {
        return Err(MergeError::Shard(ShardError::Damaged {
            file: info.file.clone(),
            why: "its constants do not match its scenario".into(),
        }));
    }
    Ok(model)
}

/// The header's policies as policies of `model`.
///
/// # Errors
/// When a policy does not fit the model.
pub fn policies_for(info: &ShardInfo, model: &Model) -> Result<Vec<Policy>, MergeError> {
    info.header
        .policies
        .iter()
        .map(|p| p.policy(model))
        .collect::<Result<Vec<_>, _>>()
        .map_err(|why| MergeError::Policies {
            file: info.file.clone(),
            why,
        })
}

/// Shards checked to make one run, with the model and policies they were
/// run on: ready to fold.
#[derive(Debug, Clone)]
pub struct Merger {
    pub infos: Vec<ShardInfo>,
    /// Indices into `infos`, by first trial.
    pub order: Vec<usize>,
    pub model: Model,
    pub policies: Vec<Policy>,
}

/// A merged run: one summary per policy, in the header's order.
#[derive(Debug, Clone)]
pub struct Merged {
    pub model: Model,
    pub policies: Vec<Policy>,
    pub summaries: Vec<crate::summary::Summary>,
    /// The first shard's header (what every shard agrees on).
    pub header: ShardHeader,
    /// Seconds the shards' runs took, added up.
    pub seconds: f64,
}

impl Merger {
    /// Check `infos` (see [`plan`]) and rebuild their model and policies
    /// (see [`model_for`]).
    ///
    /// # Errors
    /// As [`plan`] and [`model_for`].
    pub fn new(infos: Vec<ShardInfo>, given: Option<&Loaded>) -> Result<Self, MergeError> {
        let order = plan(&infos, TOOL_VERSION)?;
        let first = &infos[order[0]];
        let model = model_for(first, given)?;
        let policies = policies_for(first, &model)?;
        Ok(Merger {
            infos,
            order,
            model,
            policies,
        })
    }

    /// The first shard's header.
    pub fn header(&self) -> &ShardHeader {
        &self.infos[self.order[0]].header
    }

    /// Fold every shard's outcomes in trial order through the same
    /// accumulator a single run uses. `open(i)` gives shard `i`'s bytes
    /// again; each is checked to be the shard planned before it is read.
    ///
    /// # Errors
    /// When a shard cannot be read again, has changed, or is damaged.
    pub fn fold<R: Read + Seek>(
        self,
        mut open: impl FnMut(usize) -> Result<R, ShardError>,
    ) -> Result<Merged, MergeError> {
        let h = self.header().clone();
        let mut accs: Vec<crate::summary::Accumulator> = self
            .policies
            .iter()
            .map(|_| crate::summary::Accumulator::new(self.model.parts.len()))
            .collect();
        let mut seconds = 0.0;
        let mut next = h.run_first;
        for &i in &self.order {
            let info = &self.infos[i];
            if info.header.first == info.header.end {
                continue;
            }
            debug_assert_eq!(info.header.first, next, "plan tiles the run");
            let mut r = open(i)?;
            let again = self::open(&info.file, &mut r)?;
            if again != *info {
                return Err(MergeError::Shard(ShardError::Read {
                    file: info.file.clone(),
                    why: "it changed while the shards were being merged; merge again".into(),
                }));
            }
            read_outcomes(info, &mut r, |p, _, o| accs[p].push(o))?;
            seconds += info.seconds;
            next = info.header.end;
        }
        let target = h.target();
        let summaries = self
            .policies
            .iter()
            .zip(accs)
            .map(|(p, acc)| crate::summary::Summary::new(&self.model, p, h.run_first, acc, target))
            .collect();
        Ok(Merged {
            model: self.model,
            policies: self.policies,
            summaries,
            header: h,
            seconds,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shares_tile_the_run() {
        // Every split of every small run: contiguous, in order, no gaps, no
        // overlaps, sizes within one of each other.
        for len in 0..40u64 {
            for n in 1..20u64 {
                let run = 1000..1000 + len;
                let mut at = run.start;
                let mut sizes = Vec::new();
                for k in 0..n {
                    let r = ShardSpec { index: k, count: n }.range(&run);
                    assert_eq!(r.start, at);
                    sizes.push(r.end - r.start);
                    at = r.end;
                }
                assert_eq!(at, run.end);
                let (lo, hi) = (sizes.iter().min().unwrap(), sizes.iter().max().unwrap());
                assert!(hi - lo <= 1, "{len} over {n}: {sizes:?}");
            }
        }
        // No overflow at the top of the index space.
        let run = (u64::MAX - 10)..u64::MAX;
        let r = ShardSpec { index: 1, count: 2 }.range(&run);
        assert_eq!(r, (u64::MAX - 5)..u64::MAX);
    }

    #[test]
    fn spec_parsing_says_what_is_allowed() {
        assert_eq!(
            ShardSpec::parse("3/16").unwrap(),
            ShardSpec {
                index: 3,
                count: 16
            }
        );
        for (bad, needle) in [
            ("16/16", "below N"),
            ("1/0", "at least 1"),
            ("a/3", "whole number"),
            ("3", "K/N"),
            ("-1/4", "whole number"),
        ] {
            let e = ShardSpec::parse(bad).unwrap_err().to_string();
            assert!(e.contains(needle), "{bad}: {e}");
        }
    }

    #[test]
    fn whole_number_sums_take_the_short_way_exactly() {
        // The product shortcut must give the loop's bits.
        for c in [1.0, 3.0, 180_000.0, 1e15, 4_503_599_627_370_497.0] {
            for n in [0u64, 1, 2, 7, 1000, 4096] {
                let mut s = 0.0;
                for _ in 0..n {
                    s += c;
                }
                assert_eq!(repeated_sum(c, n).to_bits(), s.to_bits(), "{c} x {n}");
            }
        }
        assert_eq!(repeated_sum(-0.0, 3).to_bits(), 0f64.to_bits());
    }

    #[test]
    fn varints_round_trip() {
        for x in [
            0u64,
            1,
            127,
            128,
            300,
            16_383,
            16_384,
            u32::MAX as u64,
            u64::MAX,
        ] {
            let mut v = Vec::new();
            put_varint(&mut v, x);
            let mut r = Bytes {
                inner: &v[..],
                read: 0,
            };
            assert_eq!(r.varint().unwrap(), x);
            assert_eq!(r.read as usize, v.len());
        }
    }

    #[test]
    fn count_of_finds_the_exact_count() {
        // 0.1 added 10 times is 0.9999999999999999, not 1.0 (IEEE-754
        // double rounding; Goldberg 1991, "What every computer scientist
        // should know about floating-point arithmetic"): the count must be
        // found from the repeated sum, not from a product.
        let s = repeated_sum(0.1, 10);
        assert_ne!(s, 1.0);
        assert_eq!(count_of(s, 0.1), Some(10));
        assert_eq!(count_of(0.0, 7.0), Some(0));
        assert_eq!(count_of(1.0, 0.1), None);
        assert_eq!(count_of(5.0, 0.0), None);
    }

    #[test]
    fn hand_made_outcomes_round_trip_bit_for_bit() {
        let codec = Codec {
            unit_hours: 3.0 * 1000.0,
            penalty: 0.3,
            parts: vec![[0.1, 7.0, 3.3], [1e300, 0.0, f64::MIN_POSITIVE]],
        };
        let mut o = TrialOutcome::zeroed(2);
        o.up_hours = 2900.123;
        o.availability = availability_of(o.up_hours, 3000.0);
        o.down_waiting = 0.5;
        o.down_planned = -0.0;
        o.events = 123_456_789;
        o.parts[0] = PartOutcome {
            failures: 3,
            planned: 2,
            stockouts: 1,
            orders: 5,
            down_hours: 12.25,
            parts_cost: repeated_sum(0.1, 5),
            labour_planned: 14.0,
            labour_unplanned: repeated_sum(3.3, 3),
            downtime_cost: 12.25 * 0.3,
            holding: 1.0 / 3.0,
        };
        // A part whose figures do not come from the simulator's arithmetic:
        // stored raw.
        o.parts[1] = PartOutcome {
            failures: u32::MAX,
            planned: 0,
            stockouts: 0,
            orders: 1,
            down_hours: f64::NAN,
            parts_cost: 2.0,
            labour_planned: 1.0,
            labour_unplanned: 0.5,
            downtime_cost: 7.0,
            holding: 0.0,
        };
        let mut v = Vec::new();
        codec.encode(&o, &mut v);
        let (back, used) = codec.decode_slice(&v).unwrap();
        assert_eq!(used, v.len());
        // Bit for bit, NaN and -0.0 included (PartialEq would fail on NaN).
        assert_eq!(format!("{back:?}"), format!("{o:?}"));
        assert_eq!(back.down_planned.to_bits(), (-0.0f64).to_bits());
        assert_eq!(back.availability.to_bits(), o.availability.to_bits());
        // Cut short anywhere: an error, never a panic.
        for cut in 0..v.len() {
            assert!(codec.decode_slice(&v[..cut]).is_err());
        }
    }
}
