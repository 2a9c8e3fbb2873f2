//! Median ranks and Weibull median-rank regression.
//!
//! Owns: Johnson's adjusted ranks for suspended data, Benard's median-rank
//! approximation, and the least-squares Weibull fit on them.
//! May use: `super::mle` (for the log-likelihood at the regression
//! estimates), `crate::dist`.
//!
//! Johnson's adjusted rank (Johnson 1964, "The Statistical Treatment of
//! Fatigue Experiments"): with all `n` records sorted by hours (failures
//! before suspensions at equal hours), the `j`-th failure at position `i`
//! has rank `O_j = O_{j-1} + (n + 1 - O_{j-1}) / (1 + (n - i + 1))`, i.e.
//! the previous rank plus the remaining rank room shared among the
//! records from this one on. Benard's approximation turns the rank into an
//! unreliability, `F = (O - 0.3) / (n + 0.4)`. The regression is of
//! `ln t` on `y = ln(-ln(1 - F))` (the ranks are the better-known
//! variable): `ln t = ln scale + y / shape`.

use super::mle::{finish, weibull_ll};
use super::sample::Observed;
use super::{Family, Fit, FitError, Method, Sample};
use crate::dist::Life;

/// Failure hours with their Johnson-adjusted Benard median ranks
/// (unreliability in (0, 1)), in increasing order of hours, one per failed
/// part (counts expanded). Meant for exact failures and suspensions
/// watched from new; inspection intervals and entry ages are ignored here
/// (the plot uses [`super::turnbull`] for such data).
pub fn median_ranks(sample: &Sample) -> Vec<(f64, f64)> {
    // Canonical order is failures then suspensions, each by hours: merge
    // them into one order by hours with failures first at equal hours
    // (common practice).
    let mut items: Vec<(f64, bool, f64)> = sample
        .obs()
        .iter()
        .filter_map(|o| match o.what {
            Observed::Failure(t) => Some((t, true, o.count)),
            Observed::Suspension(t) => Some((t, false, o.count)),
            Observed::Interval { .. } => None,
        })
        .collect();
    items.sort_by(|a, b| a.0.total_cmp(&b.0).then(b.1.cmp(&a.1)));
    let n: f64 = items.iter().map(|x| x.2).sum();
    let mut prev = 0.0;
    let mut before = 0.0;
    let mut out = Vec::new();
    for &(t, failed, count) in &items {
        if failed {
            for k in 0..count as usize {
                let reverse_rank = n - (before + k as f64);
                let rank = prev + (n + 1.0 - prev) / (1.0 + reverse_rank);
                out.push((t, (rank - 0.3) / (n + 0.4)));
                prev = rank;
            }
        }
        before += count;
    }
    out
}

/// Weibull median-rank regression (labelled `rank_regression`), for
/// comparison with the MLE. Carries no standard errors; `loglik`, `aic`
/// and `bic` are evaluated at the regression estimates and the fit is not
/// AIC-ranked.
///
/// # Errors
/// [`FitError::NoFailures`], [`FitError::TooFewFailures`] with fewer than
/// two failures, [`FitError::Degenerate`] when all failures are at the
/// same hours.
pub fn fit_rank_regression(sample: &Sample) -> Result<Fit, FitError> {
    let r = sample.failure_count();
    if r == 0 {
        return Err(FitError::NoFailures {
            part: sample.part().to_string(),
            suspensions: sample.suspension_count(),
            lines: sample.lines(),
        });
    }
    if !sample.is_plain() {
        return Err(FitError::Degenerate {
            part: sample.part().to_string(),
            family: "weibull rank regression",
            reason: "median ranks need exact failure ages of parts watched from new; these data \
                     hold inspection intervals or entry ages (maximum likelihood uses them)"
                .into(),
        });
    }
    if r < 2 {
        return Err(FitError::TooFewFailures {
            part: sample.part().to_string(),
            family: "weibull rank regression",
            needed: 2,
            got: r,
        });
    }
    let pts: Vec<(f64, f64)> = median_ranks(sample)
        .into_iter()
        .map(|(t, p)| (t.ln(), (-(-p).ln_1p()).ln()))
        .collect();
    let m = pts.len() as f64;
    let mx = pts.iter().map(|p| p.0).sum::<f64>() / m;
    let my = pts.iter().map(|p| p.1).sum::<f64>() / m;
    let (mut sxy, mut syy, mut sxx) = (0.0, 0.0, 0.0);
    for &(x, y) in &pts {
        sxy += (x - mx) * (y - my);
        syy += (y - my) * (y - my);
        sxx += (x - mx) * (x - mx);
    }
    let slope = sxy / syy;
    if !(slope > 0.0 && slope.is_finite() && sxx > 0.0) {
        return Err(FitError::Degenerate {
            part: sample.part().to_string(),
            family: "weibull rank regression",
            reason: "all failures are at the same hours: the regression line is vertical".into(),
        });
    }
    let shape = 1.0 / slope;
    let scale = (mx - slope * my).exp();
    let life = Life::weibull(shape, scale)?;
    let loglik = weibull_ll(sample.obs(), shape, scale, 0.0);
    let params = vec![
        super::Estimate {
            name: "shape",
            value: shape,
            se: None,
            ci95: None,
        },
        super::Estimate {
            name: "scale",
            value: scale,
            se: None,
            ci95: None,
        },
    ];
    let mut fit = finish(
        sample,
        Family::Weibull,
        Method::RankRegression,
        params,
        loglik,
        2,
        life,
        None,
        vec![
            "median ranks (Benard, Johnson-adjusted for suspensions), least squares of ln hours \
             on ln(-ln(1-F)); loglik/AIC evaluated at these estimates, not ranked"
                .to_string(),
        ],
    );
    fit.r_squared = Some(sxy * sxy / (sxx * syy));
    fit.reliable = false;
    fit.reliability_note = Some(
        "rank regression is shown for comparison: it has no standard errors and is not ranked"
            .to_string(),
    );
    Ok(fit)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn complete_sample_ranks_are_benard() {
        // Without suspensions Johnson's rank of the i-th failure is i.
        let s = Sample::new("t", vec![30.0, 10.0, 20.0], vec![]).unwrap();
        let r = median_ranks(&s);
        for (i, (t, p)) in r.iter().enumerate() {
            assert_eq!(*t, 10.0 * (i + 1) as f64);
            let want = (i as f64 + 1.0 - 0.3) / 3.4;
            assert!((p - want).abs() < 1e-12);
        }
    }

    #[test]
    fn johnson_adjusted_ranks_textbook_example() {
        // Johnson's rank in its reverse-rank form, adjusted rank =
        // (reverse rank * previous rank + n + 1) / (reverse rank + 1)
        // (Abernethy, The New Weibull Handbook, ch. 2; from memory), worked
        // by hand for 5 records F 10, S 20, F 30, F 40, S 50:
        // (5*0 + 6)/6 = 1, (3*1 + 6)/4 = 2.25, (2*2.25 + 6)/3 = 3.5.
        let s = Sample::new("t", vec![10.0, 30.0, 40.0], vec![20.0, 50.0]).unwrap();
        let r = median_ranks(&s);
        let ranks: Vec<f64> = r.iter().map(|x| x.1 * 5.4 + 0.3).collect();
        for (a, b) in ranks.iter().zip([1.0, 2.25, 3.5]) {
            assert!((a - b).abs() < 1e-12, "{a} vs {b}");
        }
    }

    #[test]
    fn regression_recovers_exact_quantiles() {
        // Points placed exactly on a Weibull(1.8, 500) line at the Benard
        // ranks must give back those parameters.
        let n = 8;
        let f: Vec<f64> = (1..=n)
            .map(|i| {
                let p = (i as f64 - 0.3) / (n as f64 + 0.4);
                500.0 * (-(1.0 - p).ln()).powf(1.0 / 1.8)
            })
            .collect();
        let fit = fit_rank_regression(&Sample::new("t", f, vec![]).unwrap()).unwrap();
        assert!((fit.param("shape").unwrap() - 1.8).abs() < 1e-9);
        assert!((fit.param("scale").unwrap() - 500.0).abs() < 1e-7);
        assert!((fit.r_squared.unwrap() - 1.0).abs() < 1e-12);
    }
}
