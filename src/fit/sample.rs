//! One part type's life data in the form every fit reads.
//!
//! Owns: [`Observed`] (what is known of one life: a failure time, a
//! suspension, or an interval in which a failure happened), [`Obs`] (that,
//! with an entry age for left truncation and a count), and [`Sample`], the
//! canonical list of a part's observations.
//! May use: `std` only.
//!
//! Canonical form. A sample keeps its observations sorted (failures, then
//! suspensions, then intervals; then by hours, entry age) with identical
//! observations merged into one with the counts added. Counts are whole
//! numbers, so their sums are exact in floating point; every likelihood
//! sums `count x term` over this list in this order. Hence twelve rows of
//! one suspension at 5 000 h and one row of twelve give the very same
//! sample, and every fit of them is the same to the last digit, whatever
//! order the rows came in.

use super::FitError;

/// What is known of one part's life.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Observed {
    /// It failed at this age (hours).
    Failure(f64),
    /// It was still working at this age (right-censored): removed in
    /// working order, or still fitted.
    Suspension(f64),
    /// It failed at some age in `(after, before]`: found failed at an
    /// inspection at `before`, last seen working at `after`. `after = 0`
    /// (or the entry age) is a left-censored life: found failed at the
    /// first look.
    Interval {
        /// Last age known to be working, hours (0 if never seen working).
        after: f64,
        /// Age at which it was found failed, hours.
        before: f64,
    },
}

impl Observed {
    /// Order of the kinds in the canonical list.
    fn rank(&self) -> u8 {
        match self {
            Observed::Failure(_) => 0,
            Observed::Suspension(_) => 1,
            Observed::Interval { .. } => 2,
        }
    }

    /// The two hours that identify it (the second is 0 for exact kinds).
    fn hours(&self) -> (f64, f64) {
        match *self {
            Observed::Failure(t) | Observed::Suspension(t) => (t, 0.0),
            Observed::Interval { after, before } => (after, before),
        }
    }

    /// True for a failure (exact or in an interval).
    pub fn is_failure(&self) -> bool {
        !matches!(self, Observed::Suspension(_))
    }
}

/// One observation: what is known, from which age the part was watched,
/// and how many parts share it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Obs {
    /// The life, censored or not.
    pub what: Observed,
    /// Age (hours) at which the part entered the records: it had to
    /// survive this long to be seen (left truncation). 0 when watched
    /// from new.
    pub entry: f64,
    /// Number of parts with this observation, a whole number >= 1.
    pub count: f64,
}

impl Obs {
    /// One part failed at `t`, watched from new.
    pub fn failure(t: f64) -> Self {
        Obs {
            what: Observed::Failure(t),
            entry: 0.0,
            count: 1.0,
        }
    }

    /// One part still working at `t`, watched from new.
    pub fn suspension(t: f64) -> Self {
        Obs {
            what: Observed::Suspension(t),
            entry: 0.0,
            count: 1.0,
        }
    }

    /// One part found failed at `before`, last seen working at `after`.
    pub fn interval(after: f64, before: f64) -> Self {
        Obs {
            what: Observed::Interval { after, before },
            entry: 0.0,
            count: 1.0,
        }
    }

    /// The same observation with an entry age.
    pub fn entered_at(mut self, entry: f64) -> Self {
        self.entry = entry;
        self
    }

    /// The same observation `count` times.
    pub fn times(mut self, count: f64) -> Self {
        self.count = count;
        self
    }

    fn key_cmp(&self, other: &Obs) -> std::cmp::Ordering {
        let (a0, a1) = self.what.hours();
        let (b0, b1) = other.what.hours();
        self.what
            .rank()
            .cmp(&other.what.rank())
            .then(a0.total_cmp(&b0))
            .then(a1.total_cmp(&b1))
            .then(self.entry.total_cmp(&other.entry))
    }

    /// Why this observation is not usable, if it is not.
    fn invalid(&self) -> Option<String> {
        let ok = |v: f64| v.is_finite() && v > 0.0;
        if !(self.count.is_finite() && self.count >= 1.0 && self.count.fract() == 0.0) {
            return Some(format!(
                "the count must be a whole number of 1 or more (got {})",
                self.count
            ));
        }
        if !(self.entry.is_finite() && self.entry >= 0.0) {
            return Some(format!(
                "the entry age must be a finite number of 0 or more hours (got {})",
                self.entry
            ));
        }
        match self.what {
            Observed::Failure(t) | Observed::Suspension(t) => {
                if !ok(t) {
                    return Some(format!(
                        "hours must be finite numbers greater than 0 (got {t})"
                    ));
                }
                if self.entry >= t {
                    return Some(format!(
                        "the entry age ({}) must be less than the life ({t}): a part is seen \
                         before it fails or is removed",
                        self.entry
                    ));
                }
            }
            Observed::Interval { after, before } => {
                if !(after.is_finite() && after >= 0.0 && ok(before)) {
                    return Some(format!(
                        "an inspection interval needs 0 <= after < before, finite hours (got \
                         after {after}, before {before})"
                    ));
                }
                if after >= before {
                    return Some(format!(
                        "after ({after}) must be less than before ({before}): the part was last \
                         seen working before it was found failed"
                    ));
                }
                if self.entry >= before {
                    return Some(format!(
                        "the entry age ({}) must be less than before ({before})",
                        self.entry
                    ));
                }
            }
        }
        None
    }
}

/// Counts of what a sample holds, for reports.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Counts {
    /// Failures at a known age.
    pub exact_failures: usize,
    /// Failures found at an inspection after a working inspection.
    pub interval_failures: usize,
    /// Failures found at the first inspection (no working inspection
    /// before): left-censored.
    pub left_censored: usize,
    /// Suspensions (right-censored).
    pub suspensions: usize,
    /// Parts with an entry age above 0 (left-truncated).
    pub truncated: usize,
}

impl Counts {
    /// All failures: exact, in an interval, or left-censored.
    pub fn failures(&self) -> usize {
        self.exact_failures + self.interval_failures + self.left_censored
    }

    /// Every part counted.
    pub fn total(&self) -> usize {
        self.failures() + self.suspensions
    }
}

/// One part type's life data, in canonical form (see the module documentation).
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    part: String,
    obs: Vec<Obs>,
    counts: Counts,
    /// First and last line of the records the sample came from, if known.
    lines: Option<(u64, u64)>,
}

/// Largest count a single observation may carry.
pub const MAX_COUNT: f64 = 1_000_000.0;

impl Sample {
    /// A sample from failure and suspension hours (each one part, watched
    /// from new).
    ///
    /// # Errors
    /// When any hours value is not finite and greater than 0.
    pub fn new(part: &str, failures: Vec<f64>, suspensions: Vec<f64>) -> Result<Self, FitError> {
        let obs = failures
            .iter()
            .map(|&t| Obs::failure(t))
            .chain(suspensions.iter().map(|&t| Obs::suspension(t)))
            .collect();
        Self::from_obs(part, obs)
    }

    /// A sample from any observations; they are sorted and identical ones
    /// merged (see the module documentation).
    ///
    /// # Errors
    /// [`FitError::InvalidObservation`] when an observation is not usable (hours
    /// not finite and positive, `after >= before`, an entry age not below
    /// the life, a count that is not a whole number from 1 to
    /// [`MAX_COUNT`]).
    pub fn from_obs(part: &str, mut obs: Vec<Obs>) -> Result<Self, FitError> {
        for o in &obs {
            let why = o
                .invalid()
                .or_else(|| (o.count > MAX_COUNT).then(|| format!("a count above {MAX_COUNT}")));
            if let Some(reason) = why {
                return Err(FitError::InvalidObservation {
                    part: part.to_string(),
                    reason,
                });
            }
        }
        obs.sort_by(Obs::key_cmp);
        let mut merged: Vec<Obs> = Vec::with_capacity(obs.len());
        for o in obs {
            match merged.last_mut() {
                Some(last) if last.key_cmp(&o).is_eq() => last.count += o.count,
                _ => merged.push(o),
            }
        }
        let mut c = Counts::default();
        for o in &merged {
            let n = o.count as usize;
            match o.what {
                Observed::Failure(_) => c.exact_failures += n,
                Observed::Suspension(_) => c.suspensions += n,
                Observed::Interval { after, .. } => {
                    if after <= o.entry {
                        c.left_censored += n;
                    } else {
                        c.interval_failures += n;
                    }
                }
            }
            if o.entry > 0.0 {
                c.truncated += n;
            }
        }
        Ok(Sample {
            part: part.to_string(),
            obs: merged,
            counts: c,
            lines: None,
        })
    }

    /// The same sample, noting the lines of the records it came from.
    pub fn with_lines(mut self, first: u64, last: u64) -> Self {
        self.lines = Some((first, last));
        self
    }

    /// First and last line of the records the sample came from, if known.
    pub fn lines(&self) -> Option<(u64, u64)> {
        self.lines
    }

    /// Part type name.
    pub fn part(&self) -> &str {
        &self.part
    }

    /// The canonical observations.
    pub fn obs(&self) -> &[Obs] {
        &self.obs
    }

    /// What the sample holds.
    pub fn counts(&self) -> Counts {
        self.counts
    }

    /// Exact failure hours, one per part, ascending.
    pub fn failures(&self) -> Vec<f64> {
        self.expand(|o| match o {
            Observed::Failure(t) => Some(t),
            _ => None,
        })
    }

    /// Suspension hours, one per part, ascending.
    pub fn suspensions(&self) -> Vec<f64> {
        self.expand(|o| match o {
            Observed::Suspension(t) => Some(t),
            _ => None,
        })
    }

    fn expand(&self, pick: impl Fn(Observed) -> Option<f64>) -> Vec<f64> {
        let mut v = Vec::new();
        for o in &self.obs {
            if let Some(t) = pick(o.what) {
                v.extend(std::iter::repeat_n(t, o.count as usize));
            }
        }
        v
    }

    /// Number of failures of any kind (exact, interval, left-censored).
    pub fn failure_count(&self) -> usize {
        self.counts.failures()
    }

    /// Number of suspensions.
    pub fn suspension_count(&self) -> usize {
        self.counts.suspensions
    }

    /// Number of parts.
    pub fn len(&self) -> usize {
        self.counts.total()
    }

    /// True when there are no parts.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// True when every observation is an exact failure or a suspension
    /// watched from new (the classic right-censored case).
    pub fn is_plain(&self) -> bool {
        self.obs
            .iter()
            .all(|o| o.entry == 0.0 && !matches!(o.what, Observed::Interval { .. }))
    }

    /// True when some observation is an interval (inspection finding).
    pub fn has_intervals(&self) -> bool {
        self.obs
            .iter()
            .any(|o| matches!(o.what, Observed::Interval { .. }))
    }

    /// True when some part entered the records at an age above 0.
    pub fn has_entry_ages(&self) -> bool {
        self.obs.iter().any(|o| o.entry > 0.0)
    }

    /// The smallest age by which some failure is known to have happened:
    /// the least exact failure or interval end. A failure-free period
    /// (3-parameter Weibull location) must lie below it.
    pub fn earliest_failure_bound(&self) -> f64 {
        self.obs
            .iter()
            .filter_map(|o| match o.what {
                Observed::Failure(t) => Some(t),
                Observed::Interval { before, .. } => Some(before),
                Observed::Suspension(_) => None,
            })
            .fold(f64::INFINITY, f64::min)
    }

    /// The largest age in the data (a life, interval end or entry age).
    pub fn largest_age(&self) -> f64 {
        self.obs
            .iter()
            .map(|o| match o.what {
                Observed::Failure(t) | Observed::Suspension(t) => t,
                Observed::Interval { before, .. } => before,
            })
            .fold(0.0, f64::max)
    }

    /// A copy with every age shifted down by `g` (for a failure-free
    /// period): entry ages and interval starts below `g` become 0,
    /// suspensions at or below `g` drop out (they say nothing beyond `g`).
    /// `None` when a failure lies at or below `g`.
    pub(crate) fn shifted(&self, g: f64) -> Option<Sample> {
        if g == 0.0 {
            return Some(self.clone());
        }
        let mut obs = Vec::with_capacity(self.obs.len());
        for o in &self.obs {
            let entry = (o.entry - g).max(0.0);
            let what = match o.what {
                Observed::Failure(t) => {
                    if t <= g {
                        return None;
                    }
                    Observed::Failure(t - g)
                }
                Observed::Suspension(t) => {
                    if t <= g {
                        continue;
                    }
                    Observed::Suspension(t - g)
                }
                Observed::Interval { after, before } => {
                    if before <= g {
                        return None;
                    }
                    Observed::Interval {
                        after: (after - g).max(0.0),
                        before: before - g,
                    }
                }
            };
            obs.push(Obs {
                what,
                entry,
                count: o.count,
            });
        }
        let mut s = Sample::from_obs(&self.part, obs).ok()?;
        s.lines = self.lines;
        Some(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grouping_and_order_give_the_same_sample() {
        let a = Sample::from_obs(
            "p",
            vec![
                Obs::suspension(5000.0).times(3.0),
                Obs::failure(100.0),
                Obs::interval(200.0, 400.0).entered_at(50.0),
            ],
        )
        .unwrap();
        let b = Sample::from_obs(
            "p",
            vec![
                Obs::interval(200.0, 400.0).entered_at(50.0),
                Obs::suspension(5000.0),
                Obs::suspension(5000.0).times(2.0),
                Obs::failure(100.0),
            ],
        )
        .unwrap();
        assert_eq!(a, b);
        assert_eq!(a.obs().len(), 3);
        assert_eq!(a.counts().suspensions, 3);
        assert_eq!(a.counts().interval_failures, 1);
        assert_eq!(a.counts().truncated, 1);
        assert_eq!(a.suspensions(), vec![5000.0; 3]);
        assert!(!a.is_plain() && a.has_intervals() && a.has_entry_ages());
    }

    #[test]
    fn left_censored_is_an_interval_from_the_entry_age() {
        let s = Sample::from_obs(
            "p",
            vec![
                Obs::interval(0.0, 300.0),
                Obs::interval(100.0, 300.0).entered_at(100.0),
            ],
        )
        .unwrap();
        assert_eq!(s.counts().left_censored, 2);
        assert_eq!(s.earliest_failure_bound(), 300.0);
    }

    #[test]
    fn unusable_observations_are_refused() {
        for o in [
            Obs::interval(400.0, 200.0),
            Obs::failure(100.0).entered_at(100.0),
            Obs::failure(100.0).times(-1.0),
            Obs::failure(100.0).times(1.5),
            Obs::suspension(f64::NAN),
            Obs::failure(1.0).times(2e6),
        ] {
            assert!(Sample::from_obs("p", vec![o]).is_err(), "{o:?}");
        }
    }

    #[test]
    fn shift_drops_what_says_nothing() {
        let s = Sample::from_obs(
            "p",
            vec![
                Obs::failure(500.0),
                Obs::suspension(100.0),
                Obs::interval(50.0, 300.0).entered_at(20.0),
            ],
        )
        .unwrap();
        let t = s.shifted(100.0).unwrap();
        assert_eq!(t.counts().suspensions, 0);
        assert_eq!(t.failures(), vec![400.0]);
        assert_eq!(t.counts().left_censored, 1);
        assert!(s.shifted(300.0).is_none());
    }
}
