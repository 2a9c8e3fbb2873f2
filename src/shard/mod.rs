//! Shard files: one process's share of a run's trial indices, and merging
//! shards back into exactly the run one process would have made.
//!
//! Owns: the shard file format (a header line, compact per-trial outcomes
//! in trial order, a checked trailer), how a run's trial range is split into
//! `K/N` shares, the checks that shards belong to one run, and reading the
//! outcomes back in trial order so that they fold through the same
//! [`Accumulator`](crate::summary::Accumulator) as a single run.
//! May use: `model`, `outcome`, `sim`, `run`, `summary`, `scenario` (to
//! rebuild the model a shard names), `serde`/`serde_json` (the header
//! line), `sha2`. Reads and writes only the streams it is handed; opens no
//! file itself.
//!
//! Files: `spec` (a share `K/N` of a run's trials), `header` (what a shard
//! says about its run), `codec` (one trial's record), `file` (the file's
//! framing: writing a shard, opening one and reading its records back),
//! `merge` (the checks that shards make one run, and their fold).
//!
//! # Format (version 3)
//!
//! ```text
//! wearout-shard 3\n                       magic line
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
//! penalty, availability, holding from the shelf hours) are rebuilt by the
//! same arithmetic from their counts. Each rebuilt figure is checked against the real one when
//! written; where they differ (never seen, but cheap to guard) the raw value
//! is stored and a flag says so.
//!
//! Since version 3 a record ends with the yearly books: per part type its
//! demands and its whole years with a stock-out (varints), and with
//! `[money]` (the header's `codec.years` above 0) per part type the
//! present value of its running spend, then the running spend per year and
//! part type (year by year), eight numbers at a time as a byte of which are
//! not zero followed by those.

mod codec;
mod file;
mod header;
mod merge;
mod spec;

pub use codec::Codec;
pub use file::{ShardInfo, Written, open, read_outcomes, write_shard};
pub use header::{CodecRecord, PartRecord, PolicyRecord, RunKind, ShardHeader, scenario_hash};
pub use merge::{MergeError, Merged, Merger, model_for, plan, policies_for};
pub use spec::ShardSpec;

/// The first word of every shard file.
pub const MAGIC: &str = "wearout-shard";
/// The shard format this code writes and reads.
pub const FORMAT_VERSION: u32 = 3;
/// The version of wearout that writes shards (the crate version).
pub const TOOL_VERSION: &str = env!("CARGO_PKG_VERSION");
/// Trailer bytes: magic, record count, seconds, SHA-256.
pub const TRAILER_LEN: u64 = 8 + 8 + 8 + 32;

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
