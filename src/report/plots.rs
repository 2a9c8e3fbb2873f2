//! The report's pictures, drawn as SVG with plotters: the frontier, the
//! availability exceedance curves, the cost breakdown, the life of each
//! part type, stock against lead-time demand, and the plan on averages
//! beside the simulated spread.
//!
//! Owns: the figures' layout, colours and wording.
//! May use: `plotters` (SVG backend), `super::view`. No simulation, no I/O.
//!
//! Colours: a colour-blind-safe qualitative set (the Okabe-Ito palette,
//! a published general-purpose palette), dark grey ink on white, light
//! grey grid; every series also differs by marker or line form, so the
//! figures survive grey-scale printing.

use std::collections::HashSet;

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ReportError;
use super::view::{
    PolicyView, View, chance_pct, display, hours, money_short, pct_trim, percentiles,
};
use crate::model::{CostBasis, Rule};
use crate::result::cost_measure_label;

const INK: RGBColor = RGBColor(0x22, 0x26, 0x2b);
const SOFT: RGBColor = RGBColor(0x5f, 0x66, 0x6d);
const GRID: RGBColor = RGBColor(0xe2, 0xe5, 0xe9);
const FAINT: RGBColor = RGBColor(0xa9, 0xb0, 0xb7);

/// Series colours: blue, vermillion, bluish green, reddish purple,
/// orange, sky blue (Okabe & Ito 2008, "Color Universal Design").
pub const PALETTE: [RGBColor; 6] = [
    RGBColor(0x00, 0x72, 0xb2),
    RGBColor(0xd5, 0x5e, 0x00),
    RGBColor(0x00, 0x9e, 0x73),
    RGBColor(0xcc, 0x79, 0xa7),
    RGBColor(0xe6, 0x9f, 0x00),
    RGBColor(0x56, 0xb4, 0xe9),
];

const FONT: &str = "sans-serif";
const WIDTH: u32 = 960;

type Root<'a> = DrawingArea<SVGBackend<'a>, plotters::coord::Shift>;

fn pe<E: std::fmt::Display>(figure: &'static str) -> impl Fn(E) -> ReportError {
    move |e| ReportError::Plot {
        figure: figure.to_string(),
        message: e.to_string(),
    }
}

/// The colour of the k-th singled-out policy.
pub fn colour(k: usize) -> RGBColor {
    PALETTE[k % PALETTE.len()]
}

fn style(size: f64, colour: &RGBColor, h: HPos, v: VPos) -> TextStyle<'static> {
    (FONT, size).into_font().color(colour).pos(Pos::new(h, v))
}

/// Text at a pixel position of the whole figure.
fn text(
    root: &Root<'_>,
    s: &str,
    at: (i32, i32),
    st: &TextStyle<'_>,
    figure: &'static str,
) -> Result<(), ReportError> {
    root.draw(&Text::new(s.to_string(), at, st.clone()))
        .map_err(pe(figure))
}

/// A row of legend entries drawn at pixel `(x, y)`: a swatch drawn by
/// `swatch` and the label.
fn legend_row(
    root: &Root<'_>,
    x: i32,
    y: i32,
    items: &[(String, Swatch)],
    figure: &'static str,
) -> Result<(), ReportError> {
    let mut x = x;
    let st = style(13.0, &INK, HPos::Left, VPos::Center);
    for (label, sw) in items {
        match *sw {
            Swatch::Block(c) => root
                .draw(&Rectangle::new([(x, y - 6), (x + 14, y + 6)], c.filled()))
                .map_err(pe(figure))?,
            Swatch::Line(c) => root
                .draw(&PathElement::new(
                    vec![(x, y), (x + 18, y)],
                    c.stroke_width(3),
                ))
                .map_err(pe(figure))?,
            Swatch::Dashed(c) => {
                for k in 0..3 {
                    root.draw(&PathElement::new(
                        vec![(x + 7 * k, y), (x + 7 * k + 4, y)],
                        c.stroke_width(2),
                    ))
                    .map_err(pe(figure))?
                }
            }
            Swatch::Dot(c) => root
                .draw(&Circle::new((x + 7, y), 4, c.filled()))
                .map_err(pe(figure))?,
            Swatch::Ring(c) => root
                .draw(&Circle::new((x + 7, y), 6, c.stroke_width(2)))
                .map_err(pe(figure))?,
            Swatch::Diamond(c) => root
                .draw(&PathElement::new(diamond((x + 7, y), 6), c.stroke_width(2)))
                .map_err(pe(figure))?,
        }
        text(root, label, (x + 22, y), &st, figure)?;
        // The naive width estimate plotters makes for SVG text.
        x += 22 + (label.chars().count() as f64 * 6.9) as i32 + 22;
    }
    Ok(())
}

#[derive(Debug, Clone, Copy)]
enum Swatch {
    Block(RGBColor),
    Line(RGBColor),
    Dashed(RGBColor),
    Dot(RGBColor),
    Diamond(RGBColor),
    Ring(RGBColor),
}

/// A closed diamond outline around `c`, radius `r` pixels.
fn diamond(c: (i32, i32), r: i32) -> Vec<(i32, i32)> {
    vec![
        (c.0, c.1 - r),
        (c.0 + r, c.1),
        (c.0, c.1 + r),
        (c.0 - r, c.1),
        (c.0, c.1 - r),
    ]
}

/// Pad a range by a share of its width on both sides; a zero-width range
/// gets a width of its own.
fn pad(lo: f64, hi: f64, share: f64) -> (f64, f64) {
    let (lo, hi) = if hi > lo {
        (lo, hi)
    } else {
        let w = lo.abs().max(1.0) * 0.05;
        (lo - w, hi + w)
    };
    let w = hi - lo;
    (lo - share * w, hi + share * w)
}

fn min_max(xs: impl IntoIterator<Item = f64>) -> (f64, f64) {
    xs.into_iter()
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        })
}

/// Boxes placed so far, to keep labels from overlapping.
#[derive(Default)]
struct Placed(Vec<(i32, i32, i32, i32)>);

impl Placed {
    fn free(&self, r: (i32, i32, i32, i32)) -> bool {
        self.0
            .iter()
            .all(|q| r.0 >= q.2 || r.2 <= q.0 || r.1 >= q.3 || r.3 <= q.1)
    }
    fn take(&mut self, r: (i32, i32, i32, i32)) {
        self.0.push(r);
    }
}

fn text_width(s: &str, size: f64) -> i32 {
    (s.chars().count() as f64 * size * 0.56).ceil() as i32
}

// ---------------------------------------------------------------------------
// Frontier
// ---------------------------------------------------------------------------

/// The left end of the frontier figure's cost axis: when the cheapest
/// frontier point lies far to the left of all the others (more than the
/// others' own spread), the axis starts near the second point and the
/// cheapest is drawn off the scale at the left edge. Returns the axis
/// start and whether the cheapest point is off the scale.
fn frontier_left(v: &View<'_>, hi: f64) -> (f64, bool) {
    let pts = &v.policies;
    let all_lo = v
        .searched
        .iter()
        .map(|s| s.1.mean)
        .chain(pts.iter().map(|p| p.cost.mean - 2.0 * p.cost.se))
        .fold(f64::INFINITY, f64::min);
    if pts.len() < 3 {
        return (all_lo, false);
    }
    let second = pts[1].cost.mean - 2.0 * pts[1].cost.se;
    let rest = hi - second;
    if pts[1].cost.mean - pts[0].cost.mean > rest.max(0.0) {
        (second - 0.06 * rest.max(1.0), true)
    } else {
        (all_lo, false)
    }
}

/// Chance of meeting the target against cost: every policy the search
/// simulated, faint; the re-costed non-dominated policies joined, with
/// Wilson intervals (vertical) and 95 % cost intervals (horizontal).
pub fn frontier(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "frontier.svg";
    let pts: Vec<&PolicyView<'_>> = v.policies.iter().collect();
    let (_, hi) = min_max(
        v.searched
            .iter()
            .map(|s| s.1.mean)
            .chain(pts.iter().map(|p| p.cost.mean + 2.0 * p.cost.se)),
    );
    let (lo, off_scale) = frontier_left(v, hi);
    let (x0, x1) = pad(lo, hi, 0.04);
    // Room under 0 % for the off-scale label.
    let y0 = if off_scale { -0.1 } else { -0.02 };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, 600)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(FIG))?;
        let title = format!(
            "Cost against the chance of at least {} availability",
            pct_trim(v.target, 1)
        );
        let mut chart = ChartBuilder::on(&root)
            .caption(title, (FONT, 20).into_font().color(&INK))
            .margin(16)
            .margin_right(36)
            .margin_bottom(44)
            .x_label_area_size(52)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, y0..1.04f64)
            .map_err(pe(FIG))?;
        chart
            .configure_mesh()
            .x_desc(format!(
                "{} over the horizon{}",
                cost_measure_label(v.measure),
                v.cur_paren()
            ))
            .y_desc(format!(
                "Chance of meeting {} (share of trials)",
                pct_trim(v.target, 1)
            ))
            .x_label_formatter(&|x| money_short(*x))
            .y_label_formatter(&|y| format!("{:.0}\u{a0}%", 100.0 * y))
            .bold_line_style(GRID.stroke_width(1))
            .max_light_lines(0)
            .axis_style(SOFT.stroke_width(1))
            .label_style((FONT, 13).into_font().color(&INK))
            .axis_desc_style((FONT, 14).into_font().color(&INK))
            .x_labels(10)
            .y_labels(11)
            .draw()
            .map_err(pe(FIG))?;
        let plot = chart.plotting_area().get_pixel_range();
        let inside = |x: f64| x >= x0 && x <= x1;

        // Every searched policy, one faint dot per pixel position.
        let mut seen = HashSet::new();
        let faint: Vec<(f64, f64)> = v
            .searched
            .iter()
            .map(|s| (s.1.mean, s.2.value))
            .filter(|p| inside(p.0) && seen.insert(chart.backend_coord(p)))
            .collect();
        chart
            .draw_series(
                faint
                    .iter()
                    .map(|&p| Circle::new(p, 3, FAINT.mix(0.6).filled())),
            )
            .map_err(pe(FIG))?;

        let line = PALETTE[0];
        let first = usize::from(off_scale);
        let path: Vec<(f64, f64)> = pts[first..]
            .iter()
            .map(|p| (p.cost.mean, p.chance.value))
            .collect();
        chart
            .draw_series(LineSeries::new(path.clone(), line.stroke_width(2)))
            .map_err(pe(FIG))?;
        // Pixel boxes of the points and labels drawn, to keep labels apart.
        let mut placed = Placed::default();
        let cap = (x1 - x0) * 0.004;
        for p in &pts[first..] {
            let (x, y) = (p.cost.mean, p.chance.value);
            let bar = line.mix(0.8).stroke_width(1);
            let segs = [
                vec![(x, p.chance.lo), (x, p.chance.hi)],
                vec![(x - cap, p.chance.lo), (x + cap, p.chance.lo)],
                vec![(x - cap, p.chance.hi), (x + cap, p.chance.hi)],
                vec![(x - 1.96 * p.cost.se, y), (x + 1.96 * p.cost.se, y)],
            ];
            chart
                .draw_series(segs.into_iter().map(|seg| PathElement::new(seg, bar)))
                .map_err(pe(FIG))?;
            let (px, py) = chart.backend_coord(&(x, y));
            placed.take((px - 5, py - 5, px + 5, py + 5));
        }
        chart
            .draw_series(path.iter().map(|&p| Circle::new(p, 4, line.filled())))
            .map_err(pe(FIG))?;
        if off_scale {
            // The cheapest point, off the scale: an arrow at the left edge.
            let p = pts[0];
            let (_, py) = chart.backend_coord(&(x0, p.chance.value));
            let (ex, _) = chart.backend_coord(&(path[0].0, 0.0));
            let lx = plot.0.start + 4;
            root.draw(&PathElement::new(
                vec![(lx, py), (ex, py)],
                line.mix(0.6).stroke_width(2),
            ))
            .map_err(pe(FIG))?;
            root.draw(&Polygon::new(
                vec![(lx, py), (lx + 9, py - 5), (lx + 9, py + 5)],
                line.filled(),
            ))
            .map_err(pe(FIG))?;
            let label = format!(
                "{}: {}{}, {} (off the scale)",
                p.name(),
                money_short(p.cost.mean),
                v.cur(),
                chance_pct(p.chance.value)
            );
            let w = text_width(&label, 12.0);
            placed.take((lx + 12, py + 4, lx + 12 + w, py + 20));
            text(
                &root,
                &label,
                (lx + 12, py + 6),
                &style(12.0, &INK, HPos::Left, VPos::Top),
                FIG,
            )?;
        }
        // Rings round the singled-out policies.
        chart
            .draw_series(
                v.chosen_views()
                    .filter(|p| inside(p.cost.mean))
                    .map(|p| Circle::new((p.cost.mean, p.chance.value), 8, INK.stroke_width(2))),
            )
            .map_err(pe(FIG))?;

        // Labels, chosen ones first, skipping any that would overlap.
        let mut order: Vec<usize> = v.chosen.clone();
        order.extend((0..pts.len()).filter(|i| !v.chosen.contains(i)));
        for i in order {
            let p = pts[i];
            if i < first {
                continue;
            }
            let (px, py) = chart.backend_coord(&(p.cost.mean, p.chance.value));
            let chosen = v.chosen.contains(&i);
            let size = if chosen { 14.0 } else { 12.0 };
            let w = text_width(p.name(), size);
            let h = size as i32 + 2;
            let tries = [
                (12, -h - 4),
                (12, 6),
                (-w - 12, -h - 4),
                (-w - 12, 6),
                (14, -h / 2),
                (-w - 14, -h / 2),
                (-w / 2, -h - 12),
                (-w / 2, 12),
            ];
            let fits = |x: i32, y: i32| {
                x >= plot.0.start && x + w <= plot.0.end && y >= plot.1.start && y + h <= plot.1.end
            };
            let spot = tries
                .iter()
                .map(|&(dx, dy)| (px + dx, py + dy))
                .find(|&(x, y)| placed.free((x, y, x + w, y + h)) && fits(x, y));
            let spot = match spot {
                Some(s) => s,
                None if chosen => tries
                    .iter()
                    .map(|&(dx, dy)| (px + dx, py + dy))
                    .find(|&(x, y)| fits(x, y))
                    .unwrap_or((px + 12, py - h - 4)),
                None => continue,
            };
            placed.take((spot.0, spot.1, spot.0 + w, spot.1 + h));
            let st = style(
                size,
                if chosen { &INK } else { &SOFT },
                HPos::Left,
                VPos::Top,
            );
            text(&root, p.name(), spot, &st, FIG)?;
        }

        legend_row(
            &root,
            70,
            580,
            &[
                (
                    format!("all simulated in the search ({} trials)", v.search_trials),
                    Swatch::Dot(FAINT),
                ),
                (
                    "non-dominated, on fresh trials, 95\u{a0}% intervals".into(),
                    Swatch::Line(line),
                ),
                ("singled out".into(), Swatch::Ring(INK)),
            ],
            FIG,
        )?;
        root.present().map_err(pe(FIG))?;
    }
    Ok(svg)
}

// ---------------------------------------------------------------------------
// Exceedance
// ---------------------------------------------------------------------------

/// Chance of reaching at least each availability level, for the chosen
/// policies, with the target marked.
pub fn exceedance(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "exceedance.svg";
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let sorted: Vec<Vec<f64>> = chosen
        .iter()
        .map(|p| crate::summary::sorted(&p.summary.acc.trial_availability))
        .collect();
    let (lo, hi) = min_max(
        sorted
            .iter()
            .flat_map(|s| {
                [
                    crate::summary::percentile_sorted(s, 0.5),
                    crate::summary::percentile_sorted(s, 99.5),
                ]
            })
            .chain([v.target]),
    );
    let (x0, x1) = pad(lo, hi, 0.05);
    let x1 = x1.min(1.0 + 0.002);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, 560)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(FIG))?;
        let mut chart = ChartBuilder::on(&root)
            .caption(
                "Chance of reaching at least each fleet availability",
                (FONT, 20).into_font().color(&INK),
            )
            .margin(16)
            .margin_right(36)
            .x_label_area_size(52)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, 0f64..1.02f64)
            .map_err(pe(FIG))?;
        chart
            .configure_mesh()
            .x_desc("Fleet availability over the horizon (at least)")
            .y_desc("Chance (share of trials)")
            .x_label_formatter(&|x| pct_trim(*x, 1))
            .y_label_formatter(&|y| format!("{:.0} %", 100.0 * y))
            .bold_line_style(GRID.stroke_width(1))
            .light_line_style(GRID.mix(0.45).stroke_width(1))
            .axis_style(SOFT.stroke_width(1))
            .label_style((FONT, 13).into_font().color(&INK))
            .axis_desc_style((FONT, 14).into_font().color(&INK))
            .x_labels(12)
            .y_labels(11)
            .draw()
            .map_err(pe(FIG))?;
        let grid: Vec<f64> = (0..=400)
            .map(|i| x0 + (x1 - x0) * i as f64 / 400.0)
            .collect();
        for (k, (p, s)) in chosen.iter().zip(&sorted).enumerate() {
            let n = s.len().max(1) as f64;
            let curve: Vec<(f64, f64)> = grid
                .iter()
                .map(|&a| {
                    let below = s.partition_point(|&x| x < a);
                    (a, (s.len() - below) as f64 / n)
                })
                .collect();
            chart
                .draw_series(LineSeries::new(curve, colour(k).stroke_width(3)))
                .map_err(pe(FIG))?
                .label(format!(
                    "{}: {}{}",
                    p.name(),
                    money_short(p.cost.mean),
                    v.cur()
                ))
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 22, y)], colour(k).stroke_width(3))
                });
        }
        chart
            .draw_series(DashedLineSeries::new(
                vec![(v.target, 0.0), (v.target, 1.02)],
                6,
                4,
                INK.stroke_width(2),
            ))
            .map_err(pe(FIG))?;
        let (tx, ty) = chart.backend_coord(&(v.target, 0.0));
        text(
            &root,
            &format!("target {}", pct_trim(v.target, 1)),
            (tx - 6, ty - 6),
            &style(13.0, &INK, HPos::Right, VPos::Bottom),
            FIG,
        )?;
        // The chance at the target, read off for each policy.
        let mut marks: Vec<(i32, i32, String, usize)> = chosen
            .iter()
            .enumerate()
            .map(|(k, p)| {
                let c = p.chance_at(v.target);
                let (x, y) = chart.backend_coord(&(v.target, c));
                (x, y, chance_pct(c), k)
            })
            .collect();
        for &(x, y, _, k) in &marks {
            root.draw(&Circle::new((x, y), 5, colour(k).filled()))
                .map_err(pe(FIG))?;
            root.draw(&Circle::new((x, y), 5, WHITE.stroke_width(1)))
                .map_err(pe(FIG))?;
        }
        // Labels below and left of each point (where its own curve is
        // not), on a white ground, pushed apart.
        marks.sort_by_key(|m| m.1);
        let mut last = i32::MIN;
        for (x, y, label, k) in marks {
            let y = (y + 12).max(last + 17);
            last = y;
            let w = text_width(&label, 13.0);
            root.draw(&Rectangle::new(
                [(x - 12 - w, y - 8), (x - 6, y + 8)],
                WHITE.mix(0.85).filled(),
            ))
            .map_err(pe(FIG))?;
            text(
                &root,
                &label,
                (x - 8, y),
                &style(13.0, &colour(k), HPos::Right, VPos::Center),
                FIG,
            )?;
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .background_style(WHITE.mix(0.9))
            .border_style(GRID)
            .label_font((FONT, 13).into_font().color(&INK))
            .draw()
            .map_err(pe(FIG))?;
        root.present().map_err(pe(FIG))?;
    }
    Ok(svg)
}

// ---------------------------------------------------------------------------
// Cost breakdown
// ---------------------------------------------------------------------------

/// The cost components of a policy, in drawing order, with their names.
pub fn components(p: &PolicyView<'_>, basis: CostBasis) -> Vec<(&'static str, f64)> {
    let a = &p.summary.acc;
    let capital = ("initial stock capital", p.summary.initial_stock_capital);
    let downtime = ("downtime penalty", a.downtime_cost.mean());
    let mut v = vec![
        ("parts", a.parts_cost.mean()),
        ("planned labour", a.labour_planned.mean()),
        ("unplanned labour", a.labour_unplanned.mean()),
        ("holding", a.holding.mean()),
    ];
    match basis {
        CostBasis::Spend => {
            v.push(capital);
            v.push(downtime);
        }
        CostBasis::TotalWithPenalty => {
            v.push(downtime);
            v.push(capital);
        }
    }
    v
}

fn component_colour(name: &str) -> RGBColor {
    match name {
        "parts" => PALETTE[0],
        "planned labour" => PALETTE[5],
        "unplanned labour" => PALETTE[1],
        "holding" => PALETTE[4],
        "initial stock capital" => PALETTE[2],
        _ => PALETTE[3],
    }
}

/// Horizontal stacked bars: each policy's mean cost by component.
pub fn costs(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "costs.svg";
    let basis = v.measure.basis;
    let n = v.policies.len();
    let height = 150 + 30 * n as u32;
    let rows: Vec<Vec<(&'static str, f64)>> =
        v.policies.iter().map(|p| components(p, basis)).collect();
    let max = rows
        .iter()
        .map(|r| r.iter().map(|c| c.1.max(0.0)).sum::<f64>())
        .fold(0.0, f64::max);
    let x1 = if max > 0.0 { max * 1.25 } else { 1.0 };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(FIG))?;
        let mut chart = ChartBuilder::on(&root)
            .caption(
                format!(
                    "Where the money goes: mean cost over the horizon{}",
                    v.cur_paren()
                ),
                (FONT, 20).into_font().color(&INK),
            )
            .margin(16)
            .margin_right(30)
            .margin_bottom(40)
            .x_label_area_size(44)
            .y_label_area_size(70)
            .build_cartesian_2d(0f64..x1, -0.5f64..(n as f64 - 0.5))
            .map_err(pe(FIG))?;
        chart
            .configure_mesh()
            .disable_y_mesh()
            .y_labels(0)
            .x_desc(format!(
                "Mean over trials{}; the tick ends the {}, the pale part is outside it",
                v.cur_paren(),
                match basis {
                    CostBasis::Spend => "spend",
                    CostBasis::TotalWithPenalty => "total",
                }
            ))
            .x_label_formatter(&|x| money_short(*x))
            .bold_line_style(GRID.stroke_width(1))
            .max_light_lines(0)
            .axis_style(SOFT.stroke_width(1))
            .label_style((FONT, 13).into_font().color(&INK))
            .axis_desc_style((FONT, 14).into_font().color(&INK))
            .x_labels(10)
            .draw()
            .map_err(pe(FIG))?;
        for (i, (p, row)) in v.policies.iter().zip(&rows).enumerate() {
            let y = (n - 1 - i) as f64;
            let mut x = 0.0;
            let last = row.len().saturating_sub(1);
            let mut measure_end = 0.0;
            for (k, &(name, value)) in row.iter().enumerate() {
                let value = value.max(0.0);
                let col = component_colour(name);
                if k == last {
                    // Outside the cost measure: a light tint with an outline.
                    measure_end = x;
                    if value > 0.0 {
                        chart
                            .draw_series([
                                Rectangle::new(
                                    [(x, y - 0.26), (x + value, y + 0.26)],
                                    col.mix(0.25).filled(),
                                ),
                                Rectangle::new(
                                    [(x, y - 0.26), (x + value, y + 0.26)],
                                    col.stroke_width(1),
                                ),
                            ])
                            .map_err(pe(FIG))?;
                    }
                } else if value > 0.0 {
                    chart
                        .draw_series(std::iter::once(Rectangle::new(
                            [(x, y - 0.34), (x + value, y + 0.34)],
                            col.filled(),
                        )))
                        .map_err(pe(FIG))?;
                }
                x += value;
            }
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(measure_end, y - 0.42), (measure_end, y + 0.42)],
                    INK.stroke_width(2),
                )))
                .map_err(pe(FIG))?;
            let (lx, ly) = chart.backend_coord(&(0.0, y));
            let chosen = v.chosen.contains(&i);
            text(
                &root,
                p.name(),
                (lx - 8, ly),
                &style(
                    if chosen { 14.0 } else { 13.0 },
                    &INK,
                    HPos::Right,
                    VPos::Center,
                ),
                FIG,
            )?;
            let measure_mean = match basis {
                CostBasis::Spend => p.summary.acc.spend.mean() + p.summary.initial_stock_capital,
                CostBasis::TotalWithPenalty => p.summary.acc.total.mean(),
            };
            let (ex, ey) = chart.backend_coord(&(x, y));
            let outside = row.last().map_or(0.0, |c| c.1);
            let label = match basis {
                CostBasis::Spend => format!(
                    "spend {} + penalty {}",
                    money_short(measure_mean),
                    money_short(outside)
                ),
                CostBasis::TotalWithPenalty => format!(
                    "total {} + capital {}",
                    money_short(measure_mean),
                    money_short(outside)
                ),
            };
            text(
                &root,
                &label,
                (ex + 6, ey),
                &style(12.0, &SOFT, HPos::Left, VPos::Center),
                FIG,
            )?;
        }
        let items: Vec<(String, Swatch)> = components(&v.policies[0], basis)
            .iter()
            .map(|(name, _)| (name.to_string(), Swatch::Block(component_colour(name))))
            .collect();
        legend_row(&root, 86, height as i32 - 22, &items, FIG)?;
        root.present().map_err(pe(FIG))?;
    }
    Ok(svg)
}

// ---------------------------------------------------------------------------
// Per part type: life and stock
// ---------------------------------------------------------------------------

/// The hours by which a share `q` of parts has failed (bisection on the
/// distribution function).
fn life_quantile(life: &crate::dist::Life, q: f64) -> f64 {
    let mut hi = life.mean().max(1.0);
    while life.cdf(hi) < q && hi < 1e12 {
        hi *= 2.0;
    }
    let mut lo = 0.0;
    for _ in 0..100 {
        let mid = 0.5 * (lo + hi);
        if life.cdf(mid) < q {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    hi
}

fn panels(n: usize) -> (usize, usize) {
    let cols = if n > 1 { 2 } else { 1 };
    (n.div_ceil(cols), cols)
}

/// Per part type: the share of parts still working at each age, with the
/// chosen policies' intervals, the mean life and any hard limit marked.
pub fn life(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "life.svg";
    let model = v.model;
    let (rows, cols) = panels(model.parts.len());
    let panel_h = 300;
    let height = 60 + panel_h * rows as u32 + 36;
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(FIG))?;
        let inner = root
            .titled(
                "Life of each part type: share still working at each age",
                (FONT, 20).into_font().color(&INK),
            )
            .map_err(pe(FIG))?;
        let (body, foot) = inner.split_vertically(panel_h * rows as u32);
        let areas = body.split_evenly((rows, cols));
        for (p, (part, area)) in model.parts.iter().zip(&areas).enumerate() {
            // Marks: (hours, label, colour, dashed).
            let mut marks: Vec<(f64, String, RGBColor, bool)> = Vec::new();
            let mut by_rule: Vec<(Rule, Vec<usize>)> = Vec::new();
            for (k, pv) in chosen.iter().enumerate() {
                let r = pv.policy.parts[p].rule;
                if r.interval().is_none() {
                    continue;
                }
                match by_rule.iter_mut().find(|e| e.0 == r) {
                    Some(e) => e.1.push(k),
                    None => by_rule.push((r, vec![k])),
                }
            }
            for (r, ks) in &by_rule {
                let t = r.interval().unwrap_or(0.0);
                let names: Vec<&str> = ks.iter().map(|&k| chosen[k].name()).collect();
                let what = match r {
                    Rule::Block(_) => "block",
                    _ => "age",
                };
                marks.push((
                    t,
                    format!(
                        "{}: {what} {} ({} still working)",
                        names.join(", "),
                        hours(t),
                        chance_pct(part.life.sf(t))
                    ),
                    colour(ks[0]),
                    false,
                ));
            }
            if let Some(limit) = part.hard_limit {
                marks.push((limit, format!("hard limit {}", hours(limit)), INK, true));
            }
            let mean = part.life.mean();
            marks.push((mean, format!("mean life {}", hours(mean)), SOFT, true));
            let x_hi = marks
                .iter()
                .map(|m| m.0)
                .fold(life_quantile(&part.life, 0.995), f64::max)
                * 1.05;
            let caption = format!(
                "{} ({}, shape {}, mean {})",
                display(&part.name),
                part.life.family(),
                super::view::trim(part.life.shape_figure(), 2),
                hours(mean)
            );
            let mut chart = ChartBuilder::on(area)
                .caption(caption, (FONT, 15).into_font().color(&INK))
                .margin(10)
                .margin_right(24)
                .x_label_area_size(40)
                .y_label_area_size(52)
                .build_cartesian_2d(0f64..x_hi, 0f64..1.02f64)
                .map_err(pe(FIG))?;
            chart
                .configure_mesh()
                .x_desc("Age (operating hours)")
                .x_label_formatter(&|x| crate::text::num(*x, 0))
                .y_label_formatter(&|y| format!("{:.0} %", 100.0 * y))
                .bold_line_style(GRID.stroke_width(1))
                .max_light_lines(0)
                .axis_style(SOFT.stroke_width(1))
                .label_style((FONT, 12).into_font().color(&INK))
                .axis_desc_style((FONT, 12).into_font().color(&INK))
                .x_labels(6)
                .y_labels(6)
                .draw()
                .map_err(pe(FIG))?;
            let curve: Vec<(f64, f64)> = (0..=240)
                .map(|i| {
                    let t = x_hi * i as f64 / 240.0;
                    (t, part.life.sf(t))
                })
                .collect();
            chart
                .draw_series(AreaSeries::new(curve.clone(), 0.0, SOFT.mix(0.12).filled()))
                .map_err(pe(FIG))?;
            chart
                .draw_series(LineSeries::new(curve, INK.stroke_width(2)))
                .map_err(pe(FIG))?;
            // Vertical marks, labels stacked from the top right.
            let mut label_y = 0.96;
            let mut placed = Placed::default();
            for (t, label, col, dashed) in &marks {
                if *dashed {
                    chart
                        .draw_series(DashedLineSeries::new(
                            vec![(*t, 0.0), (*t, 1.0)],
                            5,
                            4,
                            col.stroke_width(2),
                        ))
                        .map_err(pe(FIG))?;
                } else {
                    chart
                        .draw_series(LineSeries::new(
                            vec![(*t, 0.0), (*t, 1.0)],
                            col.stroke_width(3),
                        ))
                        .map_err(pe(FIG))?;
                }
                let (px, _) = chart.backend_coord(&(*t, 0.0));
                let w = text_width(label, 12.0);
                let plot = chart.plotting_area().get_pixel_range();
                loop {
                    let (_, py) = chart.backend_coord(&(*t, label_y));
                    let right = px + 5 + w <= plot.0.end;
                    let x = if right { px + 5 } else { px - 5 - w };
                    let r = (x, py - 8, x + w, py + 8);
                    if placed.free(r) || label_y < 0.1 {
                        placed.take(r);
                        root.draw(&Rectangle::new(
                            [(r.0 - 2, r.1), (r.2 + 2, r.3)],
                            WHITE.mix(0.85).filled(),
                        ))
                        .map_err(pe(FIG))?;
                        let h = if right { HPos::Left } else { HPos::Right };
                        let at = if right { px + 5 } else { px - 5 };
                        text(
                            &root,
                            label,
                            (at, py),
                            &style(12.0, col, h, VPos::Center),
                            FIG,
                        )?;
                        break;
                    }
                    label_y -= 0.09;
                }
                label_y -= 0.09;
                if label_y < 0.1 {
                    label_y = 0.96;
                }
            }
        }
        let (fx, fy) = foot.get_base_pixel();
        legend_row(
            &root,
            fx + 60,
            fy + 14,
            &[
                (
                    "share of parts still working (survival)".into(),
                    Swatch::Line(INK),
                ),
                (
                    "planned interval of a policy".into(),
                    Swatch::Line(colour(0)),
                ),
                ("mean life, hard limit".into(), Swatch::Dashed(SOFT)),
            ],
            FIG,
        )?;
        root.present().map_err(pe(FIG))?;
    }
    Ok(svg)
}

/// Per part type and chosen policy: the base stock against the demand
/// expected during one mean lead time, with the 5-95 % range of that
/// demand (Poisson, by Palm's theorem).
pub fn stock(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "stock.svg";
    let model = v.model;
    let (rows, cols) = panels(model.parts.len());
    let panel_h = 260;
    let height = 60 + panel_h * rows as u32 + 36;
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let nk = chosen.len().max(1);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(FIG))?;
        let inner = root
            .titled(
                "Spares on the shelf against demand during a resupply lead time",
                (FONT, 20).into_font().color(&INK),
            )
            .map_err(pe(FIG))?;
        let (body, foot) = inner.split_vertically(panel_h * rows as u32);
        let areas = body.split_evenly((rows, cols));
        for (p, (part, area)) in model.parts.iter().zip(&areas).enumerate() {
            let figs: Vec<(u32, f64, u32, u32)> = chosen
                .iter()
                .map(|pv| {
                    let pipeline = pv.pipeline(model, p);
                    (
                        pv.policy.parts[p].stock,
                        pv.lead_time_demand(model, p),
                        pipeline.map_or(0, |x| x.quantile(0.05)),
                        pipeline.map_or(0, |x| x.quantile(0.95)),
                    )
                })
                .collect();
            let y_max = figs.iter().map(|f| f.0.max(f.3) as f64).fold(1.0, f64::max) + 1.0;
            let caption = format!(
                "{} (mean lead time {})",
                display(&part.name),
                hours(part.lead_time.mean())
            );
            let mut chart = ChartBuilder::on(area)
                .caption(caption, (FONT, 15).into_font().color(&INK))
                .margin(10)
                .margin_right(24)
                .x_label_area_size(30)
                .y_label_area_size(44)
                .build_cartesian_2d(-0.5f64..(nk as f64 - 0.5), 0f64..y_max)
                .map_err(pe(FIG))?;
            chart
                .configure_mesh()
                .disable_x_mesh()
                .x_labels(0)
                .y_desc("Spares")
                .y_label_formatter(&|y| format!("{y:.0}"))
                .bold_line_style(GRID.stroke_width(1))
                .max_light_lines(0)
                .axis_style(SOFT.stroke_width(1))
                .label_style((FONT, 12).into_font().color(&INK))
                .axis_desc_style((FONT, 12).into_font().color(&INK))
                .y_labels((y_max as usize + 1).min(8))
                .draw()
                .map_err(pe(FIG))?;
            for (k, (pv, &(s, m, q05, q95))) in chosen.iter().zip(&figs).enumerate() {
                let x = k as f64;
                chart
                    .draw_series(std::iter::once(Rectangle::new(
                        [(x - 0.28, 0.0), (x + 0.02, s as f64)],
                        colour(k).filled(),
                    )))
                    .map_err(pe(FIG))?;
                let (bx, by) = chart.backend_coord(&(x - 0.13, s as f64));
                text(
                    &root,
                    &format!("S = {s}"),
                    (bx, by - 3),
                    &style(12.0, &INK, HPos::Center, VPos::Bottom),
                    FIG,
                )?;
                // Demand during lead time: range and mean.
                let dx = x + 0.18;
                let whisker = [
                    vec![(dx, q05 as f64), (dx, q95 as f64)],
                    vec![(dx - 0.05, q05 as f64), (dx + 0.05, q05 as f64)],
                    vec![(dx - 0.05, q95 as f64), (dx + 0.05, q95 as f64)],
                ];
                chart
                    .draw_series(
                        whisker
                            .into_iter()
                            .map(|seg| PathElement::new(seg, INK.stroke_width(2))),
                    )
                    .map_err(pe(FIG))?;
                let (mx, my) = chart.backend_coord(&(dx, m));
                root.draw(&PathElement::new(diamond((mx, my), 6), INK.stroke_width(2)))
                    .map_err(pe(FIG))?;
                root.draw(&Polygon::new(diamond((mx, my), 5), WHITE.filled()))
                    .map_err(pe(FIG))?;
                let (lx, ly) = chart.backend_coord(&(x, 0.0));
                text(
                    &root,
                    pv.name(),
                    (lx, ly + 6),
                    &style(13.0, &INK, HPos::Center, VPos::Top),
                    FIG,
                )?;
            }
        }
        let (fx, fy) = foot.get_base_pixel();
        legend_row(
            &root,
            fx + 60,
            fy + 14,
            &[
                ("base stock S of a policy".into(), Swatch::Block(colour(0))),
                (
                    "expected demand during one mean lead time".into(),
                    Swatch::Diamond(INK),
                ),
                (
                    "5 % to 95 % of that demand (Poisson)".into(),
                    Swatch::Line(INK),
                ),
            ],
            FIG,
        )?;
        root.present().map_err(pe(FIG))?;
    }
    Ok(svg)
}

// ---------------------------------------------------------------------------
// Plan on averages against the simulation
// ---------------------------------------------------------------------------

/// The policies the plan-on-averages figure shows: all of them when few,
/// else the chosen ones.
pub fn averages_rows(v: &View<'_>) -> Vec<usize> {
    if v.policies.len() <= 24 {
        (0..v.policies.len()).collect()
    } else {
        v.chosen.clone()
    }
}

/// Two panels, one row per policy: the simulated spread of availability
/// and of cost (5-95 % line, 25-75 % bar, mean dot) beside the single
/// figure the plan on averages gives (diamond).
pub fn averages(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "averages.svg";
    let basis = v.measure.basis;
    let idx = averages_rows(v);
    let n = idx.len().max(1);
    let height = 130 + (34 * n as u32).max(110);
    let ps = [5.0, 25.0, 75.0, 95.0];
    let avail: Vec<(Vec<f64>, f64, f64)> = idx
        .iter()
        .map(|&i| {
            let p = &v.policies[i];
            (
                percentiles(&p.summary.acc.trial_availability, &ps),
                p.summary.acc.availability.mean(),
                p.plan.availability,
            )
        })
        .collect();
    let cost: Vec<(Vec<f64>, f64, f64)> = idx
        .iter()
        .map(|&i| {
            let p = &v.policies[i];
            let t = p.trial_costs(basis);
            let mean = t.iter().sum::<f64>() / t.len().max(1) as f64;
            (percentiles(&t, &ps), mean, p.plan_cost(basis))
        })
        .collect();
    let range = |rows: &[(Vec<f64>, f64, f64)], extra: &[f64]| {
        let (lo, hi) = min_max(
            rows.iter()
                .flat_map(|r| [r.0[0], r.0[3], r.2])
                .chain(extra.iter().copied()),
        );
        pad(lo, hi, 0.06)
    };
    let (a0, a1) = range(&avail, &[v.target]);
    let a1 = a1.min(1.0 + 0.002);
    let (c0, c1) = range(&cost, &[]);
    let basis_word = match basis {
        CostBasis::Spend => "Spend",
        CostBasis::TotalWithPenalty => "Total cost",
    };
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(FIG))?;
        let inner = root
            .titled(
                "The plan on averages beside the simulated futures",
                (FONT, 20).into_font().color(&INK),
            )
            .map_err(pe(FIG))?;
        let (body, foot) = inner.split_vertically(height - 70);
        let (left, right) = body.split_horizontally(WIDTH * 54 / 100);
        let sim = PALETTE[0];
        let plan = PALETTE[1];
        for (panel, rows, (x0, x1), title, is_avail) in [
            (
                &left,
                &avail,
                (a0, a1),
                "Fleet availability".to_string(),
                true,
            ),
            (
                &right,
                &cost,
                (c0, c1),
                format!("{basis_word} over the horizon{}", v.cur_paren()),
                false,
            ),
        ] {
            let mut chart = ChartBuilder::on(panel)
                .caption(title, (FONT, 15).into_font().color(&INK))
                .margin(10)
                .margin_right(24)
                .x_label_area_size(34)
                .y_label_area_size(if is_avail { 60 } else { 10 })
                .build_cartesian_2d(x0..x1, -0.5f64..(n as f64 - 0.5))
                .map_err(pe(FIG))?;
            let fmt = move |x: &f64| {
                if is_avail {
                    pct_trim(*x, 1)
                } else {
                    money_short(*x)
                }
            };
            chart
                .configure_mesh()
                .disable_y_mesh()
                .y_labels(0)
                .x_label_formatter(&fmt)
                .bold_line_style(GRID.stroke_width(1))
                .max_light_lines(0)
                .axis_style(SOFT.stroke_width(1))
                .label_style((FONT, 12).into_font().color(&INK))
                .x_labels(7)
                .draw()
                .map_err(pe(FIG))?;
            if is_avail {
                chart
                    .draw_series(DashedLineSeries::new(
                        vec![(v.target, -0.5), (v.target, n as f64 - 0.5)],
                        6,
                        4,
                        INK.stroke_width(2),
                    ))
                    .map_err(pe(FIG))?;
            }
            for (r, (q, mean, plan_x)) in rows.iter().enumerate() {
                let y = (n - 1 - r) as f64;
                chart
                    .draw_series(std::iter::once(PathElement::new(
                        vec![(q[0], y), (q[3], y)],
                        sim.stroke_width(2),
                    )))
                    .map_err(pe(FIG))?;
                chart
                    .draw_series(std::iter::once(Rectangle::new(
                        [(q[1], y - 0.2), (q[2], y + 0.2)],
                        sim.mix(0.35).filled(),
                    )))
                    .map_err(pe(FIG))?;
                let (mx, my) = chart.backend_coord(&(*mean, y));
                root.draw(&Circle::new((mx, my), 4, sim.filled()))
                    .map_err(pe(FIG))?;
                let (px, py) = chart.backend_coord(&(*plan_x, y));
                root.draw(&Polygon::new(diamond((px, py), 6), WHITE.filled()))
                    .map_err(pe(FIG))?;
                root.draw(&PathElement::new(
                    diamond((px, py), 6),
                    plan.stroke_width(2),
                ))
                .map_err(pe(FIG))?;
                if is_avail {
                    let (lx, ly) = chart.backend_coord(&(x0, y));
                    let i = idx[r];
                    let chosen = v.chosen.contains(&i);
                    text(
                        &root,
                        v.policies[i].name(),
                        (lx - 8, ly),
                        &style(
                            if chosen { 14.0 } else { 13.0 },
                            &INK,
                            HPos::Right,
                            VPos::Center,
                        ),
                        FIG,
                    )?;
                }
            }
        }
        let (fx, fy) = foot.get_base_pixel();
        legend_row(
            &root,
            fx + 24,
            fy + 16,
            &[
                ("simulated: 5-95 % of trials".into(), Swatch::Line(sim)),
                (
                    "25-75 %".into(),
                    Swatch::Block(sim.mix(0.35).to_rgba().into_rgb()),
                ),
                ("mean".into(), Swatch::Dot(sim)),
                ("plan on averages".into(), Swatch::Diamond(plan)),
                (
                    format!("target {}", pct_trim(v.target, 1)),
                    Swatch::Dashed(INK),
                ),
            ],
            FIG,
        )?;
        root.present().map_err(pe(FIG))?;
    }
    Ok(svg)
}

trait IntoRgb {
    fn into_rgb(self) -> RGBColor;
}

impl IntoRgb for RGBAColor {
    /// Blend over white.
    fn into_rgb(self) -> RGBColor {
        let RGBAColor(r, g, b, a) = self;
        let mix = |c: u8| (c as f64 * a + 255.0 * (1.0 - a)).round() as u8;
        RGBColor(mix(r), mix(g), mix(b))
    }
}
