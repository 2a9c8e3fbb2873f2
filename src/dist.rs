//! Life and lead-time distributions.
//!
//! Owns: the formulas of every distribution the model uses (cdf, survival,
//! density, hazard, mean, the integral of survival, conditional residual-life
//! sampling) and the one place where the parameter orders of the crates
//! underneath (`rand_distr`, `statrs`) are fixed.
//! May use: `statrs` special functions, `rand_distr` samplers, `rand` traits.
//! Never does I/O; constructors reject invalid parameters, so a value of
//! these types is always valid.

use rand::Rng;
use rand_distr::Distribution;
use statrs::function::gamma::{gamma, gamma_lr, gamma_ur};

/// The regularised upper incomplete gamma function `Q(a, x)`, with its
/// limits where statrs refuses (and would panic): 1 at `x <= 0` (e.g. a
/// `t / scale` that underflows) and 0 at `x = infinity` (one that
/// overflows). `a` is a validated shape (positive, finite).
fn upper_gamma(a: f64, x: f64) -> f64 {
    if x <= 0.0 {
        1.0
    } else if x == f64::INFINITY {
        0.0
    } else {
        gamma_ur(a, x)
    }
}

/// The regularised lower incomplete gamma function `P(a, x)`, with its
/// limits: 0 at `x <= 0`, 1 at `x = infinity` (see [`upper_gamma`]).
fn lower_gamma(a: f64, x: f64) -> f64 {
    if x <= 0.0 {
        0.0
    } else if x == f64::INFINITY {
        1.0
    } else {
        gamma_lr(a, x)
    }
}
use thiserror::Error;

/// Operating hours.
pub type Hours = f64;

/// Why a distribution could not be built.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum DistError {
    /// A parameter that must be finite and strictly positive was not.
    #[error("{name} must be a finite number greater than 0 (got {value})")]
    NotPositive { name: &'static str, value: f64 },
    /// A parameter that must be finite and at least zero was not.
    #[error("{name} must be a finite number of at least 0 (got {value})")]
    Negative { name: &'static str, value: f64 },
    /// A parameter that must be finite was not.
    #[error("{name} must be a finite number (got {value})")]
    NotFinite { name: &'static str, value: f64 },
}

/// `value` if it is finite and greater than 0.
pub(crate) fn positive(name: &'static str, value: f64) -> Result<f64, DistError> {
    // Written so that NaN fails the comparison.
    if value > 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(DistError::NotPositive { name, value })
    }
}

/// `value` if it is finite and at least 0.
pub(crate) fn non_negative(name: &'static str, value: f64) -> Result<f64, DistError> {
    if value >= 0.0 && value.is_finite() {
        Ok(value)
    } else {
        Err(DistError::Negative { name, value })
    }
}

fn finite(name: &'static str, value: f64) -> Result<f64, DistError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(DistError::NotFinite { name, value })
    }
}

/// The standard normal quantile, Wichura's algorithm AS 241 (PPND16),
/// Applied Statistics 37 (1988) 477-484; relative accuracy about 1e-16.
// The coefficients are printed as in the paper.
#[allow(
    clippy::inconsistent_digit_grouping,
    clippy::excessive_precision,
    clippy::unreadable_literal
)]
pub fn normal_quantile(p: f64) -> f64 {
    if p <= 0.0 {
        return f64::NEG_INFINITY;
    }
    if p >= 1.0 {
        return f64::INFINITY;
    }
    let q = p - 0.5;
    if q.abs() <= 0.425 {
        let r = 0.180625 - q * q;
        return q
            * (((((((2509.080_928_730_122_7 * r + 33430.575_583_588_128) * r
                + 67265.770_927_008_7)
                * r
                + 45921.953_931_549_87)
                * r
                + 13731.693_765_509_461)
                * r
                + 1971.590_950_306_551_3)
                * r
                + 133.141_667_891_784_38)
                * r
                + 3.387_132_872_796_366_5)
            / (((((((5226.495_278_852_545 * r + 28729.085_735_721_943) * r
                + 39307.895_800_092_71)
                * r
                + 21213.794_301_586_597)
                * r
                + 5394.196_021_424_751)
                * r
                + 687.187_007_492_057_9)
                * r
                + 42.313_330_701_600_91)
                * r
                + 1.0);
    }
    let mut r = if q < 0.0 { p } else { 1.0 - p };
    r = (-r.ln()).sqrt();
    let val = if r <= 5.0 {
        r -= 1.6;
        (((((((7.745_450_142_783_414e-4 * r + 0.022_723_844_989_269_184) * r
            + 0.241_780_725_177_450_6)
            * r
            + 1.270_458_252_452_368_4)
            * r
            + 3.647_848_324_763_204_5)
            * r
            + 5.769_497_221_460_691)
            * r
            + 4.630_337_846_156_546)
            * r
            + 1.423_437_110_749_683_5)
            / (((((((1.050_750_071_644_416_9e-9 * r + 5.475_938_084_995_345e-4) * r
                + 0.015_198_666_563_616_457)
                * r
                + 0.148_103_976_427_480_08)
                * r
                + 0.689_767_334_985_1)
                * r
                + 1.676_384_830_183_803_8)
                * r
                + 2.053_191_626_637_759)
                * r
                + 1.0)
    } else {
        r -= 5.0;
        (((((((2.010_334_399_292_288_1e-7 * r + 2.711_555_568_743_487_6e-5) * r
            + 0.001_242_660_947_388_078_4)
            * r
            + 0.026_532_189_526_576_124)
            * r
            + 0.296_560_571_828_504_87)
            * r
            + 1.784_826_539_917_291_3)
            * r
            + 5.463_784_911_164_114)
            * r
            + 6.657_904_643_501_103)
            / (((((((2.044_263_103_389_939_7e-15 * r + 1.421_511_758_316_446e-7) * r
                + 1.846_318_317_510_054_8e-5)
                * r
                + 7.868_691_311_456_133e-4)
                * r
                + 0.014_875_361_290_850_615)
                * r
                + 0.136_929_880_922_735_8)
                * r
                + 0.599_832_206_555_888)
                * r
                + 1.0)
    };
    if q < 0.0 { -val } else { val }
}

/// Standard normal upper tail `1 - Phi(z)`, accurate in the far tail.
pub fn normal_sf(z: f64) -> f64 {
    0.5 * statrs::function::erf::erfc(z / std::f64::consts::SQRT_2)
}

/// Standard normal density.
fn normal_pdf(z: f64) -> f64 {
    (-0.5 * z * z).exp() / (2.0 * std::f64::consts::PI).sqrt()
}

/// A uniform draw strictly inside (0, 1), from 53 random bits.
pub fn open_uniform<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    ((rng.next_u64() >> 11) as f64 + 0.5) * (1.0 / (1u64 << 53) as f64)
}

/// A part's life distribution in operating hours.
///
/// Build it with the named constructors; the variants' fields are the
/// parameters in the trade's usual names.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Life {
    /// Weibull with shape `beta`, scale `eta` (characteristic life) and
    /// location `gamma` (failure-free period; 0 for the 2-parameter form).
    Weibull {
        shape: f64,
        scale: Hours,
        location: Hours,
    },
    /// Lognormal: `ln(t)` is normal with mean `mu` and standard deviation `sigma`.
    Lognormal { mu: f64, sigma: f64 },
    /// Gamma with shape `k` and scale `theta` (mean `k * theta`).
    Gamma { shape: f64, scale: Hours },
    /// Exponential (constant hazard) with the given mean life (MTBF).
    Exponential { mean: Hours },
}

impl Life {
    /// 2-parameter Weibull from shape and scale.
    ///
    /// # Errors
    /// When either is not finite and positive.
    pub fn weibull(shape: f64, scale: Hours) -> Result<Self, DistError> {
        Self::weibull3(shape, scale, 0.0)
    }

    /// 3-parameter Weibull: shape, scale and location (failure-free period).
    ///
    /// # Errors
    /// When shape or scale is not finite and positive, or location is negative.
    pub fn weibull3(shape: f64, scale: Hours, location: Hours) -> Result<Self, DistError> {
        Ok(Life::Weibull {
            shape: positive("shape", shape)?,
            scale: positive("scale", scale)?,
            location: non_negative("location", location)?,
        })
    }

    /// Weibull from shape and mean life, as an MTBF is quoted in the trade:
    /// `scale = (mean - location) / Gamma(1 + 1/shape)`.
    ///
    /// # Errors
    /// When shape or mean is not positive, or the location is not below the mean.
    pub fn weibull_from_mean(shape: f64, mean: Hours, location: Hours) -> Result<Self, DistError> {
        let shape = positive("shape", shape)?;
        let mean = positive("mean", mean)?;
        let location = non_negative("location", location)?;
        let scale = positive("mean - location", mean - location)? / gamma(1.0 + 1.0 / shape);
        Self::weibull3(shape, scale, location)
    }

    /// Lognormal from the mean and standard deviation of `ln(t)`.
    ///
    /// # Errors
    /// When `mu` is not finite or `sigma` is not positive.
    pub fn lognormal(mu: f64, sigma: f64) -> Result<Self, DistError> {
        Ok(Life::Lognormal {
            mu: finite("mu", mu)?,
            sigma: positive("sigma", sigma)?,
        })
    }

    /// Gamma from shape and scale (hours).
    ///
    /// # Errors
    /// When either is not finite and positive.
    pub fn gamma(shape: f64, scale: Hours) -> Result<Self, DistError> {
        Ok(Life::Gamma {
            shape: positive("shape", shape)?,
            scale: positive("scale", scale)?,
        })
    }

    /// Exponential from its mean life (MTBF).
    ///
    /// # Errors
    /// When the mean is not finite and positive.
    pub fn exponential(mean: Hours) -> Result<Self, DistError> {
        Ok(Life::Exponential {
            mean: positive("mean", mean)?,
        })
    }

    /// Short name of the family, as used in scenario files and reports.
    pub fn family(&self) -> &'static str {
        match self {
            Life::Weibull { location, .. } if *location > 0.0 => "weibull3",
            Life::Weibull { .. } => "weibull",
            Life::Lognormal { .. } => "lognormal",
            Life::Gamma { .. } => "gamma",
            Life::Exponential { .. } => "exponential",
        }
    }

    /// A shape figure for summaries: Weibull or gamma shape, 1 for the
    /// exponential, and `sigma` for the lognormal.
    pub fn shape_figure(&self) -> f64 {
        self.shape_named().1
    }

    /// The figure of [`Life::shape_figure`] with its own name: `sigma`
    /// for the lognormal (the standard deviation of ln life, not a shape
    /// parameter), `shape` for the others.
    pub fn shape_named(&self) -> (&'static str, f64) {
        match *self {
            Life::Weibull { shape, .. } | Life::Gamma { shape, .. } => ("shape", shape),
            Life::Lognormal { sigma, .. } => ("sigma", sigma),
            Life::Exponential { .. } => ("shape", 1.0),
        }
    }

    /// A characteristic life for expressing intervals as fractions: the Weibull
    /// scale (plus location), otherwise the mean.
    pub fn characteristic_life(&self) -> Hours {
        match *self {
            Life::Weibull {
                scale, location, ..
            } => scale + location,
            _ => self.mean(),
        }
    }

    /// Survival function `R(t) = P(life > t)`.
    pub fn sf(&self, t: Hours) -> f64 {
        if t <= 0.0 {
            return 1.0;
        }
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => {
                if t <= location {
                    1.0
                } else {
                    (-((t - location) / scale).powf(shape)).exp()
                }
            }
            Life::Lognormal { mu, sigma } => normal_sf((t.ln() - mu) / sigma),
            Life::Gamma { shape, scale } => upper_gamma(shape, t / scale),
            Life::Exponential { mean } => (-t / mean).exp(),
        }
    }

    /// Cumulative distribution `F(t) = 1 - R(t)`.
    pub fn cdf(&self, t: Hours) -> f64 {
        if t <= 0.0 {
            return 0.0;
        }
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => {
                if t <= location {
                    0.0
                } else {
                    -(-((t - location) / scale).powf(shape)).exp_m1()
                }
            }
            Life::Lognormal { mu, sigma } => normal_sf(-(t.ln() - mu) / sigma),
            Life::Gamma { shape, scale } => lower_gamma(shape, t / scale),
            Life::Exponential { mean } => -(-t / mean).exp_m1(),
        }
    }

    /// Probability density.
    pub fn pdf(&self, t: Hours) -> f64 {
        if t <= 0.0 {
            return 0.0;
        }
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => {
                if t <= location {
                    0.0
                } else {
                    let z = (t - location) / scale;
                    shape / scale * z.powf(shape - 1.0) * (-z.powf(shape)).exp()
                }
            }
            Life::Lognormal { mu, sigma } => normal_pdf((t.ln() - mu) / sigma) / (t * sigma),
            Life::Gamma { shape, scale } => {
                let x = t / scale;
                ((shape - 1.0) * x.ln() - x - statrs::function::gamma::ln_gamma(shape)).exp()
                    / scale
            }
            Life::Exponential { mean } => (-t / mean).exp() / mean,
        }
    }

    /// Hazard rate `h(t) = f(t) / R(t)`.
    pub fn hazard(&self, t: Hours) -> f64 {
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => {
                if t <= location {
                    0.0
                } else {
                    shape / scale * ((t - location) / scale).powf(shape - 1.0)
                }
            }
            Life::Exponential { mean } => 1.0 / mean,
            _ => {
                let r = self.sf(t);
                if r > 0.0 {
                    self.pdf(t) / r
                } else {
                    f64::INFINITY
                }
            }
        }
    }

    /// Mean life.
    pub fn mean(&self) -> Hours {
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => location + scale * gamma(1.0 + 1.0 / shape),
            Life::Lognormal { mu, sigma } => (mu + 0.5 * sigma * sigma).exp(),
            Life::Gamma { shape, scale } => shape * scale,
            Life::Exponential { mean } => mean,
        }
    }

    /// `integral_0^t R(x) dx`: the expected operating hours of one part up to
    /// `t` (the denominator of the age-replacement cost rate).
    pub fn integral_sf(&self, t: Hours) -> Hours {
        if t <= 0.0 {
            return 0.0;
        }
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => {
                if t <= location {
                    t
                } else {
                    let z = ((t - location) / scale).powf(shape);
                    location + scale * gamma(1.0 + 1.0 / shape) * lower_gamma(1.0 / shape, z)
                }
            }
            Life::Lognormal { mu, sigma } => {
                // t R(t) + E[X; X <= t]
                let z = (t.ln() - mu) / sigma;
                t * normal_sf(z) + self.mean() * normal_sf(-(z - sigma))
            }
            Life::Gamma { shape, scale } => {
                t * self.sf(t) + shape * scale * lower_gamma(shape + 1.0, t / scale)
            }
            Life::Exponential { mean } => -mean * (-t / mean).exp_m1(),
        }
    }

    /// Mean residual life of a part that has survived to `age`.
    pub fn mean_residual(&self, age: Hours) -> Hours {
        if age <= 0.0 {
            return self.mean();
        }
        let r = self.sf(age);
        if r <= 1e-300 {
            // Far in the tail: the hazard is effectively its local value.
            let h = self.hazard(age);
            return if h > 0.0 && h.is_finite() {
                1.0 / h
            } else {
                0.0
            };
        }
        ((self.mean() - self.integral_sf(age)) / r).max(0.0)
    }

    /// Remaining life of a part already `age` hours old, from one uniform
    /// `u` in (0, 1): the `t` with `R(age + t) = u * R(age)`.
    fn residual_from_uniform(&self, age: Hours, u: f64) -> Hours {
        let age = age.max(0.0);
        match *self {
            Life::Weibull {
                shape,
                scale,
                location,
            } => {
                // A part not yet past the location has z0 = 0 (skip the power).
                let z0 = if age > location {
                    ((age - location) / scale).powf(shape)
                } else {
                    0.0
                };
                let t = location + scale * (z0 - u.ln()).powf(1.0 / shape);
                (t - age).max(0.0)
            }
            Life::Exponential { mean } => -mean * u.ln(),
            Life::Lognormal { mu, sigma } => {
                let tail = if age > 0.0 {
                    normal_sf((age.ln() - mu) / sigma)
                } else {
                    1.0
                };
                let p = (u * tail).max(f64::MIN_POSITIVE);
                let z = -normal_quantile(p);
                ((mu + sigma * z).exp() - age).max(0.0)
            }
            Life::Gamma { shape, scale } => {
                // Bisection on the survival function; used for aged parts only.
                let target = u * self.sf(age);
                let mut lo = age;
                let mut hi = age.max(shape * scale) + scale;
                while self.sf(hi) > target && hi < 1e300 {
                    hi = hi * 2.0 + scale;
                }
                for _ in 0..200 {
                    let mid = 0.5 * (lo + hi);
                    if self.sf(mid) > target {
                        lo = mid;
                    } else {
                        hi = mid;
                    }
                    if hi - lo <= 1e-12 * hi {
                        break;
                    }
                }
                (0.5 * (lo + hi) - age).max(0.0)
            }
        }
    }

    /// Draw the remaining life of a part already `age` hours old.
    ///
    /// Weibull, exponential and lognormal draws use exactly one uniform
    /// (inverse transform); a new gamma part uses the Marsaglia-Tsang sampler.
    pub fn sample_residual<R: Rng + ?Sized>(&self, age: Hours, rng: &mut R) -> Hours {
        match *self {
            Life::Gamma { shape, scale } if age <= 0.0 => {
                // Parameter order owned here: rand_distr's Gamma::new(shape, scale).
                rand_distr::Gamma::new(shape, scale)
                    .map(|g| g.sample(rng))
                    .unwrap_or(shape * scale)
            }
            _ => {
                let u = open_uniform(rng);
                self.residual_from_uniform(age, u)
            }
        }
    }
}

/// A resupply lead-time distribution, in hours.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LeadTime {
    /// Always the same lead time.
    Fixed { hours: Hours },
    /// `median * exp(log_sd * Z)` with `Z` standard normal.
    Lognormal { median: Hours, log_sd: f64 },
    /// Gamma with the given mean and coefficient of variation.
    Gamma { mean: Hours, cv: f64 },
}

impl LeadTime {
    /// A fixed lead time (0 allowed: spares arrive at once).
    ///
    /// # Errors
    /// When the hours are negative or not finite.
    pub fn fixed(hours: Hours) -> Result<Self, DistError> {
        Ok(LeadTime::Fixed {
            hours: non_negative("hours", hours)?,
        })
    }

    /// Lognormal by median and log standard deviation.
    ///
    /// # Errors
    /// When the median is not positive or the log-sd is negative.
    pub fn lognormal(median: Hours, log_sd: f64) -> Result<Self, DistError> {
        Ok(LeadTime::Lognormal {
            median: positive("median", median)?,
            log_sd: non_negative("log_sd", log_sd)?,
        })
    }

    /// Gamma by mean and coefficient of variation.
    ///
    /// # Errors
    /// When either is not finite and positive.
    pub fn gamma(mean: Hours, cv: f64) -> Result<Self, DistError> {
        Ok(LeadTime::Gamma {
            mean: positive("mean", mean)?,
            cv: positive("cv", cv)?,
        })
    }

    /// Mean lead time.
    pub fn mean(&self) -> Hours {
        match *self {
            LeadTime::Fixed { hours } => hours,
            LeadTime::Lognormal { median, log_sd } => median * (0.5 * log_sd * log_sd).exp(),
            LeadTime::Gamma { mean, .. } => mean,
        }
    }

    /// Draw one lead time.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> Hours {
        match *self {
            LeadTime::Fixed { hours } => hours,
            LeadTime::Lognormal { median, log_sd } => {
                median * (log_sd * normal_quantile(open_uniform(rng))).exp()
            }
            LeadTime::Gamma { mean, cv } => {
                let shape = 1.0 / (cv * cv);
                rand_distr::Gamma::new(shape, mean / shape)
                    .map(|g| g.sample(rng))
                    .unwrap_or(mean)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) {
        assert!((a - b).abs() <= tol, "{a} vs {b} (tol {tol})");
    }

    #[test]
    fn gamma_survival_survives_extreme_ratios() {
        // t / scale underflowing to 0 or overflowing to infinity: the
        // limits 1 and 0, not a panic inside statrs (found by fuzzing).
        let wide = Life::gamma(2.0, 1e300).unwrap();
        assert_eq!(wide.sf(1e-300), 1.0);
        assert_eq!(wide.cdf(1e-300), 0.0);
        let narrow = Life::gamma(2.0, 1e-300).unwrap();
        assert_eq!(narrow.sf(1e300), 0.0);
        assert_eq!(narrow.cdf(1e300), 1.0);
        assert!(narrow.integral_sf(1e300).is_finite());
        assert!(wide.integral_sf(1e-300).is_finite());
    }

    #[test]
    fn normal_quantile_known_values() {
        // Standard normal table values (any statistics handbook).
        close(normal_quantile(0.975), 1.959_963_984_540_054, 1e-14);
        close(normal_quantile(0.5), 0.0, 1e-16);
        close(normal_quantile(1e-10), -6.361_340_902_404_056, 1e-12);
    }

    #[test]
    fn weibull_mean_and_integral() {
        // Weibull shape 1 is the exponential: mean = scale; integral = scale (1 - e^{-t/scale}).
        let w = Life::weibull(1.0, 100.0).unwrap();
        close(w.mean(), 100.0, 1e-9);
        close(w.integral_sf(50.0), 100.0 * (1.0 - (-0.5f64).exp()), 1e-9);
        // Mean residual of the exponential is memoryless.
        close(w.mean_residual(300.0), 100.0, 1e-6);
    }

    #[test]
    fn weibull_from_mean_round_trips() {
        let w = Life::weibull_from_mean(2.2, 12_000.0, 0.0).unwrap();
        close(w.mean(), 12_000.0, 1e-6);
    }

    #[test]
    fn integral_sf_matches_quadrature() {
        let lives = [
            Life::weibull3(2.5, 1000.0, 200.0).unwrap(),
            Life::lognormal(6.5, 0.6).unwrap(),
            Life::gamma(2.5, 300.0).unwrap(),
        ];
        for life in lives {
            let t = 1500.0;
            let n = 200_000;
            let h = t / n as f64;
            let quad: f64 = (0..n)
                .map(|i| life.sf((i as f64 + 0.5) * h) * h)
                .sum::<f64>();
            close(life.integral_sf(t), quad, 1e-4 * t);
            // The integral to infinity is the mean.
            close(life.integral_sf(1e7), life.mean(), 1e-6 * life.mean());
        }
    }

    #[test]
    fn residual_sampling_is_conditional() {
        // P(residual > x | age a) = R(a + x) / R(a) at the median of the uniform.
        let lives = [
            Life::weibull(2.0, 1000.0).unwrap(),
            Life::lognormal(6.9, 0.5).unwrap(),
            Life::gamma(3.0, 300.0).unwrap(),
        ];
        for life in lives {
            let a = 700.0;
            let r = life.residual_from_uniform(a, 0.5);
            close(life.sf(a + r) / life.sf(a), 0.5, 1e-8);
        }
    }

    #[test]
    fn constructors_reject_nan_and_nonpositive() {
        assert!(Life::weibull(f64::NAN, 1.0).is_err());
        assert!(Life::weibull(1.0, 0.0).is_err());
        assert!(Life::weibull3(1.0, 1.0, -1.0).is_err());
        assert!(Life::lognormal(f64::INFINITY, 1.0).is_err());
        assert!(Life::gamma(1.0, -2.0).is_err());
        assert!(Life::exponential(f64::NAN).is_err());
        assert!(LeadTime::fixed(-1.0).is_err());
        assert!(LeadTime::lognormal(0.0, 0.4).is_err());
    }

    #[test]
    fn hazard_is_density_over_survival() {
        let life = Life::weibull(2.8, 11_000.0).unwrap();
        let t = 9000.0;
        close(life.hazard(t), life.pdf(t) / life.sf(t), 1e-12);
    }
}
