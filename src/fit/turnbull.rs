//! The nonparametric estimate of the life distribution from censored and
//! truncated data, for plotting positions.
//!
//! Owns: Turnbull's self-consistency (EM) estimate (Turnbull 1976, J. R.
//! Statist. Soc. B 38, 290-295), which handles exact, right-, left- and
//! interval-censored and left-truncated observations with counts at once;
//! with exact and right-censored data alone it is the Kaplan–Meier
//! estimate.
//! May use: `super::sample`.
//!
//! The estimate puts its mass on the innermost intervals: the spans
//! between a left end of some observation's interval and the next right
//! end, with no other end between. An exact failure gives a point; a
//! failure found at an inspection may give a span, inside which the data
//! cannot say where the mass lies. Truncation (a part seen only from its
//! entry age `e`) is handled by Turnbull's "ghost" observations: each
//! part also stands for the parts of its kind that failed before `e` and
//! were never seen.

use super::sample::{Obs, Observed};

/// Mass of the estimate on one innermost interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Step {
    /// Left end of the span, hours.
    pub from: f64,
    /// Right end of the span, hours (equal to `from` for a point).
    pub to: f64,
    /// Estimated fraction failed before the span.
    pub f_before: f64,
    /// Estimated fraction failed by its end.
    pub f_after: f64,
}

impl Step {
    /// The plotting position: the middle of the step,
    /// `(F before + F after) / 2` (Meeker & Escobar 1998, sec. 6.4.2).
    pub fn position(&self) -> f64 {
        0.5 * (self.f_before + self.f_after)
    }

    /// True for a span (a failure known only within an interval).
    pub fn is_span(&self) -> bool {
        self.to > self.from
    }
}

/// An end of an observation's interval, ordered so that at equal hours a
/// closed left end (exact failure) comes first, then right ends, then open
/// left ends.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
struct End(f64, u8);

const CLOSED_LEFT: u8 = 0;
const RIGHT: u8 = 1;
const OPEN_LEFT: u8 = 2;

fn ends(o: &Obs) -> (End, End) {
    match o.what {
        Observed::Failure(t) => (End(t, CLOSED_LEFT), End(t, RIGHT)),
        Observed::Suspension(t) => (End(t, OPEN_LEFT), End(f64::INFINITY, RIGHT)),
        Observed::Interval { after, before } => {
            (End(after.max(o.entry), OPEN_LEFT), End(before, RIGHT))
        }
    }
}

fn le(a: End, b: End) -> bool {
    a.0 < b.0 || (a.0 == b.0 && a.1 <= b.1)
}

/// Turnbull's estimate: the steps with mass above 1e-9 and a finite end,
/// in increasing order of hours. Empty when there is no failure.
/// `max_iter` bounds the EM iterations (it stops earlier when no mass
/// moves by more than 1e-10).
pub fn estimate(obs: &[Obs], max_iter: usize) -> Vec<Step> {
    if !obs.iter().any(|o| o.what.is_failure()) {
        return Vec::new();
    }
    let sets: Vec<(End, End)> = obs.iter().map(ends).collect();
    let mut all: Vec<End> = sets.iter().flat_map(|&(a, b)| [a, b]).collect();
    all.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    all.dedup();
    // Innermost intervals: a left end followed directly by a right end.
    let spans: Vec<(End, End)> = all
        .windows(2)
        .filter(|w| w[0].1 != RIGHT && w[1].1 == RIGHT)
        .map(|w| (w[0], w[1]))
        .collect();
    let m = spans.len();
    if m == 0 {
        return Vec::new();
    }
    let inside = |set: &(End, End), j: usize| le(set.0, spans[j].0) && le(spans[j].1, set.1);
    let alpha: Vec<Vec<usize>> = sets
        .iter()
        .map(|s| (0..m).filter(|&j| inside(s, j)).collect())
        .collect();
    // The truncation set of a part with entry age e: failures after e.
    let seen: Vec<Option<Vec<bool>>> = obs
        .iter()
        .map(|o| {
            (o.entry > 0.0).then(|| {
                (0..m)
                    .map(|j| le(End(o.entry, OPEN_LEFT), spans[j].0))
                    .collect()
            })
        })
        .collect();
    let mut p = vec![1.0 / m as f64; m];
    let mut next = vec![0.0; m];
    for _ in 0..max_iter {
        next.iter_mut().for_each(|v| *v = 0.0);
        let mut total = 0.0;
        for (i, o) in obs.iter().enumerate() {
            let d: f64 = alpha[i].iter().map(|&j| p[j]).sum();
            if d > 0.0 {
                for &j in &alpha[i] {
                    let v = o.count * p[j] / d;
                    next[j] += v;
                    total += v;
                }
            }
            if let Some(s) = &seen[i] {
                let t: f64 = (0..m).filter(|&j| s[j]).map(|j| p[j]).sum();
                if t > 0.0 {
                    for j in (0..m).filter(|&j| !s[j]) {
                        let v = o.count * p[j] / t;
                        next[j] += v;
                        total += v;
                    }
                }
            }
        }
        if total.is_nan() || total <= 0.0 {
            break;
        }
        let mut moved: f64 = 0.0;
        for j in 0..m {
            let v = next[j] / total;
            moved = moved.max((v - p[j]).abs());
            p[j] = v;
        }
        if moved < 1e-10 {
            break;
        }
    }
    let mut out = Vec::new();
    let mut cum = 0.0;
    for j in 0..m {
        let before = cum;
        cum += p[j];
        if p[j] > 1e-9 && spans[j].1.0.is_finite() {
            out.push(Step {
                from: spans[j].0.0,
                to: spans[j].1.0,
                f_before: before,
                f_after: cum.min(1.0),
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_and_right_censored_data_give_kaplan_meier() {
        // Kaplan & Meier (1958) product-limit, worked by hand: failures at
        // 10, 30, 40; suspensions at 20, 50. S(10) = 4/5, S(30) = 4/5 * 2/3,
        // S(40) = 4/5 * 2/3 * 1/2.
        let obs = vec![
            Obs::failure(10.0),
            Obs::suspension(20.0),
            Obs::failure(30.0),
            Obs::failure(40.0),
            Obs::suspension(50.0),
        ];
        let s = estimate(&obs, 10_000);
        let f: Vec<f64> = s.iter().map(|x| x.f_after).collect();
        let want = [0.2, 1.0 - 8.0 / 15.0, 1.0 - 4.0 / 15.0];
        assert_eq!(s.len(), 3);
        for (a, b) in f.iter().zip(want) {
            assert!((a - b).abs() < 1e-7, "{a} vs {b}");
        }
        assert!(s.iter().all(|x| !x.is_span()));
    }

    #[test]
    fn interval_data_put_mass_on_spans() {
        // Two inspections: 3 of 10 found failed at 100 h, 2 more at 200 h,
        // 5 working at 200 h. The estimate: F(100) = 0.3, F(200) = 0.5,
        // the mass of each inspection on its whole span.
        let obs = vec![
            Obs::interval(0.0, 100.0).times(3.0),
            Obs::interval(100.0, 200.0).times(2.0),
            Obs::suspension(200.0).times(5.0),
        ];
        let s = estimate(&obs, 10_000);
        assert_eq!(s.len(), 2);
        assert!(s[0].is_span() && (s[0].f_after - 0.3).abs() < 1e-9);
        assert!((s[1].from, s[1].to) == (100.0, 200.0));
        assert!((s[1].f_after - 0.5).abs() < 1e-9);
    }

    #[test]
    fn truncation_raises_the_estimate_of_early_failure() {
        // Parts seen only from age 50: without the entry ages the failure
        // at 60 looks like 1 in 4; with them, the part failing at 30 (seen
        // from new) shows early failures, and the risk set at 60 is the
        // same 4, so the estimate by 60 is at least as high.
        let plain = vec![
            Obs::failure(30.0),
            Obs::failure(60.0),
            Obs::suspension(100.0).times(3.0),
        ];
        let trunc = vec![
            Obs::failure(30.0),
            Obs::failure(60.0),
            Obs::suspension(100.0).times(3.0).entered_at(50.0),
        ];
        let a = estimate(&plain, 10_000);
        let b = estimate(&trunc, 10_000);
        assert!(b[1].f_after >= a[1].f_after - 1e-9, "{a:?} {b:?}");
    }
}
