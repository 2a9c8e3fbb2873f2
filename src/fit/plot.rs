//! The Weibull probability plot (SVG), and writing it.
//!
//! Owns: Weibull probability paper (y = ln(-ln(1 - F)) against ln hours,
//! labelled in hours and unreliability %), the data's plotting positions
//! (median ranks, or Turnbull's estimate for inspection intervals and
//! entry ages, with failures found at inspections drawn as bars across
//! their span), the fitted line and its 95% confidence band (or an
//! assumed-shape fit's lower bound).
//! May use: `plotters` (SVG backend), `super::rank`, `super::turnbull`,
//! `crate::files` (to write the plot atomically).
//!
//! The band is pointwise, by the delta method on the log-quantile:
//! `ln t_p = ln scale + w_p / shape` with `w_p = ln(-ln(1 - p))`, its
//! variance `g' C g` from the covariance `C` of (ln shape, ln scale), and
//! `t_p * exp(-/+ 1.96 sd)` drawn at each unreliability `p`.

use std::ops::Range;
use std::path::Path;

use plotters::coord::ranged1d::{KeyPointHint, NoDefaultFormatting, Ranged, ValueFormatter};
use plotters::prelude::*;

use super::mle::z95;
use super::rank::median_ranks;
use super::turnbull;
use super::{Family, Fit, FitError, Sample};
use crate::dist::Life;

const INK: RGBColor = RGBColor(0x2e, 0x2e, 0x2e);
const LINE: RGBColor = RGBColor(0x3a, 0x6b, 0x7e);
const GRID_BOLD: RGBColor = RGBColor(0xc4, 0xc4, 0xc4);
const GRID_LIGHT: RGBColor = RGBColor(0xe6, 0xe6, 0xe6);
const SPAN: RGBColor = RGBColor(0xb3, 0x5c, 0x1e);

/// Unreliability ticks, as fractions.
const F_TICKS: [f64; 16] = [
    0.001, 0.002, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.3, 0.5, 0.632, 0.8, 0.9, 0.95, 0.99, 0.999,
];
const F_MINOR: [f64; 10] = [0.003, 0.004, 0.03, 0.04, 0.4, 0.6, 0.7, 0.97, 0.98, 0.995];

fn weibull_y(p: f64) -> f64 {
    (-(-p).ln_1p()).ln()
}

fn lerp_map(frac: f64, limit: (i32, i32)) -> i32 {
    let v = limit.0 as f64 + frac * (limit.1 - limit.0) as f64;
    if v.is_finite() {
        v.round().clamp(-1e6, 1e6) as i32
    } else {
        limit.0
    }
}

/// Hours on a logarithmic axis with ticks at 1, 2, 5 times powers of 10.
#[derive(Clone)]
struct HoursAxis {
    lo: f64,
    hi: f64,
}

impl Ranged for HoursAxis {
    type FormatOption = NoDefaultFormatting;
    type ValueType = f64;

    fn map(&self, v: &f64, limit: (i32, i32)) -> i32 {
        let frac = (v.ln() - self.lo.ln()) / (self.hi.ln() - self.lo.ln());
        lerp_map(frac, limit)
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        let light = hint.weight().allow_light_points();
        let decades = (self.hi / self.lo).log10();
        let mults: &[f64] = if light {
            &[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]
        } else if decades <= 3.5 {
            &[1.0, 2.0, 5.0]
        } else {
            &[1.0]
        };
        let mut out = Vec::new();
        let mut k = self.lo.log10().floor() as i32;
        while 10f64.powi(k) <= self.hi * 1.000_001 && out.len() < 400 {
            for m in mults {
                let v = m * 10f64.powi(k);
                if v >= self.lo * 0.999_999 && v <= self.hi * 1.000_001 {
                    out.push(v);
                }
            }
            k += 1;
        }
        if out.len() > hint.max_num_points() && !light {
            out.retain(|v| (v.log10() - v.log10().round()).abs() < 1e-9);
        }
        out
    }

    fn range(&self) -> Range<f64> {
        self.lo..self.hi
    }
}

impl ValueFormatter<f64> for HoursAxis {
    fn format(v: &f64) -> String {
        fmt_hours(*v)
    }
}

/// Hours with thousands separators (`12,000`), or decimals below 10.
fn fmt_hours(v: f64) -> String {
    if v < 10.0 {
        let s = format!("{v:.3}");
        return s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    if v >= 1e9 {
        return format!("{v:.0e}");
    }
    let digits = format!("{:.0}", v);
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// Unreliability on the Weibull scale, labelled in percent.
#[derive(Clone)]
struct UnreliabilityAxis {
    lo: f64,
    hi: f64,
}

impl Ranged for UnreliabilityAxis {
    type FormatOption = NoDefaultFormatting;
    type ValueType = f64;

    fn map(&self, v: &f64, limit: (i32, i32)) -> i32 {
        let (a, b) = (weibull_y(self.lo), weibull_y(self.hi));
        lerp_map((weibull_y(*v) - a) / (b - a), limit)
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        let inside = |v: &&f64| **v >= self.lo && **v <= self.hi;
        let mut out: Vec<f64> = F_TICKS.iter().filter(inside).copied().collect();
        if hint.weight().allow_light_points() {
            out.extend(F_MINOR.iter().filter(inside));
        } else {
            while out.len() > hint.max_num_points().max(2) {
                // Thin the ticks, keeping the 63.2% line.
                let keep: Vec<f64> = out
                    .iter()
                    .enumerate()
                    .filter(|(i, v)| i % 2 == 0 || **v == 0.632)
                    .map(|(_, v)| *v)
                    .collect();
                if keep.len() == out.len() {
                    break;
                }
                out = keep;
            }
        }
        out
    }

    fn range(&self) -> Range<f64> {
        self.lo..self.hi
    }
}

impl ValueFormatter<f64> for UnreliabilityAxis {
    fn format(v: &f64) -> String {
        let pct = v * 100.0;
        let s = format!("{pct:.1}");
        format!("{}%", s.trim_end_matches(".0"))
    }
}

/// The line to draw: shape, scale and the standard deviation of
/// `ln t_p` at unreliability `p` (when a covariance is known).
struct WeibullLine<'a> {
    shape: f64,
    scale: f64,
    fit: &'a Fit,
}

impl WeibullLine<'_> {
    fn ln_quantile(&self, p: f64) -> f64 {
        self.scale.ln() + weibull_y(p) / self.shape
    }

    fn ln_quantile_sd(&self, p: f64) -> Option<f64> {
        let cov = self.fit.log_param_covariance()?;
        let w = weibull_y(p);
        let g: Vec<f64> = match cov.names.as_slice() {
            ["ln shape", "ln scale"] => vec![-w / self.shape, 1.0],
            // Exponential (shape 1) and fixed-shape Weibull: only the scale varies.
            ["ln mean"] | ["ln scale"] => vec![1.0],
            _ => return None,
        };
        let mut v = 0.0;
        for i in 0..g.len() {
            for j in 0..g.len() {
                v += g[i] * cov.matrix[i][j] * g[j];
            }
        }
        (v >= 0.0 && v.is_finite()).then(|| v.sqrt())
    }
}

fn plot_err(e: impl std::fmt::Display) -> FitError {
    FitError::Plot {
        message: e.to_string(),
    }
}

/// Round down / up to 1, 2 or 5 times a power of ten.
fn nice_floor(v: f64) -> f64 {
    let k = 10f64.powf(v.log10().floor());
    [5.0, 2.0, 1.0]
        .iter()
        .map(|m| m * k)
        .find(|c| *c <= v)
        .unwrap_or(k)
}

fn nice_ceil(v: f64) -> f64 {
    let k = 10f64.powf(v.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * k)
        .find(|c| *c >= v)
        .unwrap_or(10.0 * k)
}

/// What the plot shows of the data: points at a plotting position, and
/// spans for failures known only within an inspection interval.
struct DataMarks {
    /// (hours, unreliability) of failures at a known age.
    points: Vec<(f64, f64)>,
    /// (from, to, unreliability) of failures within an interval.
    spans: Vec<(f64, f64, f64)>,
    /// Legend text of the points.
    points_label: &'static str,
}

fn data_marks(sample: &Sample) -> DataMarks {
    if sample.is_plain() {
        let mut points = median_ranks(sample);
        // Thousands of failures: one mark per distinct plotting position
        // is plenty.
        if points.len() > 2000 {
            let k = points.len().div_ceil(2000);
            points = points.into_iter().step_by(k).collect();
        }
        return DataMarks {
            points,
            spans: Vec::new(),
            points_label: "each failure at its median rank (Benard's approximation, Johnson's adjustment for suspensions)",
        };
    }
    let steps = turnbull::estimate(sample.obs(), 3000);
    let mut points = Vec::new();
    let mut spans = Vec::new();
    for st in steps {
        let f = st.position();
        if !(f > 0.0 && f < 1.0) {
            continue;
        }
        if st.is_span() {
            spans.push((st.from, st.to, f));
        } else {
            points.push((st.from, f));
        }
    }
    DataMarks {
        points,
        spans,
        points_label: "failures by Turnbull's estimate, which assumes no family: middle of each step",
    }
}

/// The Weibull probability plot as an SVG document: the failures at their
/// plotting positions (Johnson-adjusted Benard median ranks for exact
/// failures and suspensions; otherwise the middle of each step of
/// Turnbull's nonparametric estimate, with a failure known only within an
/// inspection interval drawn as a bar across the span the estimate places
/// it in, marked by a square), the fitted line of `line` (a 2-parameter
/// Weibull, an exponential, which is a Weibull of shape 1, or a Weibull
/// with an assumed shape) and its pointwise 95% band (delta method on the
/// log-quantile), or for an assumed-shape fit its one-sided lower bound.
///
/// # Errors
/// [`FitError::Plot`] when `line` is not a Weibull (location 0) or
/// exponential fit, the sample has no failures, or drawing fails.
pub fn probability_plot_svg(sample: &Sample, line: &Fit) -> Result<String, FitError> {
    let (shape, scale) = match line.life() {
        Life::Weibull {
            shape,
            scale,
            location: 0.0,
        } => (shape, scale),
        Life::Exponential { mean } => (1.0, mean),
        _ => {
            return Err(plot_err(format!(
                "the plot draws a 2-parameter Weibull or exponential fit, not {}",
                line.distribution.name()
            )));
        }
    };
    let wl = WeibullLine {
        shape,
        scale,
        fit: line,
    };
    let marks = data_marks(sample);
    let lower_scale = line.assumed.as_ref().map(|a| a.scale_lower);
    let all_p = marks
        .points
        .iter()
        .map(|p| p.1)
        .chain(marks.spans.iter().map(|s| s.2));
    let (mut p_min, mut p_max) = (f64::INFINITY, f64::NEG_INFINITY);
    for p in all_p {
        p_min = p_min.min(p);
        p_max = p_max.max(p);
    }
    let all_t = marks
        .points
        .iter()
        .map(|p| p.0)
        // A span from 0 (found failed at the first inspection) is drawn
        // from the left edge; the axis need not reach 0 for it.
        .chain(
            marks
                .spans
                .iter()
                .flat_map(|s| [if s.0 > 0.0 { s.0 } else { s.1 / 10.0 }, s.1]),
        );
    let (mut t_min, mut t_max) = (f64::INFINITY, f64::NEG_INFINITY);
    for t in all_t {
        t_min = t_min.min(t);
        t_max = t_max.max(t);
    }
    if !p_min.is_finite() {
        if lower_scale.is_none() {
            return Err(plot_err(format!(
                "part '{}' has no failures to plot",
                sample.part()
            )));
        }
        // No failures (an assumed-shape fit): frame the line itself.
        p_min = 0.01;
        p_max = 0.9;
        t_min = wl.ln_quantile(0.01).exp();
        t_max = wl.ln_quantile(0.9).exp();
    }
    let f_lo = (0.5 * p_min).clamp(1e-4, 0.01);
    let f_hi = (p_max + 0.5 * (1.0 - p_max)).clamp(0.9, 0.999);
    let x_lo = wl.ln_quantile(f_lo).exp().min(t_min).max(t_min / 100.0);
    let x_hi = wl.ln_quantile(f_hi).exp().max(t_max).min(t_max * 100.0);
    let (x_lo, x_hi) = (nice_floor(x_lo * 0.95), nice_ceil(x_hi * 1.05));
    if !(x_lo > 0.0 && x_hi > x_lo && x_hi.is_finite()) {
        return Err(plot_err("the hours range cannot be drawn"));
    }
    let clampx = |t: f64| t.clamp(x_lo, x_hi);
    let grid: Vec<f64> = (0..=200)
        .map(|i| {
            let (a, b) = (weibull_y(f_lo), weibull_y(f_hi));
            let y = a + (b - a) * i as f64 / 200.0;
            -(-(y.exp())).exp_m1()
        })
        .collect();
    let z = z95();
    let band: Vec<(f64, f64, f64)> = if lower_scale.is_some() {
        Vec::new()
    } else {
        grid.iter()
            .filter_map(|&p| {
                let sd = wl.ln_quantile_sd(p)?;
                let m = wl.ln_quantile(p);
                Some((p, (m - z * sd).exp(), (m + z * sd).exp()))
            })
            .collect()
    };
    let fitted: Vec<(f64, f64)> = grid
        .iter()
        .map(|&p| (wl.ln_quantile(p).exp(), p))
        .filter(|(t, _)| *t >= x_lo && *t <= x_hi)
        .collect();
    let lower_line: Vec<(f64, f64)> = match lower_scale {
        Some(ls) => grid
            .iter()
            .map(|&p| (ls * (weibull_y(p) / shape).exp(), p))
            .filter(|(t, _)| *t >= x_lo && *t <= x_hi)
            .collect(),
        None => Vec::new(),
    };

    let c = sample.counts();
    let mut what = format!("{} failures", c.failures());
    if c.interval_failures + c.left_censored > 0 {
        what.push_str(&format!(
            " ({} found at inspections)",
            c.interval_failures + c.left_censored
        ));
    }
    what.push_str(&format!(", {} suspensions", c.suspensions));
    if c.truncated > 0 {
        what.push_str(&format!(", {} with entry ages", c.truncated));
    }
    let title = format!(
        "Weibull probability plot, part '{}' ({what})",
        sample.part()
    );
    let family = match line.distribution {
        Family::Exponential => "exponential (Weibull shape 1)".to_string(),
        _ => format!("Weibull shape {}", super::report::fmt_sig(shape)),
    };
    let method = match line.method {
        super::Method::Mle => "Maximum likelihood",
        super::Method::RankRegression => "Rank regression",
        super::Method::AssumedShape => "Shape taken as given",
    };
    let line_label = format!("{method}: {family}, scale {} h", fmt_hours(scale));

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 660)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_err)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, ("sans-serif", 20).into_font().color(&INK))
            .margin(18)
            .margin_right(40)
            .x_label_area_size(55)
            .y_label_area_size(75)
            .build_cartesian_2d(
                HoursAxis { lo: x_lo, hi: x_hi },
                UnreliabilityAxis { lo: f_lo, hi: f_hi },
            )
            .map_err(plot_err)?;
        chart
            .configure_mesh()
            .x_desc("Operating hours at failure (logarithmic)")
            .y_desc("Share failed by that age, % (Weibull grid)")
            .bold_line_style(GRID_BOLD.stroke_width(1))
            .light_line_style(GRID_LIGHT.stroke_width(1))
            .axis_style(INK.stroke_width(1))
            .label_style(("sans-serif", 14).into_font().color(&INK))
            .axis_desc_style(("sans-serif", 15).into_font().color(&INK))
            .x_labels(12)
            .y_labels(16)
            .draw()
            .map_err(plot_err)?;
        if !band.is_empty() {
            let mut poly: Vec<(f64, f64)> = band.iter().map(|b| (clampx(b.1), b.0)).collect();
            poly.extend(band.iter().rev().map(|b| (clampx(b.2), b.0)));
            chart
                .draw_series(std::iter::once(Polygon::new(poly, LINE.mix(0.16).filled())))
                .map_err(plot_err)?
                .label("95 % band around the line, age by age (delta method on ln hours)")
                .legend(|(x, y)| {
                    Rectangle::new([(x, y - 6), (x + 22, y + 6)], LINE.mix(0.16).filled())
                });
            for edge in [1usize, 2] {
                let pts_edge: Vec<(f64, f64)> = band
                    .iter()
                    .map(|b| (if edge == 1 { b.1 } else { b.2 }, b.0))
                    .filter(|(t, _)| *t >= x_lo && *t <= x_hi)
                    .collect();
                chart
                    .draw_series(LineSeries::new(pts_edge, LINE.mix(0.55).stroke_width(1)))
                    .map_err(plot_err)?;
            }
        }
        chart
            .draw_series(LineSeries::new(fitted, LINE.stroke_width(2)))
            .map_err(plot_err)?
            .label(line_label)
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], LINE.stroke_width(2)));
        if let Some(a) = &line.assumed {
            // Dashes drawn as short segments (the SVG backend has no dash style).
            let dashes: Vec<Vec<(f64, f64)>> = lower_line
                .chunks(4)
                .step_by(2)
                .map(|c| c.to_vec())
                .filter(|c| c.len() > 1)
                .collect();
            let label = format!(
                "{:.0}% one-sided lower bound ({}), scale {} h",
                100.0 * a.confidence,
                match a.bound {
                    super::BoundMethod::ChiSquare { .. } => "chi-square",
                    super::BoundMethod::LikelihoodRatio => "likelihood ratio",
                },
                fmt_hours(a.scale_lower)
            );
            let mut first = true;
            for d in dashes {
                let series = chart
                    .draw_series(LineSeries::new(d, LINE.stroke_width(2)))
                    .map_err(plot_err)?;
                if first {
                    series.label(label.clone()).legend(|(x, y)| {
                        PathElement::new(vec![(x, y), (x + 8, y)], LINE.stroke_width(2))
                    });
                    first = false;
                }
            }
        }
        if !marks.spans.is_empty() {
            chart
                .draw_series(marks.spans.iter().map(|&(a, b, p)| {
                    PathElement::new(vec![(clampx(a), p), (clampx(b), p)], SPAN.stroke_width(2))
                }))
                .map_err(plot_err)?;
            chart
                .draw_series(marks.spans.iter().map(|&(a, b, p)| {
                    let mid = if a > 0.0 { (a * b).sqrt() } else { 0.5 * b };
                    EmptyElement::at((clampx(mid), p))
                        + Rectangle::new([(-4, -4), (4, 4)], SPAN.filled())
                }))
                .map_err(plot_err)?
                .label("a failure found at an inspection: a bar over the hours it lies between")
                .legend(|(x, y)| {
                    EmptyElement::at((x + 11, y))
                        + Rectangle::new([(-4, -4), (4, 4)], SPAN.filled())
                        + PathElement::new(vec![(-11, 0), (11, 0)], SPAN.stroke_width(2))
                });
        }
        if !marks.points.is_empty() {
            chart
                .draw_series(
                    marks
                        .points
                        .iter()
                        .filter(|(t, _)| *t >= x_lo && *t <= x_hi)
                        .map(|&(t, p)| Circle::new((t, p), 4, INK.stroke_width(2))),
                )
                .map_err(plot_err)?
                .label(marks.points_label)
                .legend(|(x, y)| Circle::new((x + 11, y), 4, INK.stroke_width(2)));
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerRight)
            .background_style(WHITE.mix(0.92))
            .border_style(GRID_BOLD)
            .label_font(("sans-serif", 13).into_font().color(&INK))
            .draw()
            .map_err(plot_err)?;
        root.present().map_err(plot_err)?;
    }
    Ok(svg)
}

/// Write `bytes` to `path` atomically (see [`crate::files::write_atomic`]:
/// a temporary file in the same folder, on the interrupt handler's list
/// while it exists, renamed over the target when whole).
///
/// # Errors
/// [`FitError::Output`] naming the path when any step fails.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), FitError> {
    crate::files::write_atomic(path, bytes).map_err(|e| FitError::Output {
        what: path.display().to_string(),
        message: e.to_string(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::{fit_mle, fit_rank_regression};

    fn sample() -> Sample {
        Sample::new(
            "fan",
            vec![450.0, 1150.0, 1150.0, 1600.0, 2070.0, 3100.0],
            vec![460.0, 1560.0, 4000.0, 5000.0, 6000.0],
        )
        .unwrap()
    }

    #[test]
    fn svg_has_points_line_band_and_plain_labels() {
        let s = sample();
        let fit = fit_mle(&s, Family::Weibull).unwrap();
        let svg = probability_plot_svg(&s, &fit).unwrap();
        assert!(svg.starts_with("<svg"));
        assert_eq!(svg.matches("<circle").count(), 6 + 1, "6 points + legend");
        assert!(svg.contains("Operating hours at failure"));
        assert!(svg.contains("63.2%"));
        assert!(svg.contains("1,000"));
        assert!(svg.contains("<polygon"));
        // Exponential fits draw too, and rank-regression fits (without a band).
        let e = fit_mle(&s, Family::Exponential).unwrap();
        assert!(probability_plot_svg(&s, &e).is_ok());
        let rr = fit_rank_regression(&s).unwrap();
        assert!(probability_plot_svg(&s, &rr).unwrap().contains("<circle"));
    }

    #[test]
    fn band_contains_the_line_and_widens_away_from_the_data() {
        let s = sample();
        let fit = fit_mle(&s, Family::Weibull).unwrap();
        let (shape, scale) = (fit.param("shape").unwrap(), fit.param("scale").unwrap());
        let wl = WeibullLine {
            shape,
            scale,
            fit: &fit,
        };
        let near = wl.ln_quantile_sd(0.2).unwrap();
        let far = wl.ln_quantile_sd(0.001).unwrap();
        assert!(far > near);
        // At p = 63.2% the log-quantile is ln scale: its sd is se(ln scale).
        let p632 = -(-1f64).exp_m1();
        let sd = wl.ln_quantile_sd(p632).unwrap();
        let want = fit.log_param_covariance().unwrap().sd(1).unwrap();
        assert!((sd - want).abs() < 1e-9);
    }

    #[test]
    fn atomic_write_replaces_the_file() {
        let dir = std::env::temp_dir().join(format!("wearout-fit-plot-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let p = dir.join("a.svg");
        write_atomic(&p, b"one").unwrap();
        write_atomic(&p, b"two").unwrap();
        assert_eq!(std::fs::read(&p).unwrap(), b"two");
        let left: Vec<_> = std::fs::read_dir(&dir).unwrap().collect();
        assert_eq!(left.len(), 1, "no temporary file left behind");
        let e = write_atomic(&dir.join("no/such/dir/x.svg"), b"x").unwrap_err();
        assert!(matches!(e, FitError::Output { .. }));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn tick_labels() {
        assert_eq!(fmt_hours(26000.0), "26,000");
        assert_eq!(fmt_hours(500.0), "500");
        assert_eq!(fmt_hours(0.5), "0.5");
        assert_eq!(UnreliabilityAxis::format(&0.632), "63.2%");
        assert_eq!(UnreliabilityAxis::format(&0.01), "1%");
    }
}
