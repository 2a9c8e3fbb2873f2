//! Merging: the checks that shards are the whole of one run, the model and
//! policies they were run on, and the fold of their records in trial order
//! through the accumulator a single run uses.

use std::io::{Read, Seek};
use std::ops::Range;

use super::codec::Codec;
use super::header::trials;
use super::{
    ShardError, ShardHeader, ShardInfo, ShardSpec, TOOL_VERSION, open, read_outcomes, scenario_hash,
};
use crate::model::{Model, Policy};
use crate::scenario::Loaded;

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
            .map(|_| crate::summary::Accumulator::for_model(&self.model))
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
