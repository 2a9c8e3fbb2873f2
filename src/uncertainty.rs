//! Estimation uncertainty of a fitted life distribution, carried into the
//! Monte Carlo trials.
//!
//! Owns: [`LifeUncertainty`] (a fit's point estimate and the asymptotic
//! normal distribution of its log-parameters) and the per-trial draw of a
//! [`Life`] from it, with the guard against absurd draws.
//! May use: `dist` (`Life`, `normal_quantile`, `open_uniform`), the
//! covariance and family types of `fit`, `rand` traits. Does no I/O and
//! takes its randomness from the stream it is handed.
//!
//! The draw follows the large-sample theory of maximum likelihood: the
//! estimates of the log-parameters are approximately normal around the
//! true values with covariance the inverse observed information (Meeker &
//! Escobar, *Statistical Methods for Reliability Data*, 1998, ch. 8; Lawless,
//! *Statistical Models and Methods for Lifetime Data*, 2003, sec. 4.1). A
//! trial draws the log-parameters from that normal, `center + L z` with `L`
//! the Cholesky factor of the covariance and `z` standard normal (one
//! uniform per parameter, through the normal quantile), and maps them back
//! (`shape = exp(ln shape)`, ...).
//!
//! Guard against absurd draws: a draw is rejected when any parameter is not
//! finite, when a Weibull or gamma shape falls below [`MIN_SHAPE`], when a
//! lognormal `sigma` exceeds [`MAX_LOG_SD`] (the spread of `ln(life)` of a
//! Weibull of shape [`MIN_SHAPE`], `pi / (sqrt 6 * shape)`), or when the
//! distribution constructor refuses it (e.g. a scale that overflows). A
//! rejected draw is redrawn, at most [`MAX_DRAWS`] times in all; if every
//! draw is rejected the last one is clamped into the allowed region (shape
//! raised to [`MIN_SHAPE`], `sigma` lowered to [`MAX_LOG_SD`], log-scales
//! kept within `exp`'s range, non-finite values replaced by the point
//! estimate's). A drawn 3-parameter Weibull location is clamped to
//! `[0, smallest failure]`, as in [`Fit::sample_life`]. Redrawing makes the
//! accepted draws a normal truncated to the allowed region; even with a
//! handful of failures the region holds all but a negligible share of the
//! normal's mass (six failures from a shape near 3 put the bound 0.05 about
//! twelve standard errors below the estimate, on the log scale).
//!
//! A Weibull whose shape was assumed from experience (an assumed-shape fit
//! with its chi-square bound, which also exists with no failure at all)
//! draws its scale from the distribution whose quantiles are that bound:
//! `scale = (2 T / X)^(1/shape)`, `X` chi-square with `2r + 2` degrees of
//! freedom drawn by its quantile at one uniform, `T` the total of
//! `t^shape` over the parts (see `fit::weibayes`). The scale's one-sided
//! lower bound at confidence `C` is then the `1 - C` quantile of the
//! draws, so the trials are as pessimistic as the bound; the shape stays
//! the assumed one.

use rand::Rng;
use thiserror::Error;

use crate::dist::{Hours, Life, normal_quantile, open_uniform};
use crate::fit::weibayes::chi_square_quantile;
use crate::fit::{BoundMethod, Family, Fit, LogParamCovariance, Sample};

/// Smallest Weibull or gamma shape a draw may take.
pub const MIN_SHAPE: f64 = 0.05;

/// Largest lognormal `sigma` a draw may take: the standard deviation of
/// `ln(life)` of a Weibull with shape [`MIN_SHAPE`], `pi / (sqrt(6) * 0.05)`
/// (the log of a Weibull life is a smallest-extreme-value variable with
/// standard deviation `pi / (sqrt(6) beta)`; Johnson, Kotz & Balakrishnan,
/// *Continuous Univariate Distributions* vol. 2, ch. 22).
pub const MAX_LOG_SD: f64 = std::f64::consts::PI / (2.449_489_742_783_178 * MIN_SHAPE);

/// Draws tried per trial before the last one is clamped.
pub const MAX_DRAWS: usize = 16;

/// Log-scales are kept below this so that `exp` stays finite (`exp(700)`
/// is about 1e304).
const MAX_LN: f64 = 700.0;

/// Why a [`LifeUncertainty`] could not be built.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum UncertaintyError {
    /// The covariance's parameters are not those of the life's family.
    #[error(
        "the covariance's parameters ({names}) do not belong to a {family} life; expected {expected}"
    )]
    Layout {
        names: String,
        family: &'static str,
        expected: &'static str,
    },
    /// The covariance matrix is not symmetric positive definite.
    #[error("the covariance of the log-parameters is not positive definite")]
    NotPositiveDefinite,
}

/// How the log-parameters map back to a [`Life`].
#[derive(Debug, Clone, Copy, PartialEq)]
enum Layout {
    /// `[ln shape, ln scale]`, location fixed.
    WeibullShapeScale { location: Hours },
    /// `[ln shape, ln scale, location]`; location clamped to `[0, cap]`.
    Weibull3 { cap: Hours },
    /// `[ln scale]`, shape and location fixed (shape given from experience).
    WeibullScale { shape: f64, location: Hours },
    /// Shape assumed; scale `(2 T / X)^(1/shape)` with `X` chi-square of
    /// `dof` degrees of freedom (one uniform per draw).
    WeibullScaleChiSquare { shape: f64, ln_total: f64, dof: f64 },
    /// `[mu, ln sigma]`.
    Lognormal,
    /// `[ln shape, ln scale]`.
    Gamma,
    /// `[ln mean]`.
    Exponential,
}

impl Layout {
    fn of(point: &Life, names: &[&str], cap: Option<Hours>) -> Result<Self, UncertaintyError> {
        let bad = |expected: &'static str| UncertaintyError::Layout {
            names: names.join(", "),
            family: point.family(),
            expected,
        };
        match (*point, names) {
            (Life::Weibull { location, .. }, ["ln shape", "ln scale"]) => {
                Ok(Layout::WeibullShapeScale { location })
            }
            (Life::Weibull { location, .. }, ["ln shape", "ln scale", "location"]) => {
                Ok(Layout::Weibull3 {
                    cap: cap.unwrap_or(f64::INFINITY).max(location),
                })
            }
            (
                Life::Weibull {
                    shape, location, ..
                },
                ["ln scale"],
            ) => Ok(Layout::WeibullScale { shape, location }),
            (Life::Weibull { .. }, _) => Err(bad(
                "[ln shape, ln scale], [ln shape, ln scale, location] or [ln scale]",
            )),
            (Life::Lognormal { .. }, ["mu", "ln sigma"]) => Ok(Layout::Lognormal),
            (Life::Lognormal { .. }, _) => Err(bad("[mu, ln sigma]")),
            (Life::Gamma { .. }, ["ln shape", "ln scale"]) => Ok(Layout::Gamma),
            (Life::Gamma { .. }, _) => Err(bad("[ln shape, ln scale]")),
            (Life::Exponential { .. }, ["ln mean"]) => Ok(Layout::Exponential),
            (Life::Exponential { .. }, _) => Err(bad("[ln mean]")),
        }
    }

    fn family(self) -> Family {
        match self {
            Layout::WeibullShapeScale { location } | Layout::WeibullScale { location, .. } => {
                if location > 0.0 {
                    Family::Weibull3
                } else {
                    Family::Weibull
                }
            }
            Layout::Weibull3 { .. } => Family::Weibull3,
            Layout::WeibullScaleChiSquare { .. } => Family::Weibull,
            Layout::Lognormal => Family::Lognormal,
            Layout::Gamma => Family::Gamma,
            Layout::Exponential => Family::Exponential,
        }
    }

    /// The life of log-parameters `p`, or `None` when the guard rejects them.
    fn life(self, p: &[f64; 3]) -> Option<Life> {
        let n = self.len();
        if p[..n].iter().any(|v| !v.is_finite()) {
            return None;
        }
        let ln_shape_ok = |x: f64| x >= MIN_SHAPE.ln();
        let ln_ok = |x: f64| x.abs() <= MAX_LN;
        let life = match self {
            Layout::WeibullShapeScale { location } => {
                if !(ln_shape_ok(p[0]) && ln_ok(p[0]) && ln_ok(p[1])) {
                    return None;
                }
                Life::weibull3(p[0].exp(), p[1].exp(), location)
            }
            Layout::Weibull3 { cap } => {
                if !(ln_shape_ok(p[0]) && ln_ok(p[0]) && ln_ok(p[1])) {
                    return None;
                }
                Life::weibull3(p[0].exp(), p[1].exp(), p[2].clamp(0.0, cap))
            }
            Layout::WeibullScale { shape, location } => {
                if !ln_ok(p[0]) {
                    return None;
                }
                Life::weibull3(shape, p[0].exp(), location)
            }
            Layout::WeibullScaleChiSquare { shape, .. } => {
                // p[0] is ln scale, drawn in `draw_log_params`.
                if !ln_ok(p[0]) {
                    return None;
                }
                Life::weibull(shape, p[0].exp())
            }
            Layout::Lognormal => {
                if !(p[1] <= MAX_LOG_SD.ln() && ln_ok(p[1])) {
                    return None;
                }
                Life::lognormal(p[0], p[1].exp())
            }
            Layout::Gamma => {
                if !(ln_shape_ok(p[0]) && ln_ok(p[0]) && ln_ok(p[1])) {
                    return None;
                }
                Life::gamma(p[0].exp(), p[1].exp())
            }
            Layout::Exponential => {
                if !ln_ok(p[0]) {
                    return None;
                }
                Life::exponential(p[0].exp())
            }
        };
        life.ok()
    }

    /// Move `p` into the region the guard accepts (non-finite values become
    /// the centre's).
    fn clamp(self, p: &mut [f64; 3], center: &[f64; 3]) {
        for (x, c) in p.iter_mut().zip(center) {
            if !x.is_finite() {
                *x = *c;
            }
        }
        match self {
            Layout::WeibullShapeScale { .. } | Layout::Weibull3 { .. } | Layout::Gamma => {
                p[0] = p[0].clamp(MIN_SHAPE.ln(), MAX_LN);
                p[1] = p[1].clamp(-MAX_LN, MAX_LN);
            }
            Layout::WeibullScale { .. }
            | Layout::WeibullScaleChiSquare { .. }
            | Layout::Exponential => {
                p[0] = p[0].clamp(-MAX_LN, MAX_LN);
            }
            Layout::Lognormal => p[1] = p[1].clamp(-MAX_LN, MAX_LN.min(MAX_LOG_SD.ln())),
        }
    }

    fn len(self) -> usize {
        match self {
            Layout::Weibull3 { .. } => 3,
            Layout::WeibullScale { .. }
            | Layout::WeibullScaleChiSquare { .. }
            | Layout::Exponential => 1,
            _ => 2,
        }
    }
}

/// A fitted life with the sampling uncertainty of its parameters.
///
/// Holds the fit's point estimate and the covariance of its log-parameters
/// (inverse observed information); [`LifeUncertainty::draw`] gives one
/// plausible life per call. Without a covariance (a fit whose observed
/// information is not positive definite, or a rank-regression fit) every
/// draw is the point estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct LifeUncertainty {
    point: Life,
    covariance: Option<LogParamCovariance>,
    layout: Layout,
    /// Number of log-parameters drawn (0 without a covariance).
    n: usize,
    center: [f64; 3],
    /// Lower-triangular Cholesky factor of the covariance.
    chol: [[f64; 3]; 3],
}

impl LifeUncertainty {
    /// From a fit and the sample it was fitted to (the smallest age by
    /// which a failure is known to have happened caps a drawn 3-parameter
    /// Weibull location). An assumed-shape fit with a chi-square bound
    /// draws its scale from the bound's distribution (module
    /// documentation).
    ///
    /// # Errors
    /// When the fit's covariance does not match its family (not produced by
    /// this crate's fits).
    pub fn from_fit(fit: &Fit, sample: &Sample) -> Result<Self, UncertaintyError> {
        let cap = sample.earliest_failure_bound().min(fit.location_cap());
        if let Some(a) = &fit.assumed
            && let (BoundMethod::ChiSquare { dof }, Some(ln_total)) = (a.bound, a.ln_total)
        {
            let point = fit.life();
            let center = match point {
                Life::Weibull { scale, .. } => scale.ln(),
                _ => 0.0,
            };
            return Ok(LifeUncertainty {
                point,
                covariance: None,
                layout: Layout::WeibullScaleChiSquare {
                    shape: a.shape,
                    ln_total,
                    dof,
                },
                n: 1,
                center: [center, 0.0, 0.0],
                chol: [[0.0; 3]; 3],
            });
        }
        match fit.log_param_covariance() {
            Some(cov) => Self::new(fit.life(), cov.clone(), cap.is_finite().then_some(cap)),
            None => Ok(Self::fixed(fit.life())),
        }
    }

    /// From a point estimate and the covariance of its log-parameters (names
    /// as [`LogParamCovariance::names`]); `location_cap` bounds a drawn
    /// Weibull location (none: unbounded above).
    ///
    /// # Errors
    /// When the covariance's parameters are not the life family's, or its
    /// matrix is not positive definite.
    pub fn new(
        point: Life,
        covariance: LogParamCovariance,
        location_cap: Option<Hours>,
    ) -> Result<Self, UncertaintyError> {
        let layout = Layout::of(&point, &covariance.names, location_cap)?;
        let n = layout.len();
        if !symmetric(&covariance.matrix, n) {
            return Err(UncertaintyError::NotPositiveDefinite);
        }
        // The covariance holds its Cholesky factor (built, and checked
        // positive definite, with it).
        let mut chol = [[0.0; 3]; 3];
        for (row, from) in chol.iter_mut().zip(covariance.factor()).take(n) {
            row[..n].copy_from_slice(&from[..n]);
        }
        let mut center = [0.0; 3];
        center[..n].copy_from_slice(&covariance.center[..n]);
        Ok(LifeUncertainty {
            point,
            covariance: Some(covariance),
            layout,
            n,
            center,
            chol,
        })
    }

    /// A life without uncertainty: every draw is `point`.
    pub fn fixed(point: Life) -> Self {
        let layout = match point {
            Life::Weibull { location, .. } => Layout::WeibullShapeScale { location },
            Life::Lognormal { .. } => Layout::Lognormal,
            Life::Gamma { .. } => Layout::Gamma,
            Life::Exponential { .. } => Layout::Exponential,
        };
        LifeUncertainty {
            point,
            covariance: None,
            layout,
            n: 0,
            center: [0.0; 3],
            chol: [[0.0; 3]; 3],
        }
    }

    /// The point estimate.
    pub fn point(&self) -> Life {
        self.point
    }

    /// The covariance of the log-parameters, if there is one.
    pub fn covariance(&self) -> Option<&LogParamCovariance> {
        self.covariance.as_ref()
    }

    /// True when draws vary (there is a covariance).
    pub fn is_uncertain(&self) -> bool {
        self.n > 0
    }

    /// The distribution family.
    pub fn family(&self) -> Family {
        self.layout.family()
    }

    /// One life with parameters drawn from the asymptotic normal of the
    /// log-parameters, guarded as the module documentation says. Uses `n`
    /// uniforms of `rng` per attempt (`n` = number of parameters) and
    /// allocates nothing.
    pub fn draw(&self, rng: &mut impl Rng) -> Life {
        if self.n == 0 {
            return self.point;
        }
        let mut p = self.center;
        for _ in 0..MAX_DRAWS {
            p = self.draw_log_params(rng);
            if let Some(life) = self.layout.life(&p) {
                return life;
            }
        }
        self.layout.clamp(&mut p, &self.center);
        self.layout.life(&p).unwrap_or(self.point)
    }

    /// One unguarded draw of the log-parameters.
    fn draw_log_params(&self, rng: &mut impl Rng) -> [f64; 3] {
        if let Layout::WeibullScaleChiSquare {
            shape,
            ln_total,
            dof,
        } = self.layout
        {
            let u = open_uniform(rng);
            let ln_scale = chi_square_quantile(u, dof)
                .map_or(f64::NAN, |x| (2f64.ln() + ln_total - x.ln()) / shape);
            return [ln_scale, 0.0, 0.0];
        }
        let mut z = [0.0; 3];
        for v in z.iter_mut().take(self.n) {
            *v = normal_quantile(open_uniform(rng));
        }
        let mut p = self.center;
        for (i, pi) in p.iter_mut().enumerate().take(self.n) {
            *pi += (0..=i).map(|k| self.chol[i][k] * z[k]).sum::<f64>();
        }
        p
    }
}

/// Whether `a` has a leading `n x n` block and it is symmetric, to
/// rounding.
fn symmetric(a: &[Vec<f64>], n: usize) -> bool {
    a.len() >= n
        && a.iter().take(n).all(|r| r.len() >= n)
        && (0..n).all(|i| {
            (0..i)
                .all(|j| (a[i][j] - a[j][i]).abs() <= 1e-9 * (a[i][i].abs() * a[j][j].abs()).sqrt())
        })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::fit_mle;
    use crate::stream::{StreamKey, TrialSeed};

    fn cov(names: Vec<&'static str>, center: Vec<f64>, m: Vec<Vec<f64>>) -> LogParamCovariance {
        match LogParamCovariance::new(names, center, m) {
            Some(c) => c,
            None => panic!("test covariance not positive definite"),
        }
    }

    fn stream(part: u32) -> crate::stream::Stream {
        TrialSeed::new(11, 3).stream(StreamKey::Parameters { part })
    }

    /// Sample moments of drawn log-parameters against the normal they come
    /// from: means within 4 standard errors sqrt(s_ii / n), covariances
    /// within 4 of their standard errors sqrt((s_ii s_jj + s_ij^2) / n)
    /// (the variance of a sample covariance of a bivariate normal; Anderson,
    /// *An Introduction to Multivariate Statistical Analysis*, 3rd ed., 2003,
    /// sec. 3.3).
    fn check_moments(u: &LifeUncertainty, to_log: impl Fn(Life) -> [f64; 2]) {
        let c = u.covariance().unwrap().clone();
        let mut rng = stream(0);
        let n = 40_000;
        let d: Vec<[f64; 2]> = (0..n).map(|_| to_log(u.draw(&mut rng))).collect();
        let nf = n as f64;
        let m: Vec<f64> = (0..2)
            .map(|i| d.iter().map(|x| x[i]).sum::<f64>() / nf)
            .collect();
        let s = &c.matrix;
        for i in 0..2 {
            let se = (s[i][i] / nf).sqrt();
            assert!(
                (m[i] - c.center[i]).abs() < 4.0 * se,
                "mean {i}: {} vs {}",
                m[i],
                c.center[i]
            );
            for j in 0..2 {
                let v = d.iter().map(|x| (x[i] - m[i]) * (x[j] - m[j])).sum::<f64>() / (nf - 1.0);
                let se = ((s[i][i] * s[j][j] + s[i][j] * s[i][j]) / nf).sqrt();
                assert!(
                    (v - s[i][j]).abs() < 4.0 * se,
                    "cov {i}{j}: {v} vs {}",
                    s[i][j]
                );
            }
        }
    }

    #[test]
    fn lognormal_and_gamma_draws_follow_the_covariance() {
        let ln = LifeUncertainty::new(
            Life::lognormal(7.0, 0.5).unwrap(),
            cov(
                vec!["mu", "ln sigma"],
                vec![7.0, 0.5f64.ln()],
                vec![vec![0.04, -0.01], vec![-0.01, 0.03]],
            ),
            None,
        )
        .unwrap();
        check_moments(&ln, |l| match l {
            Life::Lognormal { mu, sigma } => [mu, sigma.ln()],
            other => panic!("{other:?}"),
        });
        let g = LifeUncertainty::new(
            Life::gamma(2.0, 500.0).unwrap(),
            cov(
                vec!["ln shape", "ln scale"],
                vec![2.0f64.ln(), 500.0f64.ln()],
                vec![vec![0.09, -0.08], vec![-0.08, 0.1]],
            ),
            None,
        )
        .unwrap();
        assert_eq!(g.family(), Family::Gamma);
        check_moments(&g, |l| match l {
            Life::Gamma { shape, scale } => [shape.ln(), scale.ln()],
            other => panic!("{other:?}"),
        });
    }

    /// With the shape's log centred on ln 0.05 (the guard's bound) and unit
    /// standard deviation, the accepted draws are a normal truncated at its
    /// mean: ln shape - ln 0.05 is half-normal, mean sqrt(2/pi) and
    /// standard deviation sqrt(1 - 2/pi) (textbook half-normal moments).
    #[test]
    fn shape_guard_redraws_into_a_truncated_normal() {
        let u = LifeUncertainty::new(
            Life::weibull(MIN_SHAPE, 1000.0).unwrap(),
            cov(
                vec!["ln shape", "ln scale"],
                vec![MIN_SHAPE.ln(), 1000.0f64.ln()],
                vec![vec![1.0, 0.0], vec![0.0, 0.01]],
            ),
            None,
        )
        .unwrap();
        let mut rng = stream(1);
        let n = 40_000;
        let mut sum = 0.0;
        for _ in 0..n {
            match u.draw(&mut rng) {
                Life::Weibull { shape, .. } => {
                    assert!(shape >= MIN_SHAPE * (1.0 - 1e-12), "{shape}");
                    sum += shape.ln() - MIN_SHAPE.ln();
                }
                other => panic!("{other:?}"),
            }
        }
        let mean = sum / n as f64;
        let expected = (2.0 / std::f64::consts::PI).sqrt();
        let se = (1.0 - 2.0 / std::f64::consts::PI).sqrt() / (n as f64).sqrt();
        assert!((mean - expected).abs() < 4.0 * se, "{mean} vs {expected}");
    }

    #[test]
    fn hopeless_draws_are_clamped_not_looped() {
        // Centre far below the bound: every attempt is rejected, so the
        // clamped draw has exactly the smallest shape allowed.
        let u = LifeUncertainty::new(
            Life::weibull(1e-6, 1000.0).unwrap(),
            cov(
                vec!["ln shape", "ln scale"],
                vec![1e-6f64.ln(), 1000.0f64.ln()],
                vec![vec![0.01, 0.0], vec![0.0, 0.01]],
            ),
            None,
        )
        .unwrap();
        let mut rng = stream(2);
        match u.draw(&mut rng) {
            Life::Weibull { shape, .. } => assert!((shape - MIN_SHAPE).abs() < 1e-12),
            other => panic!("{other:?}"),
        }
        assert_eq!(rng.position(), 2 * MAX_DRAWS as u64);
        // A lognormal spread far past the bound: clamped to it.
        let l = LifeUncertainty::new(
            Life::lognormal(5.0, 1e3).unwrap(),
            cov(
                vec!["mu", "ln sigma"],
                vec![5.0, 1e3f64.ln()],
                vec![vec![0.01, 0.0], vec![0.0, 0.01]],
            ),
            None,
        )
        .unwrap();
        match l.draw(&mut rng) {
            Life::Lognormal { sigma, .. } => assert!((sigma - MAX_LOG_SD).abs() < 1e-9),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn draws_are_pure_functions_of_the_stream() {
        let failures: Vec<f64> = [410.0, 620.0, 790.0, 930.0, 1120.0, 1380.0].to_vec();
        let s = Sample::new("p", failures, vec![1500.0]).unwrap();
        let mut fitted = 0;
        for fam in [
            Family::Weibull,
            Family::Weibull3,
            Family::Lognormal,
            Family::Gamma,
            Family::Exponential,
        ] {
            let Ok(fit) = fit_mle(&s, fam) else { continue };
            fitted += 1;
            let u = LifeUncertainty::from_fit(&fit, &s).unwrap();
            assert_eq!(u.point(), fit.life());
            assert_eq!(u.family(), fam);
            let (a, b) = (u.draw(&mut stream(4)), u.draw(&mut stream(4)));
            assert_eq!(a, b);
            if u.is_uncertain() {
                assert_ne!(a, u.point());
            }
            if let Life::Weibull { location, .. } = a {
                assert!((0.0..=410.0).contains(&location));
            }
        }
        assert!(fitted >= 4, "only {fitted} families fitted");
        let f = LifeUncertainty::fixed(Life::exponential(100.0).unwrap());
        assert!(!f.is_uncertain());
        assert_eq!(f.draw(&mut stream(5)), Life::exponential(100.0).unwrap());
    }

    #[test]
    fn an_unsymmetric_covariance_is_refused() {
        let c = cov(
            vec!["mu", "ln sigma"],
            vec![5.0, -1.0],
            vec![vec![0.1, 0.05], vec![0.0, 0.1]],
        );
        let e = LifeUncertainty::new(Life::lognormal(5.0, 0.4).unwrap(), c, None).unwrap_err();
        assert_eq!(e, UncertaintyError::NotPositiveDefinite);
    }

    #[test]
    fn mismatched_covariance_is_refused() {
        let c = cov(vec!["ln mean"], vec![5.0], vec![vec![0.1]]);
        let e = LifeUncertainty::new(Life::gamma(2.0, 3.0).unwrap(), c, None).unwrap_err();
        assert!(e.to_string().contains("gamma"), "{e}");
    }
}
