//! A share of a run: shard `K` of `N` of its trial indices.

use std::fmt;
use std::ops::Range;

use super::ShardError;

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
}
