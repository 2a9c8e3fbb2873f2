//! Checks of `wearout::fit` against published life-data analyses and
//! reference values computed outside the project, plus simulation checks
//! (recovery of known parameters, coverage of the 95% intervals).
//!
//! Data: `tests/data/ball_bearings.csv` (Lieblein & Zelen 1956, 23
//! ball-bearing fatigue lives, millions of revolutions, all failures) and
//! `tests/data/generator_fans.csv` (Nelson 1969 / 1982, 70 diesel-generator
//! fans, 12 failures, 58 right-censored), copied with their source lines
//! from the project's shared reference data. The figures below are copied
//! from that reference data's entries `ballbearing_*` and `genfan_*`; each
//! check names its source and its provenance class:
//! - published: found in the named published source;
//! - memory: a published figure recalled, not confirmed in a copy of the source;
//! - computed-scipy: computed with scipy 1.17.1 / numpy 2.4.6 by the
//!   method named, cross-checked a second way.
//!
//! Nothing here reads outside the crate: a fresh clone passes on its own.

use std::path::PathBuf;

use wearout::dist::Life;
use wearout::fit::{
    Family, Fit, Method, Sample, fit_mle, fit_part, fit_rank_regression, read_records,
    samples_by_part,
};
use wearout::stream::{StreamKey, TrialSeed};

fn data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("data")
        .join(name)
}

fn one_sample(name: &str) -> Sample {
    let records = read_records(&data(name)).expect("test data reads");
    let mut s = samples_by_part(&records);
    assert_eq!(s.len(), 1);
    s.remove(0)
}

/// Assert `|got - want| <= tol` and print the agreement (shown with
/// `--nocapture`).
fn check_abs(what: &str, got: f64, want: f64, tol: f64) {
    let d = (got - want).abs();
    eprintln!("{what}: got {got:.8}, want {want}, |diff| {d:.3e} (tol {tol:e})");
    assert!(
        d <= tol,
        "{what}: got {got}, want {want}, |diff| {d:e} > {tol:e}"
    );
}

/// Assert `|got - want| <= rel * |want|` and print the agreement.
fn check_rel(what: &str, got: f64, want: f64, rel: f64) {
    let d = (got - want).abs() / want.abs();
    eprintln!("{what}: got {got:.8}, want {want}, rel diff {d:.3e} (tol {rel:e})");
    assert!(
        d <= rel,
        "{what}: got {got}, want {want}, rel diff {d:e} > {rel:e}"
    );
}

fn mle(s: &Sample, f: Family) -> Fit {
    fit_mle(s, f).expect("fit")
}

// ---------------------------------------------------------------------------
// Lieblein & Zelen ball bearings (complete sample)
// ---------------------------------------------------------------------------

#[test]
fn ball_bearings_weibull_mle() {
    let s = one_sample("ball_bearings.csv");
    assert_eq!((s.failures().len(), s.suspensions().len()), (23, 0));
    let w = mle(&s, Family::Weibull);
    let shape = w.param("shape").unwrap();
    let scale = w.param("scale").unwrap();
    // published: conf package vignette crplot.Rmd (Weld & Leemis),
    // kappa.hat = 2.10206; Dekking et al. exercise "2.102". Reference value
    // 2.102059 (scipy weibull_min.fit, floc=0; profile-score brentq).
    check_abs("ballbearing shape", shape, 2.102059, 2e-6);
    // published: conf vignette lambda.hat = 0.01221 (rate = 1/scale);
    // reference 0.01221324 (computed-scipy).
    check_abs("ballbearing rate 1/scale", 1.0 / scale, 0.01221324, 5e-9);
    // computed-scipy: scale 81.87833 (weibull_min.fit floc=0).
    check_abs("ballbearing scale", scale, 81.87833, 1e-4);
    // computed-scipy: maximum log-likelihood in Mrev with all constants.
    check_abs("ballbearing loglik", w.loglik, -113.69129, 1e-5);
    // memory: Lawless (2003) extreme-value form u = ln(scale) = 4.405,
    // b = 1/shape = 0.476 (reference 4.405234, 0.475724).
    check_abs("ballbearing EV u", scale.ln(), 4.405234, 1e-6);
    check_abs("ballbearing EV b", 1.0 / shape, 0.475724, 1e-6);
    // computed-scipy: inverse observed information, analytic Hessian
    // (cross-checked numerically): se(shape) 0.328687, se(scale) 8.60045.
    check_rel(
        "ballbearing se shape",
        w.se("shape").unwrap(),
        0.328687,
        1e-5,
    );
    check_rel(
        "ballbearing se scale",
        w.se("scale").unwrap(),
        8.60045,
        1e-5,
    );
    // AIC from its definition (Akaike 1974), k = 2.
    check_abs("ballbearing AIC", w.aic, 4.0 + 2.0 * 113.69129, 1e-4);
}

#[test]
fn ball_bearings_lognormal_mle() {
    let s = one_sample("ball_bearings.csv");
    let l = mle(&s, Family::Lognormal);
    // memory: Lawless (2003) lognormal fit to the ball bearings, mu = 4.150,
    // sigma = 0.522 (MLE, divisor n); reference values 4.150454, 0.521649
    // (scipy lognorm.fit floc=0).
    check_abs(
        "ballbearing lognormal mu",
        l.param("mu").unwrap(),
        4.150454,
        1e-6,
    );
    check_abs(
        "ballbearing lognormal sigma",
        l.param("sigma").unwrap(),
        0.521649,
        1e-6,
    );
    // A complete lognormal sample: se(mu) = sigma / sqrt(n), se(sigma) =
    // sigma / sqrt(2n) (textbook normal-theory information).
    let sigma = l.param("sigma").unwrap();
    check_rel(
        "ballbearing se mu",
        l.se("mu").unwrap(),
        sigma / 23f64.sqrt(),
        1e-5,
    );
    check_rel(
        "ballbearing se sigma",
        l.se("sigma").unwrap(),
        sigma / 46f64.sqrt(),
        1e-4,
    );
}

#[test]
fn ball_bearings_48_40_variant() {
    // computed-scipy: with the 7th value printed as 48.40 (SMRD
    // lzbearing.R, surpyval datasets) the shape is 2.101847: a typo-level
    // change moves the 4th decimal, so the tolerance must be far below 2e-4.
    let s = one_sample("ball_bearings.csv");
    let mut f = s.failures().to_vec();
    let i = f.iter().position(|&t| t == 48.48).expect("7th value 48.48");
    assert_eq!(i, 6);
    f[i] = 48.40;
    let v = Sample::new("bearings-48.40", f, vec![]).unwrap();
    let w = mle(&v, Family::Weibull);
    check_abs(
        "ballbearing 48.40 shape",
        w.param("shape").unwrap(),
        2.101847,
        2e-6,
    );
    // Same source: scale 81.8746.
    check_abs(
        "ballbearing 48.40 scale",
        w.param("scale").unwrap(),
        81.8746,
        1e-4,
    );
    let orig = mle(&s, Family::Weibull).param("shape").unwrap();
    check_abs(
        "ballbearing variant shape difference",
        orig - w.param("shape").unwrap(),
        2.102059 - 2.101847,
        4e-6,
    );
}

#[test]
fn ball_bearings_weibull3_is_the_profile_maximum() {
    // The 3-parameter fit must be the maximum over the location of the
    // 2-parameter fits of the shifted data (the profile likelihood, e.g.
    // Lawless 2003 sec. 5.5). The 2-parameter fit is itself checked above
    // against the published figures; here a brute-force grid of step 0.01
    // Mrev over [0, 17.88) checks the 3-parameter search.
    let s = one_sample("ball_bearings.csv");
    let w3 = mle(&s, Family::Weibull3);
    let mut best = (f64::NEG_INFINITY, 0.0);
    for i in 0..1788 {
        let g = i as f64 * 0.01;
        let shifted = Sample::new(
            "shifted",
            s.failures().iter().map(|t| t - g).collect(),
            vec![],
        )
        .unwrap();
        let ll = mle(&shifted, Family::Weibull).loglik;
        if ll > best.0 {
            best = (ll, g);
        }
    }
    let loc = w3.param("location").unwrap();
    eprintln!(
        "ballbearing weibull3: location {loc}, loglik {} (grid {best:?})",
        w3.loglik
    );
    assert!(w3.loglik >= best.0 - 1e-9);
    assert!((loc - best.1).abs() <= 0.01);
    // Adding a parameter cannot lower the maximum log-likelihood.
    assert!(w3.loglik >= mle(&s, Family::Weibull).loglik);
}

// ---------------------------------------------------------------------------
// Nelson generator fans (right-censored)
// ---------------------------------------------------------------------------

#[test]
fn generator_fans_weibull_mle() {
    let s = one_sample("generator_fans.csv");
    assert_eq!((s.failures().len(), s.suspensions().len()), (12, 58));
    let w = mle(&s, Family::Weibull);
    let shape = w.param("shape").unwrap();
    let scale = w.param("scale").unwrap();
    // memory: Nelson (1982) Applied Life Data Analysis fan example, shape
    // 1.0584, scale about 26,297 h (not confirmed in a copy); reference
    // 1.058446 and 26296.85 h (computed-scipy).
    check_abs("genfan shape", shape, 1.058446, 2e-6);
    check_abs("genfan scale", scale, 26296.85, 0.05);
    // computed-scipy: log-likelihood in hours.
    check_abs("genfan loglik", w.loglik, -135.15272, 1e-5);
    // computed-scipy: inverse observed information (analytic, checked
    // numerically).
    check_rel("genfan se shape", w.se("shape").unwrap(), 0.268251, 1e-5);
    check_rel("genfan se scale", w.se("scale").unwrap(), 12251.43, 1e-5);
    // computed-scipy: log-Wald intervals beta*exp(-/+ z se/beta).
    let ci = w.ci95("shape").unwrap();
    check_rel("genfan shape ci lo", ci[0], 0.64408, 1e-5);
    check_rel("genfan shape ci hi", ci[1], 1.73939, 1e-5);
    let ci = w.ci95("scale").unwrap();
    check_rel("genfan scale ci lo", ci[0], 10552.1, 1e-5);
    check_rel("genfan scale ci hi", ci[1], 65534.4, 1e-5);
    // computed-scipy (delta method; compare survreg): extreme-value
    // location mu = ln scale 10.177204 with se 0.46589, and scale
    // sigma = 1/shape 0.944781 with se 0.239444.
    let cov = w.log_param_covariance().unwrap();
    assert_eq!(cov.names, vec!["ln shape", "ln scale"]);
    check_rel("genfan EV mu", cov.center[1], 10.177204, 1e-6);
    check_rel("genfan EV mu se", cov.sd(1).unwrap(), 0.46589, 1e-4);
    check_rel("genfan EV sigma", 1.0 / shape, 0.944781, 1e-6);
    // se(1/beta) = se(ln beta) / beta by the delta method.
    check_rel(
        "genfan EV sigma se",
        cov.sd(0).unwrap() / shape,
        0.239444,
        1e-5,
    );
}

#[test]
fn generator_fans_in_thousands_of_hours() {
    // computed-scipy: a common textbook presentation divides hours by
    // 1000; its extreme-value location is 3.269449. The shape must not
    // change with the time unit, the scale scales and the log-likelihood
    // shifts by r ln 1000 (density Jacobian).
    let s = one_sample("generator_fans.csv");
    let k = Sample::new(
        "fans-kh",
        s.failures().iter().map(|t| t / 1000.0).collect(),
        s.suspensions().iter().map(|t| t / 1000.0).collect(),
    )
    .unwrap();
    let a = mle(&s, Family::Weibull);
    let b = mle(&k, Family::Weibull);
    check_abs(
        "genfan kh EV location",
        b.param("scale").unwrap().ln(),
        3.269449,
        1e-6,
    );
    check_abs(
        "genfan kh shape",
        b.param("shape").unwrap(),
        a.param("shape").unwrap(),
        1e-9,
    );
    check_abs(
        "genfan kh loglik shift",
        b.loglik - a.loglik,
        12.0 * 1000f64.ln(),
        1e-7,
    );
}

#[test]
fn generator_fans_full_report() {
    // Every family fits these data; the ranking is by AIC; the LR interval
    // for the shape contains the MLE and is asymmetric like the log-Wald
    // one (common practice: with 12 failures both are wide).
    let s = one_sample("generator_fans.csv");
    let p = fit_part(&s).unwrap();
    assert!(p.mle.windows(2).all(|w| w[0].aic <= w[1].aic));
    assert_eq!(p.best().unwrap().aic_rank, Some(1));
    let w = p.mle_of(Family::Weibull).unwrap();
    let lr = w.lr_ci95("shape").unwrap();
    let shape = w.param("shape").unwrap();
    assert!(lr[0] < shape && shape < lr[1]);
    // The interval ends are where the profile log-likelihood is down by
    // 3.841/2 (chi-square 1 d.f., 95%): check by refitting the scale with the
    // shape fixed at each end.
    for end in lr {
        let fixed = wearout::fit::fit_weibull_known_shape(&s, end).unwrap();
        check_abs(
            "genfan LR end drop",
            w.loglik - fixed.loglik,
            3.841_458_820_694_124 / 2.0,
            1e-6,
        );
    }
    let rr = p.rank_regression.as_ref().unwrap();
    assert_eq!(rr.method, Method::RankRegression);
    assert!(rr.aic_rank.is_none());
    // The MLE maximises the likelihood, so the regression estimates cannot
    // score higher.
    assert!(rr.loglik <= w.loglik);
}

#[test]
fn ball_bearings_rank_regression() {
    // Median-rank regression of ln t on ln(-ln(1-F)), Benard ranks, complete
    // sample: reproduced here from the definition with an independent
    // closed-form least-squares computation.
    let s = one_sample("ball_bearings.csv");
    let rr = fit_rank_regression(&s).unwrap();
    let mut t = s.failures().to_vec();
    t.sort_by(f64::total_cmp);
    let n = t.len() as f64;
    let xy: Vec<(f64, f64)> = t
        .iter()
        .enumerate()
        .map(|(i, &ti)| {
            let f = (i as f64 + 1.0 - 0.3) / (n + 0.4);
            (ti.ln(), (-(1.0 - f).ln()).ln())
        })
        .collect();
    let (sx, sy): (f64, f64) = xy.iter().fold((0.0, 0.0), |a, p| (a.0 + p.0, a.1 + p.1));
    let sxy: f64 = xy.iter().map(|p| p.0 * p.1).sum();
    let syy: f64 = xy.iter().map(|p| p.1 * p.1).sum();
    let b = (sxy - sx * sy / n) / (syy - sy * sy / n);
    let a = (sx - b * sy) / n;
    check_abs(
        "ballbearing rr shape",
        rr.param("shape").unwrap(),
        1.0 / b,
        1e-9,
    );
    check_abs(
        "ballbearing rr scale",
        rr.param("scale").unwrap(),
        a.exp(),
        1e-7,
    );
    // Rank regression and MLE agree roughly on a complete sample (common
    // practice: within a standard error or so).
    let w = mle(&s, Family::Weibull);
    assert!((rr.param("shape").unwrap() - 2.102).abs() < w.se("shape").unwrap());
}

// ---------------------------------------------------------------------------
// Simulation: recovery of known parameters and interval coverage
// ---------------------------------------------------------------------------

/// `n` lives from `life`, each right-censored at an independent uniform
/// time on (0, `cmax`); stream `k` of seed `seed`.
fn simulate(life: &Life, n: usize, cmax: f64, seed: u64, k: u64) -> Sample {
    let t = TrialSeed::new(seed, k);
    let mut lives = t.stream(StreamKey::Lives {
        unit: 0,
        position: 0,
    });
    let mut cens = t.stream(StreamKey::Lives {
        unit: 1,
        position: 0,
    });
    let (mut f, mut s) = (Vec::new(), Vec::new());
    for _ in 0..n {
        let x = life.sample_residual(0.0, &mut lives);
        let c = cmax * wearout::dist::open_uniform(&mut cens);
        if x <= c {
            f.push(x);
        } else {
            s.push(c);
        }
    }
    Sample::new("sim", f, s).unwrap()
}

/// Each estimate within 4 of its own standard errors of the truth (a
/// two-sided 4-sigma band: fails by chance with probability 6e-5 per check).
fn within_4se(fit: &Fit, truth: &[(&str, f64)]) {
    for &(name, want) in truth {
        let got = fit.param(name).unwrap();
        let se = fit.se(name).unwrap();
        eprintln!(
            "{} {name}: got {got:.5}, truth {want}, z = {:.2}",
            fit.distribution.name(),
            (got - want) / se
        );
        assert!(
            (got - want).abs() <= 4.0 * se,
            "{name}: {got} vs {want} (se {se})"
        );
    }
}

/// (true life, family to fit, largest censoring time, true parameters).
type Case = (Life, Family, f64, Vec<(&'static str, f64)>);

#[test]
fn recovers_known_parameters_from_large_samples() {
    let n = 4000;
    let cases: Vec<Case> = vec![
        (
            Life::weibull(2.5, 1000.0).unwrap(),
            Family::Weibull,
            2500.0,
            vec![("shape", 2.5), ("scale", 1000.0)],
        ),
        (
            Life::weibull3(2.5, 1000.0, 400.0).unwrap(),
            Family::Weibull3,
            3000.0,
            vec![("shape", 2.5), ("scale", 1000.0), ("location", 400.0)],
        ),
        (
            Life::lognormal(7.0, 0.6).unwrap(),
            Family::Lognormal,
            3000.0,
            vec![("mu", 7.0), ("sigma", 0.6)],
        ),
        (
            Life::gamma(3.0, 300.0).unwrap(),
            Family::Gamma,
            2000.0,
            vec![("shape", 3.0), ("scale", 300.0)],
        ),
        (
            Life::exponential(500.0).unwrap(),
            Family::Exponential,
            1500.0,
            vec![("mean", 500.0), ("rate", 0.002)],
        ),
    ];
    for (i, (life, fam, cmax, truth)) in cases.into_iter().enumerate() {
        let s = simulate(&life, n, cmax, 20_240_601, i as u64);
        let fit = mle(&s, fam);
        within_4se(&fit, &truth);
        // With 4000 records the true family has the lowest AIC among the
        // families that do not contain it as a special case.
        let p = fit_part(&s).unwrap();
        let best = p.best().unwrap().distribution;
        let ok = match fam {
            // The exponential is a Weibull and a gamma of shape 1; weibull3
            // contains weibull.
            Family::Exponential => {
                matches!(best, Family::Exponential | Family::Weibull | Family::Gamma)
            }
            Family::Weibull => matches!(best, Family::Weibull | Family::Weibull3),
            f => best == f,
        };
        assert!(ok, "{} data: best by AIC was {}", fam.name(), best.name());
    }
}

/// Fraction of `m` replicates whose 95% intervals (log-Wald shape, log-Wald
/// scale, likelihood-ratio shape) cover the truth.
fn coverage(m: usize, n: usize, seed: u64) -> [f64; 3] {
    let (shape, scale) = (1.5, 1000.0);
    let life = Life::weibull(shape, scale).unwrap();
    let mut hits = [0usize; 3];
    for k in 0..m {
        // About 25% censored.
        let s = simulate(&life, n, 3000.0, seed, k as u64);
        let w = mle(&s, Family::Weibull);
        let inside = |ci: [f64; 2], v: f64| ci[0] <= v && v <= ci[1];
        hits[0] += inside(w.ci95("shape").unwrap(), shape) as usize;
        hits[1] += inside(w.ci95("scale").unwrap(), scale) as usize;
        hits[2] += inside(w.lr_ci95("shape").unwrap(), shape) as usize;
    }
    hits.map(|h| h as f64 / m as f64)
}

/// Coverage within `4 * sqrt(0.95 * 0.05 / m)` (4 binomial standard errors)
/// plus `allow` for the finite-sample error of the asymptotic intervals.
fn check_coverage(c: [f64; 3], m: usize, allow: f64) {
    let tol = 4.0 * (0.95f64 * 0.05 / m as f64).sqrt() + allow;
    for (name, v) in ["log-Wald shape", "log-Wald scale", "LR shape"]
        .iter()
        .zip(c)
    {
        eprintln!("coverage {name}: {v:.4} (m = {m}, tol {tol:.4})");
        assert!((v - 0.95).abs() <= tol, "{name} coverage {v}");
    }
}

#[test]
fn interval_coverage_fast() {
    // 1000 replicates of n = 100.
    check_coverage(coverage(1000, 100, 7), 1000, 0.0);
}

/// Opt-in slow check: run with
/// `cargo test --release --test fit_refdata -- --ignored interval_coverage_slow`.
/// 20000 replicates of n = 300 (a few seconds); the allowance of 0.005
/// covers the finite-sample error of asymptotic intervals at n = 300 (the
/// Monte Carlo standard error alone is 0.0015).
#[test]
#[ignore]
fn interval_coverage_slow() {
    check_coverage(coverage(20_000, 300, 11), 20_000, 0.005);
}
