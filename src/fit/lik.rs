//! Log-likelihoods of any mix of exact, right-, left- and interval-censored,
//! left-truncated and counted observations, for every family.
//!
//! Owns: the stable logarithms of densities, survival and interval
//! probabilities of the Weibull (with location), lognormal and gamma
//! families, and their sum over a sample.
//! May use: `super::sample`, `crate::dist::normal_sf`, `statrs` special
//! functions.
//!
//! One observation of `count` parts adds, to the log-likelihood (Meeker &
//! Escobar, *Statistical Methods for Reliability Data*, 1998, ch. 2 and
//! sec. 11.6 for truncation; Lawless 2003, sec. 2.2):
//! - a failure at `t`: `count x ln f(t)`;
//! - a suspension at `t`: `count x ln R(t)`;
//! - a failure in `(a, b]`: `count x ln(F(b) - F(a))`, with `a` raised to
//!   the entry age (a part is known to work when it enters the records);
//!   `a = 0` gives `ln F(b)` (left-censored);
//! - an entry age `e > 0` subtracts `count x ln R(e)` (the part had to
//!   survive to `e` to be seen).
//!
//! The sum runs over the sample's canonical list in order, so grouped and
//! expanded rows give the same bits (see `super::sample`).

use statrs::function::gamma::{checked_gamma_lr, checked_gamma_ur, ln_gamma};

use super::sample::{Obs, Observed};
use crate::dist::normal_sf;

/// A fully specified distribution whose likelihood is evaluated.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Dist {
    /// Weibull with shape `beta`, scale `eta`, location `loc` (the
    /// exponential is `beta = 1`, `loc = 0`).
    Weibull { beta: f64, eta: f64, loc: f64 },
    /// Lognormal: `ln t` is normal with mean `mu`, sd `sigma`.
    Lognormal { mu: f64, sigma: f64 },
    /// Gamma with shape `k` and scale `theta`.
    Gamma { k: f64, theta: f64 },
}

/// `ln(1 - exp(x))` for `x <= 0`, accurate near both ends (Maechler 2012,
/// "Accurately computing log(1 - exp(-|a|))", the R package Rmpfr note).
pub(crate) fn ln1m_exp(x: f64) -> f64 {
    if x > -std::f64::consts::LN_2 {
        (-x.exp_m1()).ln()
    } else {
        (-x.exp()).ln_1p()
    }
}

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

/// `ln Q(a, x)`, the log of the regularised upper incomplete gamma
/// function, with an asymptotic form (Abramowitz & Stegun 6.5.32) where
/// `Q` underflows.
pub(crate) fn ln_gamma_q(a: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
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

/// `ln P(a, x)`, the log of the regularised lower incomplete gamma
/// function, with the leading terms of its series (Abramowitz & Stegun
/// 6.5.29) where `P` underflows.
pub(crate) fn ln_gamma_p(a: f64, x: f64) -> f64 {
    if x <= 0.0 {
        return f64::NEG_INFINITY;
    }
    match checked_gamma_lr(a, x) {
        Ok(p) if p > 1e-300 => p.ln(),
        Ok(p) if p.is_nan() => f64::NAN,
        Ok(_) if x < a + 1.0 => a * x.ln() - x - ln_gamma(a + 1.0) + (1.0 + x / (a + 1.0)).ln(),
        Ok(_) => f64::NEG_INFINITY,
        Err(_) => f64::NEG_INFINITY,
    }
}

impl Dist {
    /// True when every parameter is finite and in range.
    fn valid(&self) -> bool {
        match *self {
            Dist::Weibull { beta, eta, loc } => {
                beta > 0.0 && eta > 0.0 && beta.is_finite() && eta.is_finite() && loc.is_finite()
            }
            Dist::Lognormal { mu, sigma } => mu.is_finite() && sigma > 0.0 && sigma.is_finite(),
            Dist::Gamma { k, theta } => {
                k > 0.0 && theta > 0.0 && k.is_finite() && theta.is_finite()
            }
        }
    }

    /// Weibull cumulative hazard `((t - loc) / eta)^beta` (0 at or below loc).
    fn weibull_z(beta: f64, eta: f64, loc: f64, t: f64) -> f64 {
        Self::weibull_lz(beta, eta, loc, t).exp()
    }

    /// Its logarithm (minus infinity at or below loc).
    fn weibull_lz(beta: f64, eta: f64, loc: f64, t: f64) -> f64 {
        let d = t - loc;
        if d <= 0.0 {
            f64::NEG_INFINITY
        } else {
            beta * (d.ln() - eta.ln())
        }
    }

    /// `ln f(t)`.
    pub(crate) fn ln_pdf(&self, t: f64) -> f64 {
        match *self {
            Dist::Weibull { beta, eta, loc } => {
                let d = t - loc;
                if d <= 0.0 {
                    return f64::NEG_INFINITY;
                }
                let z = d.ln() - eta.ln();
                beta.ln() - eta.ln() + (beta - 1.0) * z - (beta * z).exp()
            }
            Dist::Lognormal { mu, sigma } => {
                let lt = t.ln();
                let u = (lt - mu) / sigma;
                -lt - sigma.ln() - 0.5 * (2.0 * std::f64::consts::PI).ln() - 0.5 * u * u
            }
            Dist::Gamma { k, theta } => {
                (k - 1.0) * t.ln() - t / theta - ln_gamma(k) - k * theta.ln()
            }
        }
    }

    /// `ln R(t)`.
    pub(crate) fn ln_sf(&self, t: f64) -> f64 {
        match *self {
            Dist::Weibull { beta, eta, loc } => -Self::weibull_z(beta, eta, loc, t),
            Dist::Lognormal { mu, sigma } => {
                if t <= 0.0 {
                    0.0
                } else {
                    ln_normal_sf((t.ln() - mu) / sigma)
                }
            }
            Dist::Gamma { k, theta } => ln_gamma_q(k, t / theta),
        }
    }

    /// `ln F(t)`.
    pub(crate) fn ln_cdf(&self, t: f64) -> f64 {
        match *self {
            Dist::Weibull { beta, eta, loc } => {
                let lz = Self::weibull_lz(beta, eta, loc, t);
                if lz < -30.0 {
                    // ln(1 - exp(-z)) = ln z - z/2 + ..., z below 1e-13.
                    lz
                } else {
                    ln1m_exp(-lz.exp())
                }
            }
            Dist::Lognormal { mu, sigma } => {
                if t <= 0.0 {
                    f64::NEG_INFINITY
                } else {
                    ln_normal_sf(-(t.ln() - mu) / sigma)
                }
            }
            Dist::Gamma { k, theta } => ln_gamma_p(k, t / theta),
        }
    }

    /// `ln(F(b) - F(a))` for `0 < a < b`, without cancellation in either tail.
    pub(crate) fn ln_prob(&self, a: f64, b: f64) -> f64 {
        match *self {
            Dist::Weibull { beta, eta, loc } => {
                let lza = Self::weibull_lz(beta, eta, loc, a);
                let lzb = Self::weibull_lz(beta, eta, loc, b);
                if lzb <= lza {
                    return f64::NEG_INFINITY;
                }
                if lzb < -30.0 {
                    // Both hazards below 1e-13: exp(-za) - exp(-zb) = zb - za
                    // to relative order 1e-13.
                    return lzb + ln1m_exp(lza - lzb);
                }
                let (za, zb) = (lza.exp(), lzb.exp());
                -za + ln1m_exp(-(zb - za))
            }
            Dist::Lognormal { mu, sigma } => {
                let ua = (a.ln() - mu) / sigma;
                let ub = (b.ln() - mu) / sigma;
                if ua > 0.0 {
                    let (sa, sb) = (ln_normal_sf(ua), ln_normal_sf(ub));
                    sa + ln1m_exp(sb - sa)
                } else if ub < 0.0 {
                    let (fa, fb) = (ln_normal_sf(-ua), ln_normal_sf(-ub));
                    fb + ln1m_exp(fa - fb)
                } else {
                    (1.0 - normal_sf(ub) - normal_sf(-ua)).ln()
                }
            }
            Dist::Gamma { k, theta } => {
                let (xa, xb) = (a / theta, b / theta);
                if xa >= k {
                    let (qa, qb) = (ln_gamma_q(k, xa), ln_gamma_q(k, xb));
                    qa + ln1m_exp(qb - qa)
                } else {
                    let (pa, pb) = (ln_gamma_p(k, xa), ln_gamma_p(k, xb));
                    pb + ln1m_exp(pa - pb)
                }
            }
        }
    }

    /// The log-likelihood of one part's observation, before its count.
    pub(crate) fn term(&self, o: &Obs) -> f64 {
        let main = match o.what {
            Observed::Failure(t) => self.ln_pdf(t),
            Observed::Suspension(t) => self.ln_sf(t),
            Observed::Interval { after, before } => {
                let lo = after.max(o.entry);
                if lo <= 0.0 {
                    self.ln_cdf(before)
                } else {
                    self.ln_prob(lo, before)
                }
            }
        };
        if o.entry > 0.0 {
            main - self.ln_sf(o.entry)
        } else {
            main
        }
    }

    /// The log-likelihood of a sample's canonical observations: the sum of
    /// `count x term` in list order; minus infinity (never NaN) when the
    /// parameters are out of range or the data impossible under them.
    pub(crate) fn loglik(&self, obs: &[Obs]) -> f64 {
        if !self.valid() {
            return f64::NEG_INFINITY;
        }
        let mut ll = 0.0;
        for o in obs {
            ll += o.count * self.term(o);
        }
        if ll.is_nan() { f64::NEG_INFINITY } else { ll }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Direct differences of F where they are accurate enough to compare.
    #[test]
    fn interval_probabilities_match_differences_of_the_cdf() {
        let dists = [
            Dist::Weibull {
                beta: 1.7,
                eta: 900.0,
                loc: 0.0,
            },
            Dist::Weibull {
                beta: 2.5,
                eta: 500.0,
                loc: 100.0,
            },
            Dist::Lognormal {
                mu: 6.5,
                sigma: 0.8,
            },
            Dist::Gamma {
                k: 2.3,
                theta: 300.0,
            },
        ];
        for d in dists {
            for (a, b) in [
                (150.0, 400.0),
                (600.0, 2000.0),
                (10.0, 12.0),
                (300.0, 301.0),
            ] {
                let direct = (d.ln_cdf(b).exp() - d.ln_cdf(a).exp()).ln();
                let got = d.ln_prob(a, b);
                if direct == f64::NEG_INFINITY {
                    // Below a Weibull's location nothing fails.
                    assert_eq!(got, direct, "{d:?} {a} {b}");
                    continue;
                }
                assert!((got - direct).abs() < 1e-9, "{d:?} {a} {b}: {got} {direct}");
                // ln F + ln R = ... : F(t) + R(t) = 1.
                let s = d.ln_cdf(a).exp() + d.ln_sf(a).exp();
                assert!((s - 1.0).abs() < 1e-12, "{d:?} {a}");
            }
        }
    }

    #[test]
    fn far_tails_stay_finite() {
        let d = Dist::Lognormal {
            mu: 0.0,
            sigma: 1.0,
        };
        // 40 to 41 sd above the mean of ln t: both survival values underflow.
        let v = d.ln_prob(40f64.exp(), 41f64.exp());
        assert!(v.is_finite() && v < -700.0, "{v}");
        let g = Dist::Gamma { k: 2.0, theta: 1.0 };
        assert!(g.ln_prob(1e3, 2e3).is_finite());
        assert!(g.ln_cdf(1e-200).is_finite());
        let w = Dist::Weibull {
            beta: 3.0,
            eta: 1.0,
            loc: 0.0,
        };
        assert!(w.ln_cdf(1e-120).is_finite());
        assert!(w.ln_prob(1e-120, 2e-120).is_finite());
        assert!((ln1m_exp(-1e-20) - (1e-20f64).ln()).abs() < 1e-9);
    }

    #[test]
    fn truncation_conditions_on_survival() {
        let d = Dist::Weibull {
            beta: 2.0,
            eta: 1000.0,
            loc: 0.0,
        };
        let o = Obs::failure(800.0).entered_at(300.0);
        let want = d.ln_pdf(800.0) - d.ln_sf(300.0);
        assert_eq!(d.term(&o), want);
        // A left-censored part seen working at entry: (entry, before].
        let l = Obs::interval(0.0, 800.0).entered_at(300.0);
        let want = (d.ln_sf(300.0).exp() - d.ln_sf(800.0).exp()).ln() - d.ln_sf(300.0);
        assert!((d.term(&l) - want).abs() < 1e-12);
    }
}
