//! Likelihood-ratio (profile-likelihood) intervals for the 2-parameter
//! Weibull: shape, scale and B-lives.
//!
//! Owns: the profile log-likelihoods and the search for where they fall
//! 1.92 (half the 95% point of chi-square with 1 d.f.) below the maximum;
//! the B-life point estimates with log-Wald intervals beside them.
//! May use: `super::mle` (the likelihood and the shape profile),
//! `super::optim`, `super::sample`.
//!
//! Method (Meeker & Escobar 1998, sec. 8.3; Lawless 2003, sec. 5.2): the
//! interval of a quantity `q` is `{q : 2 (ln L_max - max ln L | q) <=
//! 3.841}`. For the shape the scale is maximised out (closed form without
//! intervals); for the scale the shape is. A B-life (the age by which a
//! fraction `p` of the parts has failed) is handled by writing the Weibull
//! in `(B_p, shape)`: `scale = B_p / (-ln(1 - p))^(1/shape)`, then
//! maximising out the shape for each `B_p`.

use std::cell::Cell;

use super::mle::{Profile, Weibull2, chi2_95_1df, weibull_ll, z95};
use super::optim::{brent_root, max_1d};
use super::sample::Sample;
use super::{BLife, LogParamCovariance};

/// The fractions failed whose lives are reported (B1 and B10).
pub(crate) const B_LIVES: [(&str, f64); 2] = [("B1", 0.01), ("B10", 0.10)];

/// Shapes searched when the shape is maximised out.
const LN_SHAPE_RANGE: (f64, f64) = (-6.9, 9.3);

/// What [`weibull_intervals`] found.
pub(crate) struct LrResult {
    /// (name, interval or `None` when open-ended) for shape, scale, B1, B10.
    pub ci: Vec<(&'static str, Option<[f64; 2]>)>,
    /// B-lives with their log-Wald and likelihood-ratio intervals.
    pub b_lives: Vec<BLife>,
}

/// `ln(-ln(1 - p))`, the Weibull's standardised log-quantile.
pub(crate) fn w_p(p: f64) -> f64 {
    (-(-p).ln_1p()).ln()
}

/// Where `prof` (a profile log-likelihood of a log-quantity) falls to
/// `ll_max - drop` on each side of `x_hat` (`sides`: which ends to find).
/// `None` for an end the profile never falls to within 40 natural-log units.
pub(crate) fn crossing(
    prof: &mut dyn FnMut(f64) -> f64,
    x_hat: f64,
    ll_max: f64,
    drop: f64,
    step: f64,
    sides: &[f64],
) -> Vec<Option<f64>> {
    let target = ll_max - drop;
    let mut h = |x: f64| prof(x) - target;
    sides
        .iter()
        .map(|&dir| {
            let mut inside = x_hat;
            let mut s = step.max(1e-3);
            for _ in 0..80 {
                let mut out = x_hat + dir * s;
                let mut v = h(out);
                // Step back towards the inside while the profile is not finite.
                let mut k = 0;
                while !v.is_finite() && k < 60 {
                    out = 0.5 * (inside + out);
                    v = h(out);
                    k += 1;
                }
                if !v.is_finite() {
                    return None;
                }
                if v < 0.0 {
                    let (a, b) = if dir < 0.0 {
                        (out, inside)
                    } else {
                        (inside, out)
                    };
                    return brent_root(&mut h, a, b, 1e-12);
                }
                inside = out;
                s *= 1.6;
                if s > 40.0 {
                    return None;
                }
            }
            None
        })
        .collect()
}

/// Profile likelihood-ratio 95% intervals of a 2-parameter Weibull fit at
/// `w`, and its B-lives.
pub(crate) fn weibull_intervals(
    sample: &Sample,
    w: &Weibull2,
    cov: Option<&LogParamCovariance>,
) -> LrResult {
    let obs = sample.obs();
    let profile = Profile::new(obs);
    let ll = |lb: f64, le: f64| weibull_ll(obs, lb.exp(), le.exp(), 0.0);
    let drop = 0.5 * chi2_95_1df();
    let (lb_hat, le_hat) = (w.beta.ln(), w.eta.ln());
    let sd = |i: usize| {
        cov.and_then(|c| c.sd(i))
            .filter(|v| v.is_finite() && *v > 0.0)
    };
    let both = [-1.0, 1.0];
    let mut ci = Vec::new();

    // Shape: the scale maximised out.
    let warm = Cell::new(le_hat);
    let mut prof_shape = |lb: f64| match &profile {
        Some(p) => p.loglik(lb.exp()),
        None => {
            let r = max_1d(&mut |le| ll(lb, le), warm.get(), 0.2, -700.0, 700.0, 1e-11);
            inner(r, &warm)
        }
    };
    let ends = crossing(
        &mut prof_shape,
        lb_hat,
        w.loglik,
        drop,
        sd(0).unwrap_or(0.2),
        &both,
    );
    ci.push(("shape", pair(&ends)));

    // Scale: the shape maximised out.
    let warm = Cell::new(lb_hat);
    let mut prof_scale = |le: f64| {
        let r = max_1d(
            &mut |lb| ll(lb, le),
            warm.get(),
            0.1,
            LN_SHAPE_RANGE.0,
            LN_SHAPE_RANGE.1,
            1e-11,
        );
        inner(r, &warm)
    };
    let ends = crossing(
        &mut prof_scale,
        le_hat,
        w.loglik,
        drop,
        sd(1).unwrap_or(0.2),
        &both,
    );
    ci.push(("scale", pair(&ends)));

    // B-lives: the Weibull in (ln B_p, ln shape).
    let mut b_lives = Vec::new();
    for (name, p) in B_LIVES {
        let wp = w_p(p);
        let lbp_hat = le_hat + wp / w.beta;
        let warm = Cell::new(lb_hat);
        let mut prof_b = |lbp: f64| {
            let r = max_1d(
                &mut |lb| ll(lb, lbp - wp / lb.exp()),
                warm.get(),
                0.1,
                LN_SHAPE_RANGE.0,
                LN_SHAPE_RANGE.1,
                1e-11,
            );
            inner(r, &warm)
        };
        // log-Wald: var ln B_p = g' C g, g = (-w_p / shape, 1).
        let sd_lbp = cov.and_then(|c| {
            let g = [-wp / w.beta, 1.0];
            let m = &c.matrix;
            let v = g[0] * g[0] * m[0][0] + 2.0 * g[0] * g[1] * m[0][1] + g[1] * g[1] * m[1][1];
            (v.is_finite() && v > 0.0).then(|| v.sqrt())
        });
        let ends = crossing(
            &mut prof_b,
            lbp_hat,
            w.loglik,
            drop,
            sd_lbp.unwrap_or(0.3),
            &both,
        );
        let lr = pair(&ends);
        ci.push((name, lr));
        let value = lbp_hat.exp();
        let z = z95();
        b_lives.push(BLife {
            name,
            p,
            value,
            ci95: sd_lbp.map(|s| [value * (-z * s).exp(), value * (z * s).exp()]),
            lr_ci95: lr,
            lower_bound: None,
        });
    }
    LrResult { ci, b_lives }
}

/// The value of an inner maximisation (its boundary value when it ran to
/// a limit), remembering where it was for the next call.
fn inner(r: Result<(f64, f64), Option<(f64, f64)>>, warm: &Cell<f64>) -> f64 {
    match r {
        Ok((x, v)) | Err(Some((x, v))) => {
            warm.set(x);
            v
        }
        Err(None) => f64::NEG_INFINITY,
    }
}

/// Both ends found: the interval in natural units.
fn pair(ends: &[Option<f64>]) -> Option<[f64; 2]> {
    match ends {
        [Some(a), Some(b)] => Some([a.exp(), b.exp()]),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::{Family, fit_mle, fit_weibull_known_shape};

    #[test]
    fn interval_ends_are_where_the_profile_drops_by_1_92() {
        let s = Sample::new(
            "t",
            vec![120.0, 190.0, 250.0, 310.0, 400.0, 520.0, 700.0],
            vec![300.0, 600.0, 600.0, 900.0],
        )
        .unwrap();
        let fit = fit_mle(&s, Family::Weibull).unwrap();
        let drop = 0.5 * chi2_95_1df();
        // Shape: refit the scale with the shape fixed at each end.
        for end in fit.lr_ci95("shape").unwrap() {
            let f = fit_weibull_known_shape(&s, end).unwrap();
            assert!((fit.loglik - f.loglik - drop).abs() < 1e-7);
        }
        // Scale: at each end, no shape does better than the drop.
        let obs = s.obs();
        for end in fit.lr_ci95("scale").unwrap() {
            let best = (1..4000)
                .map(|i| weibull_ll(obs, 0.2 + i as f64 * 0.002, end, 0.0))
                .fold(f64::NEG_INFINITY, f64::max);
            assert!(
                (fit.loglik - best - drop).abs() < 1e-4,
                "{}",
                fit.loglik - best
            );
        }
        // B10 inside its interval, and the interval inside a plausible range.
        let b10 = fit.b_lives.iter().find(|b| b.name == "B10").unwrap();
        let [lo, hi] = b10.lr_ci95.unwrap();
        assert!(lo < b10.value && b10.value < hi);
        let [wlo, whi] = b10.ci95.unwrap();
        assert!(wlo < b10.value && b10.value < whi);
    }
}
