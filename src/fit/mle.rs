//! Maximum-likelihood fits of the five families to any mix of exact,
//! right-, left- and interval-censored, left-truncated and counted
//! observations.
//!
//! Owns: the maximisation of each family's log-likelihood
//! ([`super::lik`]), the observed-information covariance of the
//! log-parameters, Wald / log-Wald intervals, and the judgement whether a
//! fit's standard errors can be trusted.
//! May use: `super::lik`, `super::lr`, `super::optim`, `super::sample`,
//! `crate::dist`.
//!
//! Methods. Weibull (2-p), data without intervals: the scale is profiled
//! out, `eta^beta = sum w (t^beta - e^beta) / r` (sums over every part,
//! `e` its entry age, `r` the failures), and the shape solves the profile
//! score equation `s1(b) / s0(b) - 1/b - mean(ln t_fail) = 0` (Lawless
//! 2003, sec. 5.2, with the truncation terms of sec. 2.4), by bracketing
//! and Brent's method; the information is analytic. Weibull (2-p) with
//! intervals, lognormal and gamma: Nelder–Mead on the log-parameters from
//! several starts (one from the data with each interval replaced by its
//! middle), polished by Newton steps on a finite-difference Hessian, which
//! also gives the information. Weibull (3-p): the profile log-likelihood
//! over the location on a grid in `[0, smallest failure bound)`, refined by
//! golden section; a maximum at 0 is reported as a boundary estimate, a
//! likelihood still rising at the bound as an error. Exponential: closed
//! form without intervals (total time on test over failures), else a
//! one-dimensional search.

use super::lik::Dist;
use super::optim::{
    brent_root, golden_max, gradient_hessian, max_1d, nelder_mead, newton_polish, spd_inverse,
};
use super::sample::{Obs, Observed, Sample};
use super::{Estimate, Family, Fit, FitError, LogParamCovariance, Method};
use crate::dist::{Life, normal_quantile};

/// Largest Weibull shape accepted; beyond it the failures are as good as
/// identical and no shape is meaningful.
const MAX_SHAPE: f64 = 1e6;
/// Weibull shapes searched when the data hold intervals.
const SHAPE_BOX: (f64, f64) = (1e-2, 1e4);
/// A scale beyond this multiple of the largest age in the data means the
/// likelihood has no maximum at finite parameters.
const MAX_SCALE_OVER_AGE: f64 = 1e6;

/// Reason given when the scale runs away.
fn scale_runs_away(scale: f64) -> String {
    format!(
        "the maximum runs off to an extreme (scale {scale:.3e}, beyond a million times the \
         longest age in the data): the likelihood has no maximum at finite parameters (typically \
         when every failure was found at the first inspection and nothing failed later)"
    )
}
/// Bounds on the gamma shape searched.
const GAMMA_SHAPE_RANGE: (f64, f64) = (1e-3, 1e4);
/// Bounds on the lognormal sigma searched.
const SIGMA_RANGE: (f64, f64) = (1e-8, 1e3);
/// A log-parameter whose standard error exceeds this has a 95% interval
/// spanning more than a factor exp(2 x 1.96) = 50: not to be trusted.
const MAX_TRUSTED_SE_LOG: f64 = 1.0;

/// Reason given when interval data are matched perfectly (log-likelihood 0).
const NO_SPREAD: &str = "every failure lies in an inspection interval that a distribution \
     concentrated enough fills completely (the likelihood reaches its upper limit 1): the data \
     give no spread to estimate; a one-parameter fit (exponential) or an assumed Weibull shape \
     still works";

/// True when a log-likelihood of interval data is at its upper limit 0.
fn at_upper_limit(sample: &Sample, loglik: f64) -> bool {
    sample.has_intervals() && loglik > -1e-6
}

/// Reason given when no finite log-likelihood was found.
const NOT_EVALUABLE: &str = "no parameters give a finite log-likelihood (hours too extreme for \
     floating point; try the data in other units, e.g. thousands of hours)";

/// The two-sided 95% standard-normal quantile, 1.959964.
pub(crate) fn z95() -> f64 {
    normal_quantile(0.975)
}

/// The 95% point of chi-square with 1 d.f. (3.841459 = z95^2).
pub(crate) fn chi2_95_1df() -> f64 {
    z95() * z95()
}

fn degenerate(sample: &Sample, family: Family, reason: impl Into<String>) -> FitError {
    FitError::Degenerate {
        part: sample.part().to_string(),
        family: family.name(),
        reason: reason.into(),
    }
}

/// An estimate of a positive parameter with a log-Wald interval, from the
/// standard deviation of its logarithm.
pub(crate) fn positive_estimate(name: &'static str, value: f64, sd_log: Option<f64>) -> Estimate {
    let sd = sd_log.filter(|v| v.is_finite());
    let z = z95();
    Estimate {
        name,
        value,
        se: sd.map(|s| value * s),
        ci95: sd.map(|s| [value * (-z * s).exp(), value * (z * s).exp()]),
    }
}

/// An estimate with a plain Wald interval, clipped below at `floor`.
fn wald_estimate(name: &'static str, value: f64, sd: Option<f64>, floor: f64) -> Estimate {
    let sd = sd.filter(|v| v.is_finite());
    let z = z95();
    Estimate {
        name,
        value,
        se: sd,
        ci95: sd.map(|s| [(value - z * s).max(floor), value + z * s]),
    }
}

/// Assemble a fit: AIC, BIC and bookkeeping.
#[allow(clippy::too_many_arguments)]
pub(crate) fn finish(
    sample: &Sample,
    family: Family,
    method: Method,
    params: Vec<Estimate>,
    loglik: f64,
    n_params: usize,
    life: Life,
    log_cov: Option<LogParamCovariance>,
    notes: Vec<String>,
) -> Fit {
    let k = n_params as f64;
    let n = sample.len() as f64;
    let counts = sample.counts();
    Fit {
        part: sample.part().to_string(),
        distribution: family,
        method,
        params,
        lr_ci95: Vec::new(),
        b_lives: Vec::new(),
        loglik,
        aic: 2.0 * k - 2.0 * loglik,
        bic: k * n.ln() - 2.0 * loglik,
        failures: counts.failures(),
        suspensions: counts.suspensions,
        counts,
        aic_rank: None,
        r_squared: None,
        reliable: true,
        reliability_note: None,
        notes,
        assumed: None,
        life,
        log_cov,
        location_cap: sample.earliest_failure_bound(),
    }
}

/// Decide whether a maximum-likelihood fit's standard errors can be
/// trusted, and say why not.
fn judge(fit: &mut Fit, n_params: usize, extra: Option<String>) {
    let why = if let Some(e) = extra {
        Some(e)
    } else if fit.log_cov.is_none() {
        Some("no standard errors: the observed information is not positive definite".to_string())
    } else if fit.failures <= n_params {
        Some(format!(
            "{} failures for {} parameters: the estimates rest on too few failures",
            fit.failures, n_params
        ))
    } else if let Some((name, sd)) = fit.log_cov.as_ref().and_then(|c| {
        c.names
            .iter()
            .enumerate()
            .filter(|(_, n)| n.starts_with("ln "))
            .filter_map(|(i, n)| c.sd(i).map(|s| (*n, s)))
            .find(|(_, s)| s.is_nan() || *s > MAX_TRUSTED_SE_LOG)
    }) {
        Some(format!(
            "standard errors too large to trust: the 95% interval of {} spans a factor of {:.0}",
            name.trim_start_matches("ln "),
            (2.0 * z95() * sd).exp()
        ))
    } else {
        None
    };
    fit.reliable = why.is_none();
    fit.reliability_note = why;
}

/// Fit one family by maximum likelihood.
///
/// # Errors
/// [`FitError::NoFailures`]; [`FitError::SingleFailure`] for the
/// families of two or three parameters with one failure; [`FitError::TooFewFailures`]
/// for the 3-parameter Weibull with fewer than 3 failures;
/// [`FitError::Degenerate`] or [`FitError::LocationAtBoundary`] when the
/// likelihood has no usable maximum.
pub fn fit_mle(sample: &Sample, family: Family) -> Result<Fit, FitError> {
    let r = sample.failure_count();
    if r == 0 {
        return Err(FitError::NoFailures {
            part: sample.part().to_string(),
            suspensions: sample.suspension_count(),
            lines: sample.lines(),
        });
    }
    if r == 1 && family != Family::Exponential {
        return Err(FitError::SingleFailure {
            part: sample.part().to_string(),
            family: family.name(),
            params: if family.n_params() == 3 {
                "three"
            } else {
                "two"
            },
            suspensions: sample.suspension_count(),
        });
    }
    match family {
        Family::Weibull => fit_weibull(sample),
        Family::Weibull3 => fit_weibull3(sample),
        Family::Lognormal => fit_lognormal(sample),
        Family::Gamma => fit_gamma(sample),
        Family::Exponential => fit_exponential(sample),
    }
}

/// Failure ages to start searches from: exact failures as they are, an
/// interval by its middle (from the entry age), each with its count.
fn start_failures(obs: &[Obs]) -> Vec<(f64, f64)> {
    obs.iter()
        .filter_map(|o| match o.what {
            Observed::Failure(t) => Some((t, o.count)),
            Observed::Interval { after, before } => {
                Some((0.5 * (after.max(o.entry) + before), o.count))
            }
            Observed::Suspension(_) => None,
        })
        .collect()
}

/// A copy of the observations with every interval replaced by an exact
/// failure at its middle (for starting values only).
fn midpoint_obs(obs: &[Obs]) -> Vec<Obs> {
    obs.iter()
        .map(|o| match o.what {
            Observed::Interval { after, before } => Obs {
                what: Observed::Failure(0.5 * (after.max(o.entry) + before)),
                ..*o
            },
            _ => *o,
        })
        .collect()
}

/// Weighted mean and standard deviation (divisor: the total weight).
fn weighted_mean_sd(v: &[(f64, f64)]) -> (f64, f64) {
    let w: f64 = v.iter().map(|p| p.1).sum();
    let m = v.iter().map(|p| p.0 * p.1).sum::<f64>() / w;
    let var = v.iter().map(|p| p.1 * (p.0 - m) * (p.0 - m)).sum::<f64>() / w;
    (m, var.sqrt())
}

// ----------------------------------------------------------------- Weibull

/// A 2-parameter Weibull maximum: shape, scale, log-likelihood.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Weibull2 {
    pub beta: f64,
    pub eta: f64,
    pub loglik: f64,
}

/// The log-likelihood of a Weibull (shape, scale, location) on `obs`.
pub(crate) fn weibull_ll(obs: &[Obs], beta: f64, eta: f64, loc: f64) -> f64 {
    Dist::Weibull { beta, eta, loc }.loglik(obs)
}

/// Profile data of observations without intervals: log-ages relative to
/// the largest age, with signed counts (an entry age counts negatively).
pub(crate) struct Profile {
    /// (ln t - ln t_max, count, ln e - ln t_max or -inf without entry age).
    x: Vec<(f64, f64, f64)>,
    /// Sum of x over failures, with counts.
    sum_xf: f64,
    ln_tmax: f64,
    r: f64,
}

impl Profile {
    /// `None` when the observations hold an interval or no failure.
    pub(crate) fn new(obs: &[Obs]) -> Option<Self> {
        let age = |o: &Obs| match o.what {
            Observed::Failure(t) | Observed::Suspension(t) => Some(t),
            Observed::Interval { .. } => None,
        };
        let mut ln_tmax = f64::NEG_INFINITY;
        for o in obs {
            ln_tmax = ln_tmax.max(age(o)?.ln());
        }
        let mut x = Vec::with_capacity(obs.len());
        let (mut sum_xf, mut r) = (0.0, 0.0);
        for o in obs {
            let xt = age(o)?.ln() - ln_tmax;
            let xe = if o.entry > 0.0 {
                o.entry.ln() - ln_tmax
            } else {
                f64::NEG_INFINITY
            };
            x.push((xt, o.count, xe));
            if let Observed::Failure(_) = o.what {
                sum_xf += o.count * xt;
                r += o.count;
            }
        }
        (r > 0.0).then_some(Profile {
            x,
            sum_xf,
            ln_tmax,
            r,
        })
    }

    /// `s0 = sum w (exp(b x_t) - exp(b x_e))` and `s1 = sum w (x_t exp(b x_t) - x_e exp(b x_e))`.
    fn sums(&self, b: f64) -> (f64, f64) {
        let (mut s0, mut s1) = (0.0, 0.0);
        for &(xt, w, xe) in &self.x {
            let ut = (b * xt).exp();
            if xe > f64::NEG_INFINITY {
                let ue = (b * xe).exp();
                s0 += w * ut * (-(b * (xe - xt)).exp_m1());
                s1 += w * (xt * ut - xe * ue);
            } else {
                s0 += w * ut;
                s1 += w * xt * ut;
            }
        }
        (s0, s1)
    }

    /// The profile score in the shape.
    fn score(&self, b: f64) -> f64 {
        let (s0, s1) = self.sums(b);
        s1 / s0 - 1.0 / b - self.sum_xf / self.r
    }

    /// ln eta maximising the likelihood for shape `b`.
    pub(crate) fn ln_eta(&self, b: f64) -> f64 {
        let (s0, _) = self.sums(b);
        self.ln_tmax + (s0 / self.r).ln() / b
    }

    /// Profile log-likelihood at shape `b`.
    pub(crate) fn loglik(&self, b: f64) -> f64 {
        let le = self.ln_eta(b);
        // sum over failures of z = ln t - ln eta, written to avoid cancellation.
        let sum_z = self.sum_xf + self.r * (self.ln_tmax - le);
        self.r * (b.ln() - le) + (b - 1.0) * sum_z - self.r
    }
}

/// Weibull MLE of observations without intervals, by the profile score.
fn weibull2_profile(obs: &[Obs]) -> Result<Weibull2, String> {
    let p = Profile::new(obs).ok_or_else(|| "no failures".to_string())?;
    let mut hi = 1.0;
    while p.score(hi) <= 0.0 {
        hi *= 2.0;
        if hi > MAX_SHAPE || p.score(hi).is_nan() {
            return Err(format!(
                "the likelihood keeps rising with the shape past {MAX_SHAPE:.0}: the failures are \
                 (almost) all at the longest hours in the data, so there is no spread to estimate"
            ));
        }
    }
    let mut lo = hi / 2.0;
    while p.score(lo) >= 0.0 {
        lo /= 2.0;
        if lo < 1e-8 {
            return Err("the shape runs below 1e-8: the data are too spread out to fit".into());
        }
    }
    let beta = brent_root(&mut |b| p.score(b), lo, hi, 1e-13)
        .ok_or_else(|| "the shape equation has no root (not finite)".to_string())?;
    let le = p.ln_eta(beta);
    let loglik = p.loglik(beta);
    let eta = le.exp();
    if !(eta.is_finite() && eta > 0.0 && loglik.is_finite()) {
        return Err("the scale is not a finite positive number".into());
    }
    Ok(Weibull2 { beta, eta, loglik })
}

/// Weibull MLE of any observations: the profile score without intervals,
/// a simplex search polished by Newton steps with them.
pub(crate) fn weibull2(sample: &Sample) -> Result<Weibull2, String> {
    let obs = sample.obs();
    if !sample.has_intervals() {
        let w = weibull2_profile(obs)?;
        // With entry ages the profile score need not be monotone: make sure
        // the root is a maximum, else search in full.
        if !sample.has_entry_ages() || is_local_max(obs, &w) {
            return Ok(w);
        }
    }
    weibull2_search(sample)
}

fn is_local_max(obs: &[Obs], w: &Weibull2) -> bool {
    [(1.001, 1.0), (0.999, 1.0), (1.0, 1.001), (1.0, 0.999)]
        .iter()
        .all(|(a, b)| weibull_ll(obs, w.beta * a, w.eta * b, 0.0) <= w.loglik + 1e-9)
}

fn weibull2_search(sample: &Sample) -> Result<Weibull2, String> {
    let obs = sample.obs();
    let (lo, hi) = (SHAPE_BOX.0.ln(), SHAPE_BOX.1.ln());
    let mut ll = |p: &[f64]| {
        if p[0] < lo || p[0] > hi {
            return f64::NEG_INFINITY;
        }
        weibull_ll(obs, p[0].exp(), p[1].exp(), 0.0)
    };
    let f = start_failures(obs);
    let (m, _) = weighted_mean_sd(&f);
    let mut starts = vec![[0.0, m.ln()]];
    if let Ok(w) = weibull2_profile(&midpoint_obs(obs)) {
        let b = w.beta.clamp(2.0 * SHAPE_BOX.0, 0.5 * SHAPE_BOX.1);
        starts.insert(0, [b.ln(), w.eta.ln()]);
        starts.push([(2.0 * b).min(0.5 * SHAPE_BOX.1).ln(), w.eta.ln()]);
        starts.push([(0.5 * b).ln(), w.eta.ln()]);
    }
    let x = maximise2(&mut ll, &starts, [0.3, 0.3]);
    let x = newton_polish(&mut ll, &x, &[1e-4, 1e-4]);
    let loglik = ll(&x);
    if !loglik.is_finite() {
        return Err(NOT_EVALUABLE.to_string());
    }
    if at_upper_limit(sample, loglik) {
        return Err(NO_SPREAD.to_string());
    }
    if x[0] >= hi - 0.05 {
        return Err(format!(
            "the likelihood keeps rising with the shape past {:.0}: the failures cannot be told \
             apart in time (e.g. all found in one inspection interval), so there is no spread to \
             estimate",
            SHAPE_BOX.1 * 0.95
        ));
    }
    if x[0] <= lo + 0.05 {
        return Err(format!(
            "the shape runs to the lower edge of the search range ({}): the likelihood keeps \
             rising as the distribution spreads out, so it has no maximum at finite parameters",
            SHAPE_BOX.0
        ));
    }
    if x[1].exp() > MAX_SCALE_OVER_AGE * sample.largest_age() {
        return Err(scale_runs_away(x[1].exp()));
    }
    Ok(Weibull2 {
        beta: x[0].exp(),
        eta: x[1].exp(),
        loglik,
    })
}

/// Observed information of the Weibull in (shape, scale), analytic, for
/// observations without intervals (entry ages count with a minus sign).
fn weibull_info(obs: &[Obs], beta: f64, eta: f64) -> [[f64; 2]; 2] {
    let le = eta.ln();
    let (mut r, mut su, mut suz, mut suz2) = (0.0, 0.0, 0.0, 0.0);
    let mut add = |t: f64, w: f64| {
        let z = t.ln() - le;
        let u = (beta * z).exp();
        su += w * u;
        suz += w * u * z;
        suz2 += w * u * z * z;
    };
    for o in obs {
        match o.what {
            Observed::Failure(t) => {
                r += o.count;
                add(t, o.count);
            }
            Observed::Suspension(t) => add(t, o.count),
            Observed::Interval { .. } => {}
        }
        if o.entry > 0.0 {
            add(o.entry, -o.count);
        }
    }
    let i_bb = r / (beta * beta) + suz2;
    let i_ee = -(beta / (eta * eta)) * (r - (beta + 1.0) * su);
    let i_be = (r - su) / eta - beta / eta * suz;
    [[i_bb, i_be], [i_be, i_ee]]
}

/// Covariance of (ln shape, ln scale): analytic without intervals,
/// numerical with them.
fn weibull_log_cov(sample: &Sample, beta: f64, eta: f64) -> Option<LogParamCovariance> {
    let obs = sample.obs();
    let names = vec!["ln shape", "ln scale"];
    if sample.has_intervals() {
        let mut ll = |p: &[f64]| weibull_ll(obs, p[0].exp(), p[1].exp(), 0.0);
        return numeric_cov(&mut ll, &[beta.ln(), eta.ln()], &[1e-4, 1e-4], names);
    }
    let i = weibull_info(obs, beta, eta);
    let d = [beta, eta];
    let il: Vec<Vec<f64>> = (0..2)
        .map(|a| (0..2).map(|b| i[a][b] * d[a] * d[b]).collect())
        .collect();
    let cov = spd_inverse(&il)?;
    LogParamCovariance::new(names, vec![beta.ln(), eta.ln()], cov)
}

fn fit_weibull(sample: &Sample) -> Result<Fit, FitError> {
    let w = weibull2(sample).map_err(|m| degenerate(sample, Family::Weibull, m))?;
    let cov = weibull_log_cov(sample, w.beta, w.eta);
    let mut notes = Vec::new();
    if cov.is_none() {
        notes.push("observed information not positive definite: no standard errors".to_string());
    }
    let params = vec![
        positive_estimate("shape", w.beta, cov.as_ref().and_then(|c| c.sd(0))),
        positive_estimate("scale", w.eta, cov.as_ref().and_then(|c| c.sd(1))),
    ];
    let life = Life::weibull(w.beta, w.eta)?;
    let mut fit = finish(
        sample,
        Family::Weibull,
        Method::Mle,
        params,
        w.loglik,
        2,
        life,
        cov,
        notes,
    );
    let lr = super::lr::weibull_intervals(sample, &w, fit.log_cov.as_ref());
    let mut open = Vec::new();
    for (name, ci) in &lr.ci {
        match ci {
            Some(ci) => fit.lr_ci95.push((name, *ci)),
            None => open.push(*name),
        }
    }
    fit.b_lives = lr.b_lives;
    if !open.is_empty() {
        fit.notes.push(format!(
            "the likelihood-ratio interval is open-ended (the likelihood stays within 1.92 of its \
             maximum) for: {}",
            open.join(", ")
        ));
    }
    let extra = open.contains(&"shape").then(|| {
        "the likelihood-ratio interval of the shape is open-ended: the data barely fix the shape"
            .to_string()
    });
    judge(&mut fit, 2, extra);
    Ok(fit)
}

/// Weibull with the shape given from experience: the MLE of the scale
/// alone. Without intervals it is the closed form
/// `eta = (sum w (t^shape - e^shape) / r)^(1/shape)` with
/// `var(ln eta) = 1 / (shape^2 r)` from the observed information; with
/// intervals a one-dimensional search and a numerical information. Works
/// from one failure up; the intervals ignore any error in the given shape.
/// (For a one-sided lower bound that also works without failures, see
/// [`super::fit_assumed_shape`].)
///
/// # Errors
/// [`FitError::NoFailures`], or [`FitError::Degenerate`] when the shape is
/// not finite and positive.
pub fn fit_weibull_known_shape(sample: &Sample, shape: f64) -> Result<Fit, FitError> {
    if sample.failure_count() == 0 {
        return Err(FitError::NoFailures {
            part: sample.part().to_string(),
            suspensions: sample.suspension_count(),
            lines: sample.lines(),
        });
    }
    if !(shape > 0.0 && shape.is_finite()) {
        return Err(degenerate(
            sample,
            Family::Weibull,
            format!("the given shape must be a finite number greater than 0 (got {shape})"),
        ));
    }
    let (le, sd) = scale_given_shape(sample, shape)
        .ok_or_else(|| degenerate(sample, Family::Weibull, NOT_EVALUABLE))?;
    let eta = le.exp();
    let loglik = weibull_ll(sample.obs(), shape, eta, 0.0);
    let life = Life::weibull(shape, eta)?;
    let cov =
        sd.and_then(|sd| LogParamCovariance::new(vec!["ln scale"], vec![le], vec![vec![sd * sd]]));
    let params = vec![
        Estimate {
            name: "shape",
            value: shape,
            se: None,
            ci95: None,
        },
        positive_estimate("scale", eta, sd),
    ];
    Ok(finish(
        sample,
        Family::Weibull,
        Method::Mle,
        params,
        loglik,
        1,
        life,
        cov,
        vec![format!(
            "shape fixed at {shape} from experience, not estimated; only the scale is fitted \
             and its interval ignores any error in the shape"
        )],
    ))
}

/// ln eta maximising the likelihood for a given shape, and the standard
/// deviation of ln eta (inverse observed information). Needs a failure.
pub(crate) fn scale_given_shape(sample: &Sample, shape: f64) -> Option<(f64, Option<f64>)> {
    let obs = sample.obs();
    if let Some(p) = Profile::new(obs) {
        let le = p.ln_eta(shape);
        return le
            .is_finite()
            .then(|| (le, Some(1.0 / (shape * p.r.sqrt()))));
    }
    let f = start_failures(obs);
    if f.is_empty() {
        return None;
    }
    let (m, _) = weighted_mean_sd(&f);
    let mut ll = |le: f64| weibull_ll(obs, shape, le.exp(), 0.0);
    let (le, _) = max_1d(&mut ll, m.ln(), 0.5, -700.0, 700.0, 1e-12).ok()?;
    let sd = gradient_hessian(&mut |p: &[f64]| ll(p[0]), &[le], &[1e-4])
        .and_then(|(_, h)| (h[0][0] < 0.0).then(|| (-1.0 / h[0][0]).sqrt()));
    Some((le, sd))
}

/// Profile log-likelihood of the 3-parameter Weibull at location `g`.
fn weibull3_profile(sample: &Sample, g: f64) -> Option<Weibull2> {
    weibull2(&sample.shifted(g)?).ok()
}

fn fit_weibull3(sample: &Sample) -> Result<Fit, FitError> {
    let r = sample.failure_count();
    if r < 3 {
        return Err(FitError::TooFewFailures {
            part: sample.part().to_string(),
            family: Family::Weibull3.name(),
            needed: 3,
            got: r,
        });
    }
    let t1 = sample.earliest_failure_bound();
    // Grid of locations as fractions of the smallest failure bound: even
    // steps, then ever closer to it.
    let mut q: Vec<f64> = (0..40).map(|j| j as f64 / 40.0).collect();
    q.extend((0..18).map(|k| 1.0 - 10f64.powf(-(1.75 + 0.25 * k as f64))));
    let prof = |g: f64| weibull3_profile(sample, g).map_or(f64::NEG_INFINITY, |w| w.loglik);
    let ll: Vec<f64> = q.iter().map(|&qq| prof(qq * t1)).collect();
    let last = q.len() - 1;
    // Candidate maxima: interior local maxima, and 0 when it is a local maximum.
    let mut cands: Vec<usize> = (1..last)
        .filter(|&i| ll[i].is_finite() && ll[i] >= ll[i - 1] && ll[i] >= ll[i + 1])
        .collect();
    if ll[0].is_finite() && ll[0] >= ll[1] {
        cands.push(0);
    }
    let Some(&best) = cands.iter().max_by(|&&a, &&b| ll[a].total_cmp(&ll[b])) else {
        if ll.iter().all(|v| !v.is_finite()) {
            return Err(degenerate(
                sample,
                Family::Weibull3,
                "no 2-parameter Weibull fits at any location",
            ));
        }
        return Err(FitError::LocationAtBoundary {
            part: sample.part().to_string(),
            smallest_failure: t1,
        });
    };
    let mut notes = Vec::new();
    if best == 0 {
        let w = weibull2(sample).map_err(|m| degenerate(sample, Family::Weibull3, m))?;
        let cov = weibull_log_cov(sample, w.beta, w.eta);
        notes.push(
            "location estimate on the boundary 0: the data show no failure-free period; \
             this fit equals the 2-parameter Weibull (with one more parameter counted in AIC)"
                .to_string(),
        );
        let params = vec![
            positive_estimate("shape", w.beta, cov.as_ref().and_then(|c| c.sd(0))),
            positive_estimate("scale", w.eta, cov.as_ref().and_then(|c| c.sd(1))),
            Estimate {
                name: "location",
                value: 0.0,
                se: None,
                ci95: None,
            },
        ];
        let life = Life::weibull3(w.beta, w.eta, 0.0)?;
        let mut fit = finish(
            sample,
            Family::Weibull3,
            Method::Mle,
            params,
            w.loglik,
            3,
            life,
            cov,
            notes,
        );
        judge(
            &mut fit,
            3,
            Some(
                "the location is on its boundary 0 (no failure-free period), where it has no \
                 standard error; the 2-parameter Weibull is the same fit"
                    .to_string(),
            ),
        );
        return Ok(fit);
    }
    let (a, b) = (q[best - 1] * t1, q[best + 1] * t1);
    let (g, ll_g) = golden_max(&mut |g| prof(g), a, b);
    let (g, _) = if ll_g >= ll[best] {
        (g, ll_g)
    } else {
        (q[best] * t1, ll[best])
    };
    let w = weibull3_profile(sample, g)
        .ok_or_else(|| degenerate(sample, Family::Weibull3, "the profile fit failed"))?;
    let mut extra = None;
    if ll[last] > w.loglik {
        notes.push(format!(
            "the likelihood is unbounded as the location approaches the smallest failure \
             ({t1} h); the interior local maximum is reported"
        ));
        extra = Some(
            "the likelihood is unbounded as the location approaches the smallest failure; the \
             reported fit is only a local maximum"
                .to_string(),
        );
    }
    if w.beta < 2.0 {
        notes.push(
            "shape below 2: the 3-parameter Weibull is a non-regular problem there, so the \
             location's standard error and interval are rough"
                .to_string(),
        );
        // Smith (1985, Biometrika 72, 67-90; from memory): below shape 2 the estimates
        // are not asymptotically normal with the usual information.
        extra.get_or_insert_with(|| {
            "shape below 2: the location's standard error does not follow the usual theory \
             (non-regular likelihood), so the standard errors are rough"
                .to_string()
        });
    }
    // Observed information in (ln shape, ln scale, location), numerically.
    let obs = sample.obs();
    let hg = (1e-4 * w.eta).min(0.01 * (t1 - g)).max(1e-12 * t1);
    let h = [1e-4, 1e-4 / w.beta.max(1.0), hg];
    let mut ll3 = |p: &[f64]| weibull_ll(obs, p[0].exp(), p[1].exp(), p[2]);
    let center = vec![w.beta.ln(), w.eta.ln(), g];
    let cov = gradient_hessian(&mut ll3, &center, &h).and_then(|(_, hm)| {
        let neg: Vec<Vec<f64>> = hm.iter().map(|r| r.iter().map(|v| -v).collect()).collect();
        spd_inverse(&neg)
    });
    let cov = cov.and_then(|c| {
        LogParamCovariance::new(vec!["ln shape", "ln scale", "location"], center.clone(), c)
    });
    if cov.is_none() {
        notes.push("observed information not positive definite: no standard errors".to_string());
    }
    let sd = |i: usize| cov.as_ref().and_then(|c| c.sd(i));
    let params = vec![
        positive_estimate("shape", w.beta, sd(0)),
        positive_estimate("scale", w.eta, sd(1)),
        wald_estimate("location", g, sd(2), 0.0),
    ];
    let life = Life::weibull3(w.beta, w.eta, g)?;
    let mut fit = finish(
        sample,
        Family::Weibull3,
        Method::Mle,
        params,
        w.loglik,
        3,
        life,
        cov,
        notes,
    );
    judge(&mut fit, 3, extra);
    Ok(fit)
}

// ---------------------------------------------------------- two-parameter

/// All failures exact and at one time, no interval, and no suspension
/// beyond: the likelihood of a two-parameter family without a shape limit
/// is unbounded.
fn failures_identical_and_last(sample: &Sample) -> Option<f64> {
    if sample.has_intervals() {
        return None;
    }
    let (mut lo, mut hi, mut smax) = (f64::INFINITY, f64::NEG_INFINITY, f64::NEG_INFINITY);
    for o in sample.obs() {
        match o.what {
            Observed::Failure(t) => {
                lo = lo.min(t);
                hi = hi.max(t);
            }
            Observed::Suspension(t) => smax = smax.max(t),
            Observed::Interval { .. } => {}
        }
    }
    (hi - lo <= 1e-12 * hi && smax <= hi).then_some(hi)
}

/// Covariance of the log-parameters from a numerical Hessian of `ll`.
fn numeric_cov(
    ll: &mut dyn FnMut(&[f64]) -> f64,
    x: &[f64],
    h: &[f64],
    names: Vec<&'static str>,
) -> Option<LogParamCovariance> {
    let (_, hm) = gradient_hessian(ll, x, h)?;
    let neg: Vec<Vec<f64>> = hm.iter().map(|r| r.iter().map(|v| -v).collect()).collect();
    let cov = spd_inverse(&neg)?;
    LogParamCovariance::new(names, x.to_vec(), cov)
}

/// Maximise `ll` over a 2-vector: a coarse simplex search from each start,
/// then a fine one from the best; returns the best point.
fn maximise2(ll: &mut dyn FnMut(&[f64]) -> f64, starts: &[[f64; 2]], step: [f64; 2]) -> Vec<f64> {
    let mut best: Option<(Vec<f64>, f64)> = None;
    for st in starts {
        if !st.iter().all(|v| v.is_finite()) {
            continue;
        }
        let (x, v) = nelder_mead(&mut |p| -ll(p), st, &step, 600, 1e-6);
        if best.as_ref().is_none_or(|b| v < b.1) {
            best = Some((x, v));
        }
    }
    let x0 = best.map(|b| b.0).unwrap_or_else(|| starts[0].to_vec());
    let fine = [0.1 * step[0], 0.1 * step[1]];
    nelder_mead(&mut |p| -ll(p), &x0, &fine, 4000, 1e-12).0
}

fn fit_lognormal(sample: &Sample) -> Result<Fit, FitError> {
    let fam = Family::Lognormal;
    if let Some(t) = failures_identical_and_last(sample) {
        return Err(degenerate(
            sample,
            fam,
            format!(
                "all failures are at {t} h and nothing ran longer: the likelihood grows without \
                 bound as sigma goes to 0"
            ),
        ));
    }
    let obs = sample.obs();
    let logs =
        |v: Vec<(f64, f64)>| -> Vec<(f64, f64)> { v.iter().map(|p| (p.0.ln(), p.1)).collect() };
    let lf = logs(start_failures(obs));
    let la = logs(
        start_failures(obs)
            .into_iter()
            .chain(obs.iter().filter_map(|o| match o.what {
                Observed::Suspension(t) => Some((t, o.count)),
                _ => None,
            }))
            .collect(),
    );
    let (m0, s0) = weighted_mean_sd(&lf);
    let (ma, sa) = weighted_mean_sd(&la);
    let sig = |v: f64| v.max(1e-3).ln();
    let (lo, hi) = (SIGMA_RANGE.0.ln(), SIGMA_RANGE.1.ln());
    let mut ll = |p: &[f64]| {
        if p[1] < lo || p[1] > hi {
            return f64::NEG_INFINITY;
        }
        Dist::Lognormal {
            mu: p[0],
            sigma: p[1].exp(),
        }
        .loglik(obs)
    };
    let spread = s0.max(sa).max(1e-3);
    let starts = [
        [m0, sig(s0)],
        [ma, sig(sa)],
        [ma + spread, sig(sa.max(s0) * 1.5)],
    ];
    let x = maximise2(&mut ll, &starts, [0.5 * spread, 0.3]);
    let x = newton_polish(&mut ll, &x, &[1e-4 * x[1].exp(), 1e-4]);
    let (mu, sigma) = (x[0], x[1].exp());
    let loglik = ll(&x);
    if !loglik.is_finite() {
        return Err(degenerate(sample, fam, NOT_EVALUABLE));
    }
    if at_upper_limit(sample, loglik) {
        return Err(degenerate(sample, fam, NO_SPREAD));
    }
    if x[1] <= lo + 0.01 || x[1] >= hi - 0.01 {
        return Err(degenerate(
            sample,
            fam,
            format!("sigma runs to the edge of the search range ({sigma:.3e})"),
        ));
    }
    let cov = numeric_cov(&mut ll, &x, &[1e-4 * sigma, 1e-4], vec!["mu", "ln sigma"]);
    let sd = |i: usize| cov.as_ref().and_then(|c| c.sd(i));
    let params = vec![
        wald_estimate("mu", mu, sd(0), f64::NEG_INFINITY),
        positive_estimate("sigma", sigma, sd(1)),
    ];
    let mut notes = Vec::new();
    if cov.is_none() {
        notes.push("observed information not positive definite: no standard errors".to_string());
    }
    let life = Life::lognormal(mu, sigma)?;
    let mut fit = finish(
        sample,
        fam,
        Method::Mle,
        params,
        loglik,
        2,
        life,
        cov,
        notes,
    );
    judge(&mut fit, 2, None);
    Ok(fit)
}

fn fit_gamma(sample: &Sample) -> Result<Fit, FitError> {
    let fam = Family::Gamma;
    if let Some(t) = failures_identical_and_last(sample) {
        return Err(degenerate(
            sample,
            fam,
            format!(
                "all failures are at {t} h and nothing ran longer: the likelihood grows without \
                 bound as the shape goes to infinity"
            ),
        ));
    }
    let obs = sample.obs();
    let f = start_failures(obs);
    let r: f64 = f.iter().map(|p| p.1).sum();
    let total: f64 = obs
        .iter()
        .map(|o| {
            let t = match o.what {
                Observed::Failure(t) | Observed::Suspension(t) => t,
                Observed::Interval { after, before } => 0.5 * (after.max(o.entry) + before),
            };
            o.count * (t - o.entry)
        })
        .sum();
    let (m, sd) = weighted_mean_sd(&f);
    let (lo, hi) = (GAMMA_SHAPE_RANGE.0.ln(), GAMMA_SHAPE_RANGE.1.ln());
    let mut ll = |p: &[f64]| {
        if p[0] < lo || p[0] > hi {
            return f64::NEG_INFINITY;
        }
        Dist::Gamma {
            k: p[0].exp(),
            theta: p[1].exp(),
        }
        .loglik(obs)
    };
    let mut starts = vec![[0.0, (total / r).ln()]];
    if sd > 0.0 {
        let k = (m * m / (sd * sd)).clamp(2.0 * GAMMA_SHAPE_RANGE.0, 0.5 * GAMMA_SHAPE_RANGE.1);
        starts.push([k.ln(), (m / k).ln()]);
        // The same shape with the scale stretched for the suspensions.
        starts.push([k.ln(), (total / r / k).ln()]);
    }
    let x = maximise2(&mut ll, &starts, [0.5, 0.5]);
    let x = newton_polish(&mut ll, &x, &[1e-4, 1e-4]);
    let (k, theta) = (x[0].exp(), x[1].exp());
    let loglik = ll(&x);
    if !loglik.is_finite() {
        return Err(degenerate(sample, fam, NOT_EVALUABLE));
    }
    if at_upper_limit(sample, loglik) {
        return Err(degenerate(sample, fam, NO_SPREAD));
    }
    if x[0] <= lo + 0.01 || x[0] >= hi - 0.01 {
        return Err(degenerate(
            sample,
            fam,
            format!(
                "the shape runs to the edge of the search range [{}, {}] (got {k:.3e})",
                GAMMA_SHAPE_RANGE.0, GAMMA_SHAPE_RANGE.1
            ),
        ));
    }
    if theta > MAX_SCALE_OVER_AGE * sample.largest_age() {
        return Err(degenerate(sample, fam, scale_runs_away(theta)));
    }
    let cov = numeric_cov(&mut ll, &x, &[1e-4, 1e-4], vec!["ln shape", "ln scale"]);
    let sd = |i: usize| cov.as_ref().and_then(|c| c.sd(i));
    let params = vec![
        positive_estimate("shape", k, sd(0)),
        positive_estimate("scale", theta, sd(1)),
    ];
    let mut notes = Vec::new();
    if cov.is_none() {
        notes.push("observed information not positive definite: no standard errors".to_string());
    }
    let life = Life::gamma(k, theta)?;
    let mut fit = finish(
        sample,
        fam,
        Method::Mle,
        params,
        loglik,
        2,
        life,
        cov,
        notes,
    );
    judge(&mut fit, 2, None);
    Ok(fit)
}

// ------------------------------------------------------------- exponential

fn fit_exponential(sample: &Sample) -> Result<Fit, FitError> {
    let obs = sample.obs();
    let r = sample.failure_count() as f64;
    let (mean, loglik, sd) = if sample.has_intervals() {
        let f = start_failures(obs);
        let (m, _) = weighted_mean_sd(&f);
        let mut ll = |lm: f64| weibull_ll(obs, 1.0, lm.exp(), 0.0);
        let (lm, v) = max_1d(&mut ll, m.ln(), 0.5, -700.0, 700.0, 1e-12).map_err(|_| {
            degenerate(
                sample,
                Family::Exponential,
                "the likelihood has no maximum at a finite mean",
            )
        })?;
        let sd = gradient_hessian(&mut |p: &[f64]| ll(p[0]), &[lm], &[1e-4])
            .and_then(|(_, h)| (h[0][0] < 0.0).then(|| (-1.0 / h[0][0]).sqrt()));
        (lm.exp(), v, sd)
    } else {
        // Total time on test over failures (Epstein & Sobel 1953), entry
        // ages subtracted (the exponential forgets the age at entry).
        let total: f64 = obs
            .iter()
            .map(|o| match o.what {
                Observed::Failure(t) | Observed::Suspension(t) => o.count * (t - o.entry),
                Observed::Interval { .. } => 0.0,
            })
            .sum();
        let mean = total / r;
        // l(ln m) = -r ln m - T/m; second derivative at the MLE is -r.
        (mean, -r * mean.ln() - r, Some(1.0 / r.sqrt()))
    };
    if !(mean.is_finite() && mean > 0.0 && loglik.is_finite()) {
        return Err(degenerate(sample, Family::Exponential, NOT_EVALUABLE));
    }
    let cov = sd.and_then(|sd| {
        LogParamCovariance::new(vec!["ln mean"], vec![mean.ln()], vec![vec![sd * sd]])
    });
    let sd = cov.as_ref().and_then(|c| c.sd(0));
    let params = vec![
        positive_estimate("rate", 1.0 / mean, sd),
        positive_estimate("mean", mean, sd),
    ];
    let life = Life::exponential(mean)?;
    let mut fit = finish(
        sample,
        Family::Exponential,
        Method::Mle,
        params,
        loglik,
        1,
        life,
        cov,
        Vec::new(),
    );
    // One failure fixes a one-parameter fit; its interval says how loosely.
    let extra = (fit.failures == 1).then(|| {
        "one failure: the mean rests on a single failure (its 95% interval spans a factor of \
         about 50)"
            .to_string()
    });
    judge(&mut fit, 0, extra);
    Ok(fit)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample(f: &[f64], s: &[f64]) -> Sample {
        Sample::new("t", f.to_vec(), s.to_vec()).unwrap()
    }

    fn mean_sd(v: &[f64]) -> (f64, f64) {
        weighted_mean_sd(&v.iter().map(|&x| (x, 1.0)).collect::<Vec<_>>())
    }

    #[test]
    fn weibull_profile_maximum_is_the_full_maximum() {
        let smp = sample(
            &[120.0, 190.0, 250.0, 310.0, 400.0, 520.0],
            &[300.0, 600.0, 600.0],
        );
        let obs = smp.obs();
        let w = weibull2(&smp).unwrap();
        // The profile optimum is a stationary point of the full likelihood.
        let l0 = weibull_ll(obs, w.beta, w.eta, 0.0);
        assert!((l0 - w.loglik).abs() < 1e-9, "{l0} vs {}", w.loglik);
        for (db, de) in [(1e-3, 0.0), (-1e-3, 0.0), (0.0, 1e-3), (0.0, -1e-3)] {
            let l = weibull_ll(obs, w.beta * (1.0 + db), w.eta * (1.0 + de), 0.0);
            assert!(l < l0);
        }
    }

    #[test]
    fn truncated_profile_agrees_with_the_full_search() {
        let smp = Sample::from_obs(
            "t",
            vec![
                Obs::failure(420.0).entered_at(300.0),
                Obs::failure(610.0),
                Obs::failure(700.0).entered_at(150.0),
                Obs::failure(950.0),
                Obs::suspension(800.0).entered_at(500.0),
                Obs::suspension(1000.0).times(3.0),
                Obs::failure(1200.0).entered_at(900.0),
            ],
        )
        .unwrap();
        let a = weibull2_profile(smp.obs()).unwrap();
        let b = weibull2_search(&smp).unwrap();
        assert!((a.beta - b.beta).abs() < 1e-6 * a.beta, "{a:?} {b:?}");
        assert!((a.eta - b.eta).abs() < 1e-6 * a.eta);
        assert!((a.loglik - b.loglik).abs() < 1e-9);
        // The analytic information with entry ages matches the numerical one.
        let analytic = weibull_log_cov(&smp, a.beta, a.eta).unwrap();
        let mut ll = |p: &[f64]| weibull_ll(smp.obs(), p[0].exp(), p[1].exp(), 0.0);
        let numeric = numeric_cov(
            &mut ll,
            &[a.beta.ln(), a.eta.ln()],
            &[1e-4, 1e-4],
            vec!["a", "b"],
        )
        .unwrap();
        for i in 0..2 {
            for j in 0..2 {
                let (x, y) = (analytic.matrix[i][j], numeric.matrix[i][j]);
                assert!((x - y).abs() < 1e-5 * x.abs().max(1e-3), "{x} vs {y}");
            }
        }
    }

    #[test]
    fn analytic_information_matches_finite_differences() {
        let smp = sample(
            &[120.0, 190.0, 250.0, 310.0, 400.0, 520.0],
            &[300.0, 600.0, 600.0],
        );
        let w = weibull2(&smp).unwrap();
        let analytic = weibull_log_cov(&smp, w.beta, w.eta).unwrap();
        let mut ll = |p: &[f64]| weibull_ll(smp.obs(), p[0].exp(), p[1].exp(), 0.0);
        let numeric = numeric_cov(
            &mut ll,
            &[w.beta.ln(), w.eta.ln()],
            &[1e-4, 1e-4],
            vec!["a", "b"],
        )
        .unwrap();
        for i in 0..2 {
            for j in 0..2 {
                let (a, n) = (analytic.matrix[i][j], numeric.matrix[i][j]);
                assert!((a - n).abs() < 1e-5 * a.abs().max(1e-3), "{a} vs {n}");
            }
        }
    }

    #[test]
    fn exponential_is_total_time_over_failures() {
        // Epstein & Sobel: the MLE of the mean is total time on test / failures.
        let fit = fit_mle(&sample(&[100.0, 300.0], &[600.0]), Family::Exponential).unwrap();
        assert!((fit.param("mean").unwrap() - 500.0).abs() < 1e-9);
        assert!((fit.param("rate").unwrap() - 0.002).abs() < 1e-12);
        // The same with intervals by the one-dimensional search: an interval
        // (a, b] of an exponential, with the others exact, has a closed form
        // only through the search; check the search's answer is a maximum.
        let s = Sample::from_obs(
            "t",
            vec![
                Obs::failure(100.0),
                Obs::interval(200.0, 400.0),
                Obs::suspension(600.0),
            ],
        )
        .unwrap();
        let e = fit_mle(&s, Family::Exponential).unwrap();
        let m = e.param("mean").unwrap();
        let l = |m: f64| weibull_ll(s.obs(), 1.0, m, 0.0);
        assert!(l(m) >= l(m * 1.001) && l(m) >= l(m / 1.001));
    }

    #[test]
    fn weibull_shape_one_data_agree_with_exponential_loglik() {
        // The exponential is the Weibull with shape 1, so its log-likelihood
        // equals the Weibull's at (1, mean): a check of both formulas.
        let s = sample(&[35.0, 80.0, 150.0, 210.0], &[100.0, 250.0]);
        let e = fit_mle(&s, Family::Exponential).unwrap();
        let l = weibull_ll(s.obs(), 1.0, e.param("mean").unwrap(), 0.0);
        assert!((l - e.loglik).abs() < 1e-9);
    }

    #[test]
    fn lognormal_complete_sample_is_mean_and_sd_of_logs() {
        // With no suspensions the MLEs are the mean and the n-divisor sd of ln t.
        let f = [12.0, 30.0, 41.0, 55.0, 90.0, 140.0];
        let fit = fit_mle(&sample(&f, &[]), Family::Lognormal).unwrap();
        let lf: Vec<f64> = f.iter().map(|t: &f64| t.ln()).collect();
        let (m, sd) = mean_sd(&lf);
        assert!((fit.param("mu").unwrap() - m).abs() < 1e-7);
        assert!((fit.param("sigma").unwrap() - sd).abs() < 1e-7);
        // Observed information for a complete normal sample: se(mu) = sd / sqrt(n).
        let se = fit.se("mu").unwrap();
        assert!((se - sd / 6f64.sqrt()).abs() < 1e-5 * se, "{se}");
    }

    #[test]
    fn gamma_shape_one_recovers_exponential_loglik_bound() {
        // The gamma family contains the exponential, so its maximum
        // log-likelihood cannot be lower.
        let f = [35.0, 80.0, 150.0, 210.0, 33.0, 400.0];
        let s = [100.0, 250.0];
        let g = fit_mle(&sample(&f, &s), Family::Gamma).unwrap();
        let e = fit_mle(&sample(&f, &s), Family::Exponential).unwrap();
        assert!(g.loglik >= e.loglik - 1e-9);
        // A complete-sample gamma MLE satisfies ln k - digamma(k) = ln(mean) - mean(ln t).
        let c = fit_mle(&sample(&f, &[]), Family::Gamma).unwrap();
        let k = c.param("shape").unwrap();
        let mean = f.iter().sum::<f64>() / 6.0;
        let mlog = f.iter().map(|t: &f64| t.ln()).sum::<f64>() / 6.0;
        let lhs = k.ln() - statrs::function::gamma::digamma(k);
        assert!((lhs - (mean.ln() - mlog)).abs() < 1e-7, "{lhs}");
        assert!((c.param("scale").unwrap() * k - mean).abs() < 1e-6 * mean);
    }

    #[test]
    fn single_failure_is_refused_except_for_the_exponential() {
        let smp = sample(&[500.0], &[100.0, 900.0]);
        for fam in [Family::Weibull, Family::Lognormal, Family::Gamma] {
            let e = fit_mle(&smp, fam).unwrap_err();
            assert!(matches!(e, FitError::SingleFailure { .. }));
            assert!(e.to_string().contains("exponential"));
            assert!(e.to_string().contains("has two parameters"), "{e}");
        }
        // The 3-parameter Weibull says three (shape, scale, location).
        let e = fit_mle(&smp, Family::Weibull3).unwrap_err();
        assert!(e.to_string().contains("has three parameters"), "{e}");
        let e = fit_mle(&smp, Family::Exponential).unwrap();
        assert!(!e.reliable, "one failure is flagged");
        let fixed = fit_weibull_known_shape(&smp, 2.0).unwrap();
        // eta^2 = (500^2 + 100^2 + 900^2) / 1.
        assert!((fixed.param("scale").unwrap() - 1_070_000f64.sqrt()).abs() < 1e-6);
    }

    #[test]
    fn weibull3_finds_a_planted_location() {
        // Quantiles of a Weibull(2.5, 1000) shifted by 500: the profile
        // should find a location near 500 and beat the 2-parameter fit.
        let n = 60;
        let f: Vec<f64> = (1..=n)
            .map(|i| {
                let p = (i as f64 - 0.5) / n as f64;
                500.0 + 1000.0 * (-(1.0 - p).ln()).powf(1.0 / 2.5)
            })
            .collect();
        let smp = sample(&f, &[]);
        let w3 = fit_mle(&smp, Family::Weibull3).unwrap();
        let w2 = fit_mle(&smp, Family::Weibull).unwrap();
        let loc = w3.param("location").unwrap();
        assert!((loc - 500.0).abs() < 120.0, "{loc}");
        assert!(w3.loglik > w2.loglik);
        assert!(w3.se("location").is_some());
    }

    #[test]
    fn weibull3_reports_boundary_at_zero() {
        // Strongly left-skewed data (a mirrored Weibull): a Weibull matches
        // them only with a negative location (towards the smallest-extreme
        // value limit), so the profile over [0, t1) peaks at 0.
        let n = 30;
        let f: Vec<f64> = (1..=n)
            .map(|i| {
                let p = (i as f64 - 0.5) / n as f64;
                3000.0 - 1000.0 * (-(1.0 - p).ln()).powf(1.0 / 1.5)
            })
            .collect();
        let w3 = fit_mle(&sample(&f, &[]), Family::Weibull3).unwrap();
        assert_eq!(w3.param("location"), Some(0.0));
        assert!(w3.notes.iter().any(|n| n.contains("boundary")));
        assert!(!w3.reliable);
    }

    #[test]
    fn failures_only_at_the_first_inspection_have_no_maximum() {
        // Two parts found failed at the first inspection (300 h), eight
        // working at 2000 h: the likelihood rises towards a distribution
        // flat between 300 and 2000 h (shape to 0, scale to infinity).
        let s = Sample::from_obs(
            "t",
            vec![
                Obs::interval(0.0, 300.0).times(2.0),
                Obs::suspension(2000.0).times(8.0),
            ],
        )
        .unwrap();
        for fam in [Family::Weibull, Family::Gamma] {
            let e = fit_mle(&s, fam).unwrap_err().to_string();
            assert!(e.contains("no maximum at finite parameters"), "{e}");
        }
        assert!(fit_mle(&s, Family::Exponential).is_ok());
    }

    #[test]
    fn all_failures_in_one_inspection_interval_is_degenerate() {
        // Ten parts all found failed at the same inspection, nothing else:
        // any distribution that puts all its mass in (100, 200] is a maximum.
        let s = Sample::from_obs("t", vec![Obs::interval(100.0, 200.0).times(10.0)]).unwrap();
        for fam in [Family::Weibull, Family::Lognormal, Family::Gamma] {
            let e = fit_mle(&s, fam).unwrap_err();
            assert!(e.to_string().contains("no spread"), "{e}");
        }
        assert!(fit_mle(&s, Family::Weibull3).is_err());
        // The one-parameter exponential has a proper maximum.
        assert!(fit_mle(&s, Family::Exponential).is_ok());
    }
}
