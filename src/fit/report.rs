//! Text and JSON forms of fits, and the paste-ready scenario life block.
//!
//! Owns: number formatting for people, the AIC-ranked table, the
//! `{"source": ..., "parts": [...], "fits": [...], "not_fitted": [...]}`
//! JSON and the `life = { dist = ... }` line in the scenario file's
//! syntax, with comment lines saying what was fitted and from which
//! records.
//! May use: `serde_json`; nothing here does I/O.

use serde::Serialize;

use super::records::RecordsSource;
use super::{BoundMethod, Family, Fit, FitError, Method, NotFitted, PartFits, PartNotFitted};
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

/// What a part's data held, e.g. "12 failures (3 found at inspections, 1
/// of them at the first), 58 suspensions, 10 with entry ages".
pub fn data_text(p: &PartFits) -> String {
    let c = p.counts;
    let mut t = format!("{} failures", c.failures());
    let found = c.interval_failures + c.left_censored;
    if found > 0 {
        t.push_str(&format!(" ({found} found at inspections"));
        if c.left_censored > 0 {
            t.push_str(&format!(", {} of them at the first", c.left_censored));
        }
        t.push(')');
    }
    t.push_str(&format!(", {} suspensions", c.suspensions));
    if c.truncated > 0 {
        t.push_str(&format!(", {} with entry ages", c.truncated));
    }
    t
}

/// Where a part's records came from, e.g. "part 'fan' of fans.csv, lines
/// 3-72" (and, for a removal log, "; a removal log, current readings from
/// meters.csv").
fn from_text(p: &PartFits, source: Option<&RecordsSource>) -> String {
    let mut t = format!("part '{}'", p.part);
    if let Some(s) = source {
        t.push_str(&format!(" of {}", s.file));
    }
    if let Some((a, b)) = p.lines {
        t.push_str(&format!(", lines {a}-{b}"));
    }
    if let Some(s) = source
        && s.log.is_some()
    {
        t.push_str("; a removal log");
        if let Some(m) = &s.meters {
            t.push_str(&format!(", current readings from {m}"));
        }
    }
    t
}

/// A TOML basic string.
fn toml_string(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if (c as u32) < 0x20 => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// The life table that refits the chosen fit from the records each time a
/// scenario is read, e.g.
/// `life = { records = "fans.csv", dist = "weibull", part = "fan" }`.
pub fn records_reference(p: &PartFits, source: &RecordsSource) -> Option<String> {
    let (fit, _) = p.chosen()?;
    let dist = if fit.method == Method::AssumedShape {
        "weibull"
    } else {
        fit.distribution.name()
    };
    let mut t = format!(
        "life = {{ records = {}, dist = \"{dist}\", part = {}",
        toml_string(&source.file),
        toml_string(&p.part)
    );
    if let Some(m) = &source.meters {
        t.push_str(&format!(", meters = {}", toml_string(m)));
    }
    if let Some(a) = &fit.assumed {
        t.push_str(&format!(", assumed_shape = {}", toml_number(a.shape)));
    }
    t.push_str(" }");
    Some(t)
}

/// The chosen fit's life block with comment lines saying what was fitted,
/// why, and from which records (and, with a source, the line that refits
/// it from the records instead). Every line parses as TOML.
pub fn scenario_life_block_commented(
    p: &PartFits,
    source: Option<&RecordsSource>,
) -> Option<String> {
    let (fit, why) = p.chosen()?;
    let mut t = format!(
        "# fitted to {}: {}\n# {}\n{}",
        from_text(p, source),
        data_text(p),
        why,
        scenario_life_block(fit)
    );
    if !fit.reliable
        && let Some(n) = &fit.reliability_note
    {
        t = format!("# caution: {n}\n{t}");
    }
    if let Some(s) = source
        && let Some(r) = records_reference(p, s)
    {
        t.push_str(&format!(
            "\n# or refit from the records whenever the scenario is read (path relative to the \
             scenario file):\n# {r}"
        ));
    }
    Some(t)
}

/// Parameters with intervals, e.g. `shape 2.102 [1.523, 2.900]  scale 81.88 [...]`.
fn params_text(fit: &Fit) -> String {
    let mut t = fit
        .params
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
            None if fit.method == Method::AssumedShape && e.name == "shape" => {
                format!("shape {} (assumed)", fmt_sig(e.value))
            }
            None => format!("{} {}", e.name, fmt_sig(e.value)),
        })
        .collect::<Vec<_>>()
        .join("  ");
    if let Some(a) = &fit.assumed {
        t.push_str(&format!(
            "  scale >= {} ({:.0}% one-sided, {})",
            fmt_sig(a.scale_lower),
            100.0 * a.confidence,
            match a.bound {
                BoundMethod::ChiSquare { dof } => format!("chi-square, {dof} d.f."),
                BoundMethod::LikelihoodRatio => "likelihood ratio".to_string(),
            }
        ));
    }
    t
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

fn interval_text(ci: Option<[f64; 2]>) -> String {
    match ci {
        Some([a, b]) => format!("[{}, {}]", fmt_sig(a), fmt_sig(b)),
        None => "open-ended".to_string(),
    }
}

/// The readable report: per part, one row per distribution ranked by AIC
/// (best marked `*`, fits whose standard errors cannot be trusted marked
/// `no` under "reliable"), parameters with 95% intervals, the Weibull
/// rank-regression row beside the Weibull MLE, the assumed-shape row when
/// a shape was given, the Weibull's likelihood-ratio intervals and
/// B-lives, what could not be fitted and why, and the paste-ready scenario
/// block of the chosen fit.
pub fn table(parts: &[PartFits]) -> String {
    table_with_source(parts, None)
}

/// [`table`], saying which records each part came from.
pub fn table_with_source(parts: &[PartFits], source: Option<&RecordsSource>) -> String {
    let mut out = String::new();
    for (pi, p) in parts.iter().enumerate() {
        if pi > 0 {
            out.push('\n');
        }
        out.push_str(&format!(
            "Part '{}': {} failures, {} suspensions ({} records)\n",
            p.part,
            p.failures,
            p.suspensions,
            p.failures + p.suspensions
        ));
        let c = p.counts;
        if c.interval_failures + c.left_censored + c.truncated > 0 {
            out.push_str(&format!("  {}\n", data_text(p)));
        }
        out.push('\n');
        let best_aic = p.best().map_or(f64::NAN, |b| b.aic);
        let mut rows = vec![vec![
            "rank".to_string(),
            "distribution".into(),
            "method".into(),
            "parameters [95% interval]".into(),
            "loglik".into(),
            "AIC".into(),
            "dAIC".into(),
            "reliable".into(),
        ]];
        let yes_no = |f: &Fit| if f.reliable { "yes" } else { "no" }.to_string();
        let row = |f: &Fit, rank: String, daic: String, reliable: String| {
            vec![
                rank,
                f.distribution.name().to_string(),
                f.method.name().to_string(),
                params_text(f),
                format!("{:.3}", f.loglik),
                format!("{:.2}", f.aic),
                daic,
                reliable,
            ]
        };
        let rr_row = |rr: &Fit| {
            let mut r = row(rr, "-".into(), "-".into(), "-".into());
            r[3] = format!(
                "{}  (R^2 {:.4})",
                params_text(rr),
                rr.r_squared.unwrap_or(f64::NAN)
            );
            r
        };
        // The fit used when the lowest AIC was passed over as untrusted.
        let passed_over = p.best().filter(|b| !b.reliable).and(p.best_reliable());
        for f in &p.mle {
            let rank = match f.aic_rank {
                Some(1) => "* 1".to_string(),
                Some(r) if passed_over.is_some_and(|u| u.distribution == f.distribution) => {
                    format!("> {r}")
                }
                Some(r) => r.to_string(),
                None => String::new(),
            };
            rows.push(row(f, rank, format!("{:.2}", f.aic - best_aic), yes_no(f)));
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
        if let Some(a) = &p.assumed_shape {
            rows.push(row(a, "-".into(), "-".into(), yes_no(a)));
        }
        for line in pad_table(&rows, &[true, false, false, false, true, true, true, false]) {
            out.push_str(&line);
            out.push('\n');
        }
        out.push_str(&format!(
            "\n  * = lowest AIC{}. Intervals: log-Wald from the observed information \
             (mu: Wald); the rank_regression row is for comparison and is not ranked.\n",
            if passed_over.is_some() {
                "; > = the fit used, the lowest AIC among the fits that can be trusted"
            } else {
                " (best)"
            }
        ));
        if let Some(w) = p.mle_of(Family::Weibull) {
            if !w.lr_ci95.is_empty() {
                out.push_str(&format!(
                    "  Weibull, likelihood-ratio 95% intervals: shape {}, scale {}\n",
                    interval_text(w.lr_ci95("shape")),
                    interval_text(w.lr_ci95("scale")),
                ));
            }
            for b in &w.b_lives {
                out.push_str(&format!(
                    "  Weibull {} life (by which {:.0}% fail): {} h, 95% log-Wald {}, \
                     likelihood-ratio {}\n",
                    b.name,
                    100.0 * b.p,
                    fmt_sig(b.value),
                    interval_text(b.ci95),
                    interval_text(b.lr_ci95)
                ));
            }
        }
        if let Some(a) = &p.assumed_shape {
            for b in &a.b_lives {
                if let Some(lb) = b.lower_bound {
                    out.push_str(&format!(
                        "  Assumed shape, {} life: {} h, one-sided {:.0}% lower bound {} h\n",
                        b.name,
                        fmt_sig(b.value),
                        100.0 * a.assumed.as_ref().map_or(0.95, |x| x.confidence),
                        fmt_sig(lb)
                    ));
                }
            }
        }
        for f in p.mle.iter().chain(&p.assumed_shape) {
            if let Some(n) = &f.reliability_note {
                out.push_str(&format!(
                    "  not reliable, {}: {}\n",
                    f.distribution.name(),
                    n
                ));
            }
        }
        for f in p.mle.iter().chain(&p.assumed_shape) {
            for n in &f.notes {
                let name = if f.method == Method::AssumedShape {
                    "assumed shape"
                } else {
                    f.distribution.name()
                };
                out.push_str(&format!("  note, {name}: {n}\n"));
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
        if let Some((_, why)) = p.chosen() {
            out.push_str(&format!("\n  Paste into the scenario ({why}):\n"));
            if let Some(block) = scenario_life_block_commented(p, source) {
                for l in block.lines() {
                    out.push_str(&format!("  {l}\n"));
                }
            }
        }
    }
    out
}

#[derive(Serialize)]
struct SourceOut<'a> {
    file: &'a str,
    format: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    meters: Option<&'a str>,
    rows: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    removal_log: Option<LogOut>,
}

#[derive(Serialize)]
struct LogOut {
    failures: usize,
    planned_removals: usize,
    still_fitted: usize,
    entry_ages: usize,
}

#[derive(Serialize)]
struct ChosenOut<'a> {
    distribution: Family,
    method: Method,
    because: String,
    reliable: bool,
    life_block: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    records_reference: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    reliability_note: Option<&'a str>,
}

#[derive(Serialize)]
struct PartOut<'a> {
    part: &'a str,
    failures: usize,
    suspensions: usize,
    exact_failures: usize,
    interval_failures: usize,
    left_censored: usize,
    entry_ages: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    lines: Option<[u64; 2]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    chosen: Option<ChosenOut<'a>>,
}

#[derive(Serialize)]
struct FitsOut<'a> {
    #[serde(skip_serializing_if = "Option::is_none")]
    source: Option<SourceOut<'a>>,
    parts: Vec<PartOut<'a>>,
    fits: Vec<&'a Fit>,
    not_fitted: Vec<&'a NotFitted>,
    #[serde(skip_serializing_if = "<[_]>::is_empty")]
    parts_not_fitted: &'a [PartNotFitted],
}

/// The JSON report: `{"parts": [...], "fits": [...], "not_fitted": [...]}`;
/// see [`fits_json_with_source`].
///
/// # Errors
/// [`FitError::Output`] if serialisation fails.
pub fn fits_json(
    parts: &[PartFits],
    parts_not_fitted: &[PartNotFitted],
) -> Result<String, FitError> {
    fits_json_with_source(parts, parts_not_fitted, None)
}

/// The JSON report: `source` (the file read, records or removal log, and
/// what a log turned into), `parts` (per part: counts of each kind of
/// observation, the lines of its records, and the chosen fit with why, its
/// life block and the records reference that refits it), `fits` (each
/// part's MLE fits in AIC order, its rank regression and its assumed-shape
/// fit), `not_fitted` (the (part, distribution, method) fits that could
/// not be made and why) and `parts_not_fitted` (only when not empty: the
/// parts with nothing to fit).
///
/// # Errors
/// [`FitError::Output`] if serialisation fails.
pub fn fits_json_with_source(
    parts: &[PartFits],
    parts_not_fitted: &[PartNotFitted],
    source: Option<&RecordsSource>,
) -> Result<String, FitError> {
    let out = FitsOut {
        source: source.map(|s| SourceOut {
            file: &s.file,
            format: if s.log.is_some() {
                "removal_log"
            } else {
                "records"
            },
            meters: s.meters.as_deref(),
            rows: s.rows,
            removal_log: s.log.map(|l| LogOut {
                failures: l.failures,
                planned_removals: l.planned,
                still_fitted: l.still_fitted,
                entry_ages: l.entry_ages,
            }),
        }),
        parts: parts
            .iter()
            .map(|p| PartOut {
                part: &p.part,
                failures: p.failures,
                suspensions: p.suspensions,
                exact_failures: p.counts.exact_failures,
                interval_failures: p.counts.interval_failures,
                left_censored: p.counts.left_censored,
                entry_ages: p.counts.truncated,
                lines: p.lines.map(|(a, b)| [a, b]),
                chosen: p.chosen().map(|(f, why)| ChosenOut {
                    distribution: f.distribution,
                    method: f.method,
                    because: why,
                    reliable: f.reliable,
                    life_block: scenario_life_block(f),
                    records_reference: source.and_then(|s| records_reference(p, s)),
                    reliability_note: f.reliability_note.as_deref(),
                }),
            })
            .collect(),
        fits: parts
            .iter()
            .flat_map(|p| {
                p.mle
                    .iter()
                    .chain(&p.rank_regression)
                    .chain(&p.assumed_shape)
            })
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
