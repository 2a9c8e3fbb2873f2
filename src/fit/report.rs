//! Text and JSON forms of fits, and the paste-ready scenario life block.
//!
//! Owns: number formatting for people, the AIC-ranked table, the
//! `{"fits": [...], "not_fitted": [...]}` JSON and the
//! `life = { dist = ... }` line in the scenario file's syntax.
//! May use: `serde_json`; nothing here does I/O.

use serde::Serialize;

use super::{Family, Fit, FitError, Method, NotFitted, PartFits, PartNotFitted};
use crate::dist::Life;

/// `x` to about 4 significant digits, plain notation for ordinary
/// magnitudes, scientific for very large or very small ones.
pub fn fmt_sig(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let a = x.abs();
    if !(1e-4..1e9).contains(&a) {
        return format!("{x:.3e}");
    }
    let decimals = (3 - a.log10().floor() as i32).clamp(0, 8) as usize;
    format!("{x:.decimals$}")
}

/// A number for the scenario file: [`fmt_sig`], always with a decimal point
/// or exponent so that it reads as a float.
fn toml_number(x: f64) -> String {
    let s = fmt_sig(x);
    if s.contains(['.', 'e', 'E']) {
        s
    } else {
        format!("{s}.0")
    }
}

/// The scenario-file life block for a fit, e.g.
/// `life = { dist = "weibull", shape = 2.102, scale = 81.88 }`.
pub fn scenario_life_block(fit: &Fit) -> String {
    match fit.life() {
        Life::Weibull {
            shape,
            scale,
            location,
        } => {
            if location > 0.0 {
                format!(
                    "life = {{ dist = \"weibull\", shape = {}, scale = {}, location = {} }}",
                    toml_number(shape),
                    toml_number(scale),
                    toml_number(location)
                )
            } else {
                format!(
                    "life = {{ dist = \"weibull\", shape = {}, scale = {} }}",
                    toml_number(shape),
                    toml_number(scale)
                )
            }
        }
        Life::Lognormal { mu, sigma } => format!(
            "life = {{ dist = \"lognormal\", mu = {mu:.4}, sigma = {} }}",
            toml_number(sigma)
        ),
        Life::Gamma { shape, scale } => format!(
            "life = {{ dist = \"gamma\", shape = {}, scale = {} }}",
            toml_number(shape),
            toml_number(scale)
        ),
        Life::Exponential { mean } => {
            format!(
                "life = {{ dist = \"exponential\", mean = {} }}",
                toml_number(mean)
            )
        }
    }
}

/// Parameters with intervals, e.g. `shape 2.102 [1.523, 2.900]  scale 81.88 [...]`.
fn params_text(fit: &Fit) -> String {
    fit.params
        .iter()
        // The exponential's rate is 1 / mean; the table shows the mean (MTBF).
        .filter(|e| !(fit.distribution == Family::Exponential && e.name == "rate"))
        .map(|e| match e.ci95 {
            Some([lo, hi]) => format!(
                "{} {} [{}, {}]",
                e.name,
                fmt_sig(e.value),
                fmt_sig(lo),
                fmt_sig(hi)
            ),
            None => format!("{} {}", e.name, fmt_sig(e.value)),
        })
        .collect::<Vec<_>>()
        .join("  ")
}

fn pad_table(rows: &[Vec<String>], right: &[bool]) -> Vec<String> {
    let ncol = rows.iter().map(Vec::len).max().unwrap_or(0);
    let widths: Vec<usize> = (0..ncol)
        .map(|c| {
            rows.iter()
                .map(|r| r.get(c).map_or(0, |s| s.chars().count()))
                .max()
                .unwrap_or(0)
        })
        .collect();
    rows.iter()
        .map(|r| {
            let cells: Vec<String> = (0..ncol)
                .map(|c| {
                    let s = r.get(c).map_or("", String::as_str);
                    if right.get(c).copied().unwrap_or(false) {
                        format!("{s:>w$}", w = widths[c])
                    } else {
                        format!("{s:<w$}", w = widths[c])
                    }
                })
                .collect();
            format!("  {}", cells.join("  ").trim_end())
        })
        .collect()
}

/// The readable report: per part, one row per distribution ranked by AIC
/// (best marked `*`), parameters with 95% intervals, the Weibull
/// rank-regression row beside the Weibull MLE, what could not be fitted
/// and why, and the paste-ready scenario block of the best fit.
pub fn table(parts: &[PartFits]) -> String {
    let mut out = String::new();
    for (pi, p) in parts.iter().enumerate() {
        if pi > 0 {
            out.push('\n');
        }
        out.push_str(&format!(
            "Part '{}': {} failures, {} suspensions ({} records)\n\n",
            p.part,
            p.failures,
            p.suspensions,
            p.failures + p.suspensions
        ));
        let best_aic = p.best().map_or(f64::NAN, |b| b.aic);
        let mut rows = vec![vec![
            "rank".to_string(),
            "distribution".into(),
            "method".into(),
            "parameters [95% interval]".into(),
            "loglik".into(),
            "AIC".into(),
            "dAIC".into(),
        ]];
        let row = |f: &Fit, rank: String, daic: String| {
            vec![
                rank,
                f.distribution.name().to_string(),
                f.method.name().to_string(),
                params_text(f),
                format!("{:.3}", f.loglik),
                format!("{:.2}", f.aic),
                daic,
            ]
        };
        let rr_row = |rr: &Fit| {
            let mut r = row(rr, "-".into(), "-".into());
            r[3] = format!(
                "{}  (R^2 {:.4})",
                params_text(rr),
                rr.r_squared.unwrap_or(f64::NAN)
            );
            r
        };
        for f in &p.mle {
            let rank = match f.aic_rank {
                Some(1) => "* 1".to_string(),
                Some(r) => r.to_string(),
                None => String::new(),
            };
            rows.push(row(f, rank, format!("{:.2}", f.aic - best_aic)));
            if f.distribution == Family::Weibull
                && let Some(rr) = &p.rank_regression
            {
                rows.push(rr_row(rr));
            }
        }
        if p.mle_of(Family::Weibull).is_none()
            && let Some(rr) = &p.rank_regression
        {
            rows.push(rr_row(rr));
        }
        for line in pad_table(&rows, &[true, false, false, false, true, true, true]) {
            out.push_str(&line);
            out.push('\n');
        }
        out.push_str(
            "\n  * = lowest AIC (best). Intervals: log-Wald from the observed information \
             (mu: Wald); the rank_regression row is for comparison and is not ranked.\n",
        );
        if let Some(ci) = p.mle_of(Family::Weibull).and_then(|w| w.lr_ci95("shape")) {
            out.push_str(&format!(
                "  Weibull shape, likelihood-ratio 95% interval: [{}, {}]\n",
                fmt_sig(ci[0]),
                fmt_sig(ci[1])
            ));
        }
        for f in p.mle.iter().chain(&p.rank_regression) {
            for n in &f.notes {
                if f.method == Method::Mle {
                    out.push_str(&format!("  note, {}: {}\n", f.distribution.name(), n));
                }
            }
        }
        for nf in &p.not_fitted {
            out.push_str(&format!(
                "  not fitted, {} {}: {}\n",
                nf.distribution.name(),
                nf.method.name(),
                nf.reason
            ));
        }
        if let Some(b) = p.best() {
            out.push_str(&format!(
                "\n  Paste into the scenario ({} by maximum likelihood, lowest AIC):\n",
                b.distribution.name()
            ));
            out.push_str(&format!("  {}\n", scenario_life_block(b)));
        }
    }
    out
}

#[derive(Serialize)]
struct FitsOut<'a> {
    fits: Vec<&'a Fit>,
    not_fitted: Vec<&'a NotFitted>,
    #[serde(skip_serializing_if = "<[_]>::is_empty")]
    parts_not_fitted: &'a [PartNotFitted],
}

/// The JSON report: `{"fits": [...], "not_fitted": [...]}`, each part's
/// MLE fits in AIC order followed by its rank regression; `not_fitted`
/// lists the (part, distribution, method) fits that could not be made and
/// why, and `parts_not_fitted` (only when not empty) the parts with
/// nothing to fit.
///
/// # Errors
/// [`FitError::Output`] if serialisation fails.
pub fn fits_json(
    parts: &[PartFits],
    parts_not_fitted: &[PartNotFitted],
) -> Result<String, FitError> {
    let out = FitsOut {
        fits: parts
            .iter()
            .flat_map(|p| p.mle.iter().chain(&p.rank_regression))
            .collect(),
        not_fitted: parts.iter().flat_map(|p| &p.not_fitted).collect(),
        parts_not_fitted,
    };
    serde_json::to_string_pretty(&out).map_err(|e| FitError::Output {
        what: "JSON".into(),
        message: e.to_string(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::{Sample, fit_mle, fit_part};

    #[test]
    fn number_formats() {
        assert_eq!(fmt_sig(2.102059), "2.102");
        assert_eq!(fmt_sig(81.87833), "81.88");
        assert_eq!(fmt_sig(26296.85), "26297");
        assert_eq!(fmt_sig(0.521649), "0.5216");
        assert_eq!(toml_number(26296.85), "26297.0");
        assert_eq!(fmt_sig(3.2e-7), "3.200e-7");
    }

    #[test]
    fn life_block_parses_as_toml_with_the_fitted_values() {
        let s = Sample::new("p", vec![20.0, 35.0, 50.0, 80.0], vec![60.0]).unwrap();
        for fam in Family::ALL {
            let Ok(fit) = fit_mle(&s, fam) else { continue };
            let block = scenario_life_block(&fit);
            let v: toml::Table = toml::from_str(&block).unwrap();
            let life = v["life"].as_table().unwrap();
            let dist = life["dist"].as_str().unwrap();
            assert!(["weibull", "lognormal", "gamma", "exponential"].contains(&dist));
            for (k, val) in life.iter().filter(|(k, _)| *k != "dist") {
                let x = val.as_float().unwrap();
                let want = match fit.life() {
                    Life::Weibull {
                        shape,
                        scale,
                        location,
                    } => match k.as_str() {
                        "shape" => shape,
                        "scale" => scale,
                        _ => location,
                    },
                    Life::Lognormal { mu, sigma } => {
                        if k == "mu" {
                            mu
                        } else {
                            sigma
                        }
                    }
                    Life::Gamma { shape, scale } => {
                        if k == "shape" {
                            shape
                        } else {
                            scale
                        }
                    }
                    Life::Exponential { mean } => mean,
                };
                assert!(
                    (x - want).abs() <= 1e-3 * want.abs().max(1e-9),
                    "{k}: {x} vs {want}"
                );
            }
        }
    }

    #[test]
    fn table_and_json_have_every_fit() {
        let s = Sample::new(
            "pump",
            vec![20.0, 35.0, 50.0, 80.0, 91.0],
            vec![60.0, 100.0],
        )
        .unwrap();
        let p = fit_part(&s).unwrap();
        let t = table(std::slice::from_ref(&p));
        for fam in [
            "weibull",
            "lognormal",
            "gamma",
            "exponential",
            "rank_regression",
            "* 1",
        ] {
            assert!(t.contains(fam), "{fam} missing:\n{t}");
        }
        assert!(t.contains("life = { dist = "));
        let j: serde_json::Value = serde_json::from_str(&fits_json(&[p], &[]).unwrap()).unwrap();
        let fits = j["fits"].as_array().unwrap();
        assert!(fits.iter().any(|f| f["method"] == "rank_regression"));
        let w = fits
            .iter()
            .find(|f| f["distribution"] == "weibull" && f["method"] == "mle")
            .unwrap();
        for key in [
            "params",
            "se",
            "ci95",
            "loglik",
            "aic",
            "bic",
            "failures",
            "suspensions",
        ] {
            assert!(!w[key].is_null(), "{key}");
        }
        assert_eq!(w["failures"], 5);
        assert_eq!(w["ci95"]["shape"].as_array().unwrap().len(), 2);
    }
}
