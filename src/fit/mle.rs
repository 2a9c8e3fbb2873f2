//! Maximum-likelihood fits with right censoring.
//!
//! Owns: the censored log-likelihoods of the five families, their
//! maximisation, the observed-information covariance of the
//! log-parameters, Wald / log-Wald and likelihood-ratio intervals.
//! May use: `super::optim`, `crate::dist`, `statrs` special functions.
//!
//! Methods. Weibull (2-p): the scale is profiled out,
//! `eta^beta = sum(t^beta) / r`, and the shape solves the profile score
//! equation `sum(t^b ln t) / sum(t^b) - 1/b - mean(ln t_fail) = 0`, which is
//! increasing in `b` (Lawless 2003, sec. 5.2), by bracketing and Brent's
//! method. Weibull (3-p): the profile log-likelihood over the location on a
//! grid in `[0, smallest failure)`, refined by golden section; a maximum at
//! 0 is reported as a boundary estimate, a likelihood still rising at the
//! smallest failure as an error. Lognormal and gamma: Nelder–Mead on
//! (mu, ln sigma) / (ln shape, ln scale) from several starts, polished by
//! Newton steps on a finite-difference Hessian. Exponential: closed form.

use statrs::function::gamma::{checked_gamma_ur, ln_gamma};

use super::optim::{
    brent_root, golden_max, gradient_hessian, nelder_mead, newton_polish, spd_inverse,
};
use super::{Estimate, Family, Fit, FitError, LogParamCovariance, Method, Sample};
use crate::dist::{Life, normal_quantile, normal_sf};

/// Largest Weibull shape accepted; beyond it the failures are as good as
/// identical and no shape is meaningful.
const MAX_SHAPE: f64 = 1e6;
/// Bounds on the gamma shape searched.
const GAMMA_SHAPE_RANGE: (f64, f64) = (1e-3, 1e4);
/// Bounds on the lognormal sigma searched.
const SIGMA_RANGE: (f64, f64) = (1e-8, 1e3);

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
    Fit {
        part: sample.part().to_string(),
        distribution: family,
        method,
        params,
        lr_ci95: Vec::new(),
        loglik,
        aic: 2.0 * k - 2.0 * loglik,
        bic: k * n.ln() - 2.0 * loglik,
        failures: sample.failures().len(),
        suspensions: sample.suspensions().len(),
        aic_rank: None,
        r_squared: None,
        notes,
        life,
        log_cov,
        location_cap: sample
            .failures()
            .iter()
            .copied()
            .fold(f64::INFINITY, f64::min),
    }
}

/// Fit one family by maximum likelihood.
///
/// # Errors
/// [`FitError::NoFailures`]; [`FitError::SingleFailure`] for the
/// two-parameter families with one failure; [`FitError::TooFewFailures`]
/// for the 3-parameter Weibull with fewer than 3 failures;
/// [`FitError::Degenerate`] or [`FitError::LocationAtBoundary`] when the
/// likelihood has no usable maximum.
pub fn fit_mle(sample: &Sample, family: Family) -> Result<Fit, FitError> {
    let r = sample.failures().len();
    if r == 0 {
        return Err(FitError::NoFailures {
            part: sample.part().to_string(),
            suspensions: sample.suspensions().len(),
        });
    }
    if r == 1 && family != Family::Exponential {
        return Err(FitError::SingleFailure {
            part: sample.part().to_string(),
            family: family.name(),
            suspensions: sample.suspensions().len(),
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

// ----------------------------------------------------------------- Weibull

/// Censored Weibull log-likelihood, location `loc` (failures must exceed
/// it; suspensions at or below it carry no information).
pub(crate) fn weibull_loglik(f: &[f64], s: &[f64], beta: f64, eta: f64, loc: f64) -> f64 {
    if !(beta > 0.0 && eta > 0.0 && beta.is_finite() && eta.is_finite() && loc.is_finite()) {
        return f64::NEG_INFINITY;
    }
    let (lb, le) = (beta.ln(), eta.ln());
    let mut ll = 0.0;
    for &t in f {
        let d = t - loc;
        if d <= 0.0 {
            return f64::NEG_INFINITY;
        }
        let z = d.ln() - le;
        ll += lb - le + (beta - 1.0) * z - (beta * z).exp();
    }
    for &t in s {
        let d = t - loc;
        if d > 0.0 {
            ll -= (beta * (d.ln() - le)).exp();
        }
    }
    ll
}

/// The 2-parameter Weibull MLE of failures `f` and suspensions `s`
/// (already shifted by any location): shape, scale, log-likelihood.
pub(crate) struct Weibull2 {
    pub beta: f64,
    pub eta: f64,
    pub loglik: f64,
}

/// Profile data: log-times relative to the largest time.
struct Profile {
    /// ln t - ln t_max for every record.
    x: Vec<f64>,
    /// Mean of x over failures.
    mean_xf: f64,
    /// Sum of x over failures.
    sum_xf: f64,
    ln_tmax: f64,
    r: f64,
}

impl Profile {
    fn new(f: &[f64], s: &[f64]) -> Self {
        let ln_tmax = f
            .iter()
            .chain(s)
            .fold(f64::NEG_INFINITY, |m, &t| m.max(t.ln()));
        let x: Vec<f64> = f.iter().chain(s).map(|t| t.ln() - ln_tmax).collect();
        let sum_xf: f64 = x[..f.len()].iter().sum();
        let r = f.len() as f64;
        Profile {
            x,
            mean_xf: sum_xf / r,
            sum_xf,
            ln_tmax,
            r,
        }
    }

    /// The profile score in the shape.
    fn score(&self, b: f64) -> f64 {
        let (mut s0, mut s1) = (0.0, 0.0);
        for &x in &self.x {
            let w = (b * x).exp();
            s0 += w;
            s1 += w * x;
        }
        s1 / s0 - 1.0 / b - self.mean_xf
    }

    /// ln eta maximising the likelihood for shape `b`.
    fn ln_eta(&self, b: f64) -> f64 {
        let s0: f64 = self.x.iter().map(|&x| (b * x).exp()).sum();
        self.ln_tmax + (s0 / self.r).ln() / b
    }

    /// Profile log-likelihood at shape `b`.
    fn loglik(&self, b: f64) -> f64 {
        let le = self.ln_eta(b);
        // sum over failures of z = ln t - ln eta, written to avoid cancellation.
        let sum_z = self.sum_xf + self.r * (self.ln_tmax - le);
        self.r * (b.ln() - le) + (b - 1.0) * sum_z - self.r
    }
}

pub(crate) fn weibull2_core(f: &[f64], s: &[f64]) -> Result<Weibull2, String> {
    if f.is_empty() {
        return Err("no failures".into());
    }
    let p = Profile::new(f, s);
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

/// Observed information of the Weibull in (shape, scale), analytic.
fn weibull_info(f: &[f64], s: &[f64], beta: f64, eta: f64) -> [[f64; 2]; 2] {
    let r = f.len() as f64;
    let le = eta.ln();
    let (mut su, mut suz, mut suz2) = (0.0, 0.0, 0.0);
    for &t in f.iter().chain(s) {
        let z = t.ln() - le;
        let u = (beta * z).exp();
        su += u;
        suz += u * z;
        suz2 += u * z * z;
    }
    let i_bb = r / (beta * beta) + suz2;
    let i_ee = -(beta / (eta * eta)) * (r - (beta + 1.0) * su);
    let i_be = (r - su) / eta - beta / eta * suz;
    [[i_bb, i_be], [i_be, i_ee]]
}

/// Covariance of (ln shape, ln scale) from the analytic information.
fn weibull_log_cov(f: &[f64], s: &[f64], beta: f64, eta: f64) -> Option<LogParamCovariance> {
    let i = weibull_info(f, s, beta, eta);
    let d = [beta, eta];
    let il: Vec<Vec<f64>> = (0..2)
        .map(|a| (0..2).map(|b| i[a][b] * d[a] * d[b]).collect())
        .collect();
    let cov = spd_inverse(&il)?;
    LogParamCovariance::new(vec!["ln shape", "ln scale"], vec![beta.ln(), eta.ln()], cov)
}

/// Likelihood-ratio interval for the shape from the profile log-likelihood.
fn weibull_shape_lr_interval(f: &[f64], s: &[f64], beta: f64, loglik: f64) -> Option<[f64; 2]> {
    let p = Profile::new(f, s);
    let target = loglik - 0.5 * chi2_95_1df();
    let mut h = |b: f64| p.loglik(b) - target;
    let mut lo = beta / 1.5;
    while h(lo) > 0.0 {
        lo /= 1.5;
        if lo < 1e-9 {
            return None;
        }
    }
    let mut hi = beta * 1.5;
    while h(hi) > 0.0 {
        hi *= 1.5;
        if hi > 10.0 * MAX_SHAPE {
            return None;
        }
    }
    let a = brent_root(&mut h, lo, beta, 1e-12)?;
    let b = brent_root(&mut h, beta, hi, 1e-12)?;
    Some([a, b])
}

fn fit_weibull(sample: &Sample) -> Result<Fit, FitError> {
    let (f, s) = (sample.failures(), sample.suspensions());
    let w = weibull2_core(f, s).map_err(|m| degenerate(sample, Family::Weibull, m))?;
    let cov = weibull_log_cov(f, s, w.beta, w.eta);
    let mut notes = Vec::new();
    if cov.is_none() {
        notes.push("observed information not positive definite: no standard errors".to_string());
    }
    let params = vec![
        positive_estimate("shape", w.beta, cov.as_ref().and_then(|c| c.sd(0))),
        positive_estimate("scale", w.eta, cov.as_ref().and_then(|c| c.sd(1))),
    ];
    let lr = weibull_shape_lr_interval(f, s, w.beta, w.loglik);
    if lr.is_none() {
        notes.push("the likelihood-ratio interval for the shape is open-ended".to_string());
    }
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
    if let Some(ci) = lr {
        fit.lr_ci95.push(("shape", ci));
    }
    Ok(fit)
}

/// Weibull with the shape given from experience: the MLE of the scale
/// alone, `eta = (sum t^shape / r)^(1/shape)`, with
/// `var(ln eta) = 1 / (shape^2 r)` from the observed information. Works
/// from one failure up; the intervals ignore any error in the given shape.
///
/// # Errors
/// [`FitError::NoFailures`], or [`FitError::Degenerate`] when the shape is
/// not finite and positive.
pub fn fit_weibull_known_shape(sample: &Sample, shape: f64) -> Result<Fit, FitError> {
    let (f, s) = (sample.failures(), sample.suspensions());
    if f.is_empty() {
        return Err(FitError::NoFailures {
            part: sample.part().to_string(),
            suspensions: s.len(),
        });
    }
    if !(shape > 0.0 && shape.is_finite()) {
        return Err(degenerate(
            sample,
            Family::Weibull,
            format!("the given shape must be a finite number greater than 0 (got {shape})"),
        ));
    }
    let p = Profile::new(f, s);
    let le = p.ln_eta(shape);
    let eta = le.exp();
    let r = f.len() as f64;
    let sd = 1.0 / (shape * r.sqrt());
    let loglik = weibull_loglik(f, s, shape, eta, 0.0);
    let life = Life::weibull(shape, eta)?;
    let cov = LogParamCovariance::new(vec!["ln scale"], vec![le], vec![vec![sd * sd]]);
    let params = vec![
        Estimate {
            name: "shape",
            value: shape,
            se: None,
            ci95: None,
        },
        positive_estimate("scale", eta, Some(sd)),
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

/// Profile log-likelihood of the 3-parameter Weibull at location `g`.
fn weibull3_profile(f: &[f64], s: &[f64], g: f64) -> Option<Weibull2> {
    let fs: Vec<f64> = f.iter().map(|t| t - g).collect();
    if fs.iter().any(|d| *d <= 0.0) {
        return None;
    }
    let ss: Vec<f64> = s.iter().filter(|&&t| t > g).map(|t| t - g).collect();
    weibull2_core(&fs, &ss).ok()
}

fn fit_weibull3(sample: &Sample) -> Result<Fit, FitError> {
    let (f, s) = (sample.failures(), sample.suspensions());
    if f.len() < 3 {
        return Err(FitError::TooFewFailures {
            part: sample.part().to_string(),
            family: Family::Weibull3.name(),
            needed: 3,
            got: f.len(),
        });
    }
    let t1 = f.iter().copied().fold(f64::INFINITY, f64::min);
    // Grid of locations as fractions of the smallest failure: even steps,
    // then ever closer to it.
    let mut q: Vec<f64> = (0..40).map(|j| j as f64 / 40.0).collect();
    q.extend((0..18).map(|k| 1.0 - 10f64.powf(-(1.75 + 0.25 * k as f64))));
    let prof = |g: f64| weibull3_profile(f, s, g).map_or(f64::NEG_INFINITY, |w| w.loglik);
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
        let w = weibull2_core(f, s).map_err(|m| degenerate(sample, Family::Weibull3, m))?;
        let cov = weibull_log_cov(f, s, w.beta, w.eta);
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
        return Ok(finish(
            sample,
            Family::Weibull3,
            Method::Mle,
            params,
            w.loglik,
            3,
            life,
            cov,
            notes,
        ));
    }
    let (a, b) = (q[best - 1] * t1, q[best + 1] * t1);
    let (g, ll_g) = golden_max(&mut |g| prof(g), a, b);
    let (g, _) = if ll_g >= ll[best] {
        (g, ll_g)
    } else {
        (q[best] * t1, ll[best])
    };
    let w = weibull3_profile(f, s, g)
        .ok_or_else(|| degenerate(sample, Family::Weibull3, "the profile fit failed"))?;
    if ll[last] > w.loglik {
        notes.push(format!(
            "the likelihood is unbounded as the location approaches the smallest failure \
             ({t1} h); the interior local maximum is reported"
        ));
    }
    if w.beta < 2.0 {
        notes.push(
            "shape below 2: the 3-parameter Weibull is a non-regular problem there, so the \
             location's standard error and interval are rough"
                .to_string(),
        );
    }
    // Observed information in (ln shape, ln scale, location), numerically.
    let hg = (1e-4 * w.eta).min(0.01 * (t1 - g)).max(1e-12 * t1);
    let h = [1e-4, 1e-4 / w.beta.max(1.0), hg];
    let mut ll3 = |p: &[f64]| weibull_loglik(f, s, p[0].exp(), p[1].exp(), p[2]);
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
    Ok(finish(
        sample,
        Family::Weibull3,
        Method::Mle,
        params,
        w.loglik,
        3,
        life,
        cov,
        notes,
    ))
}

// --------------------------------------------------------------- lognormal

/// `ln(1 - Phi(z))`, accurate far into the upper tail.
pub(crate) fn ln_normal_sf(z: f64) -> f64 {
    let p = normal_sf(z);
    if p > 1e-300 {
        p.ln()
    } else {
        // Mills-ratio asymptotic series (Abramowitz & Stegun 26.2.12).
        let z2 = z * z;
        -0.5 * z2 - z.ln() - 0.5 * (2.0 * std::f64::consts::PI).ln()
            + (1.0 - 1.0 / z2 + 3.0 / (z2 * z2) - 15.0 / (z2 * z2 * z2)).ln()
    }
}

/// Distinct values with their counts, so that repeated hours (many units
/// still running at the same age) cost one evaluation.
pub(crate) fn tally(v: &[f64]) -> Vec<(f64, f64)> {
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    let mut out: Vec<(f64, f64)> = Vec::new();
    for t in s {
        match out.last_mut() {
            Some(last) if last.0 == t => last.1 += 1.0,
            _ => out.push((t, 1.0)),
        }
    }
    out
}

/// Censored lognormal log-likelihood of tallied failures `f` and
/// suspensions `s` (pairs of hours and count).
pub(crate) fn lognormal_loglik(f: &[(f64, f64)], s: &[(f64, f64)], mu: f64, sigma: f64) -> f64 {
    if !(sigma > 0.0 && sigma.is_finite() && mu.is_finite()) {
        return f64::NEG_INFINITY;
    }
    let c = sigma.ln() + 0.5 * (2.0 * std::f64::consts::PI).ln();
    let mut ll = 0.0;
    for &(t, w) in f {
        let lt = t.ln();
        let z = (lt - mu) / sigma;
        ll += w * (-lt - c - 0.5 * z * z);
    }
    for &(t, w) in s {
        ll += w * ln_normal_sf((t.ln() - mu) / sigma);
    }
    ll
}

fn mean_sd(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    let m = v.iter().sum::<f64>() / n;
    let var = v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / n;
    (m, var.sqrt())
}

/// All failures at one time and no suspension beyond it: the likelihood of a
/// two-parameter family without a shape limit is unbounded.
fn failures_identical_and_last(f: &[f64], s: &[f64]) -> Option<f64> {
    let lo = f.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = f.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let smax = s.iter().copied().fold(f64::NEG_INFINITY, f64::max);
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
    let (f, s) = (sample.failures(), sample.suspensions());
    if let Some(t) = failures_identical_and_last(f, s) {
        return Err(degenerate(
            sample,
            fam,
            format!(
                "all failures are at {t} h and nothing ran longer: the likelihood grows without \
                 bound as sigma goes to 0"
            ),
        ));
    }
    let lf: Vec<f64> = f.iter().map(|t| t.ln()).collect();
    let la: Vec<f64> = f.iter().chain(s).map(|t| t.ln()).collect();
    let (m0, s0) = mean_sd(&lf);
    let (ma, sa) = mean_sd(&la);
    let sig = |v: f64| v.max(1e-3).ln();
    let (lo, hi) = (SIGMA_RANGE.0.ln(), SIGMA_RANGE.1.ln());
    let (tf, ts) = (tally(f), tally(s));
    let mut ll = |p: &[f64]| {
        if p[1] < lo || p[1] > hi {
            return f64::NEG_INFINITY;
        }
        lognormal_loglik(&tf, &ts, p[0], p[1].exp())
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
    Ok(finish(
        sample,
        fam,
        Method::Mle,
        params,
        loglik,
        2,
        life,
        cov,
        notes,
    ))
}

// ------------------------------------------------------------------- gamma

/// `ln Q(a, x)`, the log of the regularised upper incomplete gamma
/// function, with an asymptotic form (Abramowitz & Stegun 6.5.32) where
/// `Q` underflows.
pub(crate) fn ln_gamma_q(a: f64, x: f64) -> f64 {
    match checked_gamma_ur(a, x) {
        Ok(q) if q > 1e-300 => q.ln(),
        Ok(q) if q.is_nan() => f64::NAN,
        Ok(_) if x > a => {
            let am1 = a - 1.0;
            (am1) * x.ln() - x - ln_gamma(a)
                + (1.0 + am1 / x + am1 * (a - 2.0) / (x * x)).max(1e-300).ln()
        }
        Ok(_) => f64::NEG_INFINITY,
        Err(_) => f64::NEG_INFINITY,
    }
}

/// Censored gamma log-likelihood of tallied failures and suspensions.
pub(crate) fn gamma_loglik(f: &[(f64, f64)], s: &[(f64, f64)], k: f64, theta: f64) -> f64 {
    if !(k > 0.0 && theta > 0.0 && k.is_finite() && theta.is_finite()) {
        return f64::NEG_INFINITY;
    }
    let c = ln_gamma(k) + k * theta.ln();
    let mut ll = 0.0;
    for &(t, w) in f {
        ll += w * ((k - 1.0) * t.ln() - t / theta - c);
    }
    for &(t, w) in s {
        ll += w * ln_gamma_q(k, t / theta);
    }
    ll
}

fn fit_gamma(sample: &Sample) -> Result<Fit, FitError> {
    let fam = Family::Gamma;
    let (f, s) = (sample.failures(), sample.suspensions());
    if let Some(t) = failures_identical_and_last(f, s) {
        return Err(degenerate(
            sample,
            fam,
            format!(
                "all failures are at {t} h and nothing ran longer: the likelihood grows without \
                 bound as the shape goes to infinity"
            ),
        ));
    }
    let r = f.len() as f64;
    let total: f64 = f.iter().chain(s).sum();
    let (m, sd) = mean_sd(f);
    let (lo, hi) = (GAMMA_SHAPE_RANGE.0.ln(), GAMMA_SHAPE_RANGE.1.ln());
    let (tf, ts) = (tally(f), tally(s));
    let mut ll = |p: &[f64]| {
        if p[0] < lo || p[0] > hi {
            return f64::NEG_INFINITY;
        }
        gamma_loglik(&tf, &ts, p[0].exp(), p[1].exp())
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
    Ok(finish(
        sample,
        fam,
        Method::Mle,
        params,
        loglik,
        2,
        life,
        cov,
        notes,
    ))
}

// ------------------------------------------------------------- exponential

fn fit_exponential(sample: &Sample) -> Result<Fit, FitError> {
    let (f, s) = (sample.failures(), sample.suspensions());
    let r = f.len() as f64;
    let total: f64 = f.iter().chain(s).sum();
    let mean = total / r;
    // l(ln m) = -r ln m - T/m; second derivative at the MLE is -r.
    let loglik = -r * mean.ln() - r;
    let sd = 1.0 / r.sqrt();
    let cov = LogParamCovariance::new(vec!["ln mean"], vec![mean.ln()], vec![vec![sd * sd]]);
    let params = vec![
        positive_estimate("rate", 1.0 / mean, Some(sd)),
        positive_estimate("mean", mean, Some(sd)),
    ];
    let life = Life::exponential(mean)?;
    Ok(finish(
        sample,
        Family::Exponential,
        Method::Mle,
        params,
        loglik,
        1,
        life,
        cov,
        Vec::new(),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample(f: &[f64], s: &[f64]) -> Sample {
        Sample::new("t", f.to_vec(), s.to_vec()).unwrap()
    }

    #[test]
    fn weibull_profile_maximum_is_the_full_maximum() {
        let f = [120.0, 190.0, 250.0, 310.0, 400.0, 520.0];
        let s = [300.0, 600.0, 600.0];
        let w = weibull2_core(&f, &s).unwrap();
        // The profile optimum is a stationary point of the full likelihood.
        let l0 = weibull_loglik(&f, &s, w.beta, w.eta, 0.0);
        assert!((l0 - w.loglik).abs() < 1e-9, "{l0} vs {}", w.loglik);
        for (db, de) in [(1e-3, 0.0), (-1e-3, 0.0), (0.0, 1e-3), (0.0, -1e-3)] {
            let l = weibull_loglik(&f, &s, w.beta * (1.0 + db), w.eta * (1.0 + de), 0.0);
            assert!(l < l0);
        }
    }

    #[test]
    fn analytic_information_matches_finite_differences() {
        let f = [120.0, 190.0, 250.0, 310.0, 400.0, 520.0];
        let s = [300.0, 600.0, 600.0];
        let w = weibull2_core(&f, &s).unwrap();
        let analytic = weibull_log_cov(&f, &s, w.beta, w.eta).unwrap();
        let mut ll = |p: &[f64]| weibull_loglik(&f, &s, p[0].exp(), p[1].exp(), 0.0);
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
    }

    #[test]
    fn weibull_shape_one_data_agree_with_exponential_loglik() {
        // The exponential is the Weibull with shape 1, so its log-likelihood
        // equals the Weibull's at (1, mean): a check of both formulas.
        let f = [35.0, 80.0, 150.0, 210.0];
        let s = [100.0, 250.0];
        let e = fit_mle(&sample(&f, &s), Family::Exponential).unwrap();
        let l = weibull_loglik(&f, &s, 1.0, e.param("mean").unwrap(), 0.0);
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
    fn ln_tails_are_continuous() {
        for z in [20.0, 30.0, 37.0, 37.5, 38.0, 50.0] {
            let a = ln_normal_sf(z);
            assert!(a.is_finite() && a < 0.0);
        }
        // At the switch the two forms agree closely (the series is asymptotic).
        let z = 37.0;
        let direct = normal_sf(z).ln();
        let z2 = z * z;
        let series = -0.5 * z2 - f64::ln(z) - 0.5 * (2.0 * std::f64::consts::PI).ln()
            + (1.0 - 1.0 / z2 + 3.0 / (z2 * z2)).ln();
        assert!((direct - series).abs() < 1e-8);
        assert!(ln_gamma_q(2.0, 1e4).is_finite());
        assert!((ln_gamma_q(1.0, 3.0) + 3.0).abs() < 1e-12);
    }

    #[test]
    fn single_failure_is_refused_except_for_the_exponential() {
        let smp = sample(&[500.0], &[100.0, 900.0]);
        for fam in [Family::Weibull, Family::Lognormal, Family::Gamma] {
            let e = fit_mle(&smp, fam).unwrap_err();
            assert!(matches!(e, FitError::SingleFailure { .. }));
            assert!(e.to_string().contains("exponential"));
        }
        assert!(fit_mle(&smp, Family::Exponential).is_ok());
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
    }
}
