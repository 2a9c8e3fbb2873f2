//! Weibull with an assumed shape (often called Weibayes): the scale
//! estimate and its one-sided lower confidence bound, from any number of
//! failures, none included.
//!
//! Owns: [`fit_assumed_shape`], [`AssumedShape`] (what the bound rests on,
//! and the draw of a scale from the bound's distribution for the trials),
//! and the chi-square quantile it needs.
//! May use: `super::mle`, `super::lr`, `super::sample`, `statrs` special
//! functions.
//!
//! Method (Nelson, *Applied Life Data Analysis*, 1982, ch. 6; Abernethy,
//! *The New Weibull Handbook*, ch. 6; both from memory). With the shape
//! `b` known, `t^b` of a Weibull life is exponential with mean `eta^b`, so
//! the data become exponential lives with total time on test
//! `T = sum w (t^b - e^b)` over every part (failures and suspensions; `e`
//! the entry age, `w` the count). Then:
//! - the maximum-likelihood scale is `eta = (T / r)^(1/b)` with `r`
//!   failures (needs `r >= 1`);
//! - the one-sided lower bound at confidence `C` is
//!   `eta_L = (2 T / chi2(C; 2r + 2))^(1/b)`, the time-censored
//!   exponential bound (Epstein 1960); with `r = 0`,
//!   `chi2(C; 2) = -2 ln(1 - C)`;
//! - with no failures the scale shown is the value with one failure
//!   assumed, `(T / 1)^(1/b)`, which is the bound at `C = 63.2 %` (common
//!   practice).
//!
//! With interval-censored data there is no total time on test; the scale
//! is then the maximum of the likelihood with the shape fixed, and the
//! bound is the one-sided likelihood-ratio bound (the log-likelihood
//! `z_C^2 / 2` below its maximum).

use statrs::function::gamma::{checked_gamma_lr, ln_gamma};

use super::lr::{B_LIVES, crossing, w_p};
use super::mle::{finish, positive_estimate, scale_given_shape, weibull_ll};
use super::sample::{Observed, Sample};
use super::{BLife, Estimate, Family, Fit, FitError, LogParamCovariance, Method};
use crate::dist::{Life, normal_quantile};

/// The confidence of the reported lower bounds.
pub const DEFAULT_CONFIDENCE: f64 = 0.95;

/// How the lower bound was found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BoundMethod {
    /// `eta_L = (2 T / chi2(C; dof))^(1/b)`, `dof = 2r + 2`.
    ChiSquare {
        /// Degrees of freedom, `2r + 2`.
        dof: f64,
    },
    /// One-sided likelihood-ratio bound (interval-censored data).
    LikelihoodRatio,
}

/// What an assumed-shape fit rests on.
#[derive(Debug, Clone, PartialEq)]
pub struct AssumedShape {
    /// The assumed shape.
    pub shape: f64,
    /// Confidence of the lower bound (one-sided).
    pub confidence: f64,
    /// Failures in the data.
    pub failures: usize,
    /// The lower bound on the scale.
    pub scale_lower: f64,
    /// How the bound was found.
    pub bound: BoundMethod,
    /// `ln T`, the log of the total transformed time on test (closed form only).
    pub ln_total: Option<f64>,
}

impl AssumedShape {
    /// A scale from the distribution whose quantiles are the bound's
    /// (`eta = (2 T / X)^(1/b)`, `X` the chi-square quantile at `u`): so
    /// the lower bound at confidence `C` is the `1 - C` quantile of the
    /// draws. `None` for likelihood-ratio bounds (no closed form).
    pub fn draw_scale(&self, u: f64) -> Option<f64> {
        let BoundMethod::ChiSquare { dof } = self.bound else {
            return None;
        };
        let lt = self.ln_total?;
        let x = chi_square_quantile(u, dof)?;
        let v = ((2f64.ln() + lt - x.ln()) / self.shape).exp();
        (v.is_finite() && v > 0.0).then_some(v)
    }
}

/// The `p` quantile of chi-square with `dof` degrees of freedom: the root
/// of `P(dof / 2, x / 2) = p` (regularised lower incomplete gamma), by
/// Newton steps kept inside a bisection bracket. `None` outside `0 < p < 1`.
pub fn chi_square_quantile(p: f64, dof: f64) -> Option<f64> {
    if !(p > 0.0 && p < 1.0 && dof > 0.0 && dof.is_finite()) {
        return None;
    }
    let k = 0.5 * dof;
    if k == 1.0 {
        return Some(-2.0 * (-p).ln_1p());
    }
    let cdf = |x: f64| checked_gamma_lr(k, 0.5 * x).unwrap_or(f64::NAN);
    let ln_pdf = |x: f64| (k - 1.0) * (0.5 * x).ln() - 0.5 * x - ln_gamma(k) - 2f64.ln();
    // Wilson–Hilferty start (Johnson, Kotz & Balakrishnan, vol. 1, ch. 18).
    let z = normal_quantile(p);
    let c = 2.0 / (9.0 * dof);
    let mut x = (dof * (1.0 - c + z * c.sqrt()).powi(3)).max(1e-3 * dof);
    let (mut lo, mut hi) = (0.0, x);
    while cdf(hi) < p {
        lo = hi;
        hi *= 2.0;
        if hi > 1e8 {
            return None;
        }
    }
    for _ in 0..200 {
        let f = cdf(x) - p;
        if !f.is_finite() {
            return None;
        }
        if f < 0.0 {
            lo = lo.max(x);
        } else {
            hi = hi.min(x);
        }
        let step = f / ln_pdf(x).exp();
        let mut next = x - step;
        if !(next > lo && next < hi && next.is_finite()) {
            next = 0.5 * (lo + hi);
        }
        if (next - x).abs() <= 1e-15 * x || hi - lo <= 1e-15 * hi {
            return Some(next);
        }
        x = next;
    }
    Some(x)
}

/// Weibull with the shape assumed from experience: the scale and its
/// one-sided lower bound at `confidence` (see the module documentation),
/// and the B1 and B10 lives with their lower bounds. Works with any number
/// of failures, none included.
///
/// # Errors
/// [`FitError::Degenerate`] when the shape or confidence is out of range
/// or the data give no finite bound.
pub fn fit_assumed_shape(sample: &Sample, shape: f64, confidence: f64) -> Result<Fit, FitError> {
    let bad = |reason: String| FitError::Degenerate {
        part: sample.part().to_string(),
        family: "weibull with assumed shape",
        reason,
    };
    if !(shape > 0.0 && shape.is_finite() && shape <= 1e3) {
        return Err(bad(format!(
            "the assumed shape must be a number above 0 and at most 1000 (got {shape})"
        )));
    }
    if !(confidence > 0.0 && confidence < 1.0) {
        return Err(bad(format!(
            "the confidence must lie between 0 and 1 (got {confidence})"
        )));
    }
    let obs = sample.obs();
    let r = sample.failure_count();
    let rf = r as f64;
    let mut notes = vec![format!(
        "Weibull shape assumed to be {shape} (not estimated from these data): the scale and its \
         lower bound are only as good as that assumption"
    )];
    let (le, sd, lower, bound, ln_total) = if sample.has_intervals() {
        let (le, sd) =
            scale_given_shape(sample, shape).ok_or_else(|| bad("no finite maximum".into()))?;
        let ll_max = weibull_ll(obs, shape, le.exp(), 0.0);
        let z = normal_quantile(confidence);
        let ends = crossing(
            &mut |x| weibull_ll(obs, shape, x.exp(), 0.0),
            le,
            ll_max,
            0.5 * z * z,
            sd.unwrap_or(0.3),
            &[-1.0],
        );
        let lower = ends[0].ok_or_else(|| bad("the lower bound is not finite".into()))?;
        notes.push(
            "inspection intervals in the data: the lower bound is the one-sided \
             likelihood-ratio bound, not the chi-square one"
                .to_string(),
        );
        (le, sd, lower.exp(), BoundMethod::LikelihoodRatio, None)
    } else {
        // ln T = b ln t_max + ln sum w ((t / t_max)^b - (e / t_max)^b).
        let ages = obs.iter().filter_map(|o| match o.what {
            Observed::Failure(t) | Observed::Suspension(t) => Some(t),
            Observed::Interval { .. } => None,
        });
        let ln_tmax = ages.fold(f64::NEG_INFINITY, |m, t| m.max(t.ln()));
        let mut s = 0.0;
        for o in obs {
            if let Observed::Failure(t) | Observed::Suspension(t) = o.what {
                let xt = shape * (t.ln() - ln_tmax);
                let v = if o.entry > 0.0 {
                    xt.exp() * (-(shape * (o.entry.ln() - t.ln())).exp_m1())
                } else {
                    xt.exp()
                };
                s += o.count * v;
            }
        }
        let lt = shape * ln_tmax + s.ln();
        if !lt.is_finite() {
            return Err(bad("the total time on test is not finite".into()));
        }
        let dof = 2.0 * rf + 2.0;
        let x = chi_square_quantile(confidence, dof)
            .ok_or_else(|| bad("no chi-square quantile".into()))?;
        let lower = ((2f64.ln() + lt - x.ln()) / shape).exp();
        let (le, sd) = if r == 0 {
            notes.push(format!(
                "no failures: the scale shown assumes one failure, (T / 1)^(1/shape), which is \
                 the 63.2% lower bound; the {:.0}% lower bound is {}",
                100.0 * confidence,
                super::report::fmt_sig(lower)
            ));
            (lt / shape, None)
        } else {
            ((lt - rf.ln()) / shape, Some(1.0 / (shape * rf.sqrt())))
        };
        (le, sd, lower, BoundMethod::ChiSquare { dof }, Some(lt))
    };
    let eta = le.exp();
    if !(eta.is_finite() && eta > 0.0 && lower.is_finite() && lower > 0.0) {
        return Err(bad("the scale is not a finite positive number".into()));
    }
    let life = Life::weibull(shape, eta)?;
    let loglik = weibull_ll(obs, shape, eta, 0.0);
    let cov =
        sd.and_then(|sd| LogParamCovariance::new(vec!["ln scale"], vec![le], vec![vec![sd * sd]]));
    let params = vec![
        Estimate {
            name: "shape",
            value: shape,
            se: None,
            ci95: None,
        },
        positive_estimate("scale", eta, cov.as_ref().and_then(|c| c.sd(0))),
    ];
    let mut fit = finish(
        sample,
        Family::Weibull,
        Method::AssumedShape,
        params,
        loglik,
        1,
        life,
        cov,
        notes,
    );
    fit.b_lives = B_LIVES
        .iter()
        .map(|&(name, p)| {
            let f = (w_p(p) / shape).exp();
            BLife {
                name,
                p,
                value: eta * f,
                ci95: None,
                lr_ci95: None,
                lower_bound: Some(lower * f),
            }
        })
        .collect();
    fit.assumed = Some(AssumedShape {
        shape,
        confidence,
        failures: r,
        scale_lower: lower,
        bound,
        ln_total,
    });
    Ok(fit)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chi_square_quantiles_match_tables() {
        // Chi-square table values (any statistics text, e.g. Abramowitz &
        // Stegun table 26.8), 95% points.
        for (dof, want) in [
            (1.0, 3.841459),
            (2.0, 5.991465),
            (4.0, 9.487729),
            (6.0, 12.591587),
            (10.0, 18.307038),
            (30.0, 43.772972),
        ] {
            let got = chi_square_quantile(0.95, dof).unwrap();
            assert!((got - want).abs() < 2e-6, "{dof}: {got} vs {want}");
        }
        // 5% point of 4 d.f.: 0.710723.
        assert!((chi_square_quantile(0.05, 4.0).unwrap() - 0.710723).abs() < 2e-6);
        assert!(chi_square_quantile(0.0, 2.0).is_none());
        // Far tails stay finite and ordered.
        let a = chi_square_quantile(1e-12, 7.0).unwrap();
        let b = chi_square_quantile(1.0 - 1e-12, 7.0).unwrap();
        assert!(a > 0.0 && a < b && b.is_finite());
    }

    #[test]
    fn draws_put_the_bound_at_the_right_quantile() {
        let s = Sample::new("p", vec![700.0], vec![400.0, 900.0, 1100.0]).unwrap();
        let fit = fit_assumed_shape(&s, 2.0, 0.95).unwrap();
        let a = fit.assumed.as_ref().unwrap();
        // u = 1 - C gives X = chi2(C): exactly the bound.
        let d = a.draw_scale(0.95).unwrap();
        assert!(
            (d - a.scale_lower).abs() < 1e-9 * d,
            "{d} {}",
            a.scale_lower
        );
        assert!(a.draw_scale(0.5).unwrap() > a.scale_lower);
    }
}
