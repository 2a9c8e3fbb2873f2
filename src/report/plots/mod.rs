//! The report's pictures, drawn as SVG with plotters: the frontier, the
//! availability exceedance curves, the cost breakdown, the life of each
//! part type, stock against lead-time demand, the mean-life plan beside
//! the simulated spread, and (with sites) the units up at each site.
//!
//! Owns: the figures' layout, colours and wording: one file per figure,
//! and here what they share (the drawing surface, colours, text, legends,
//! axis ranges, label placement).
//! May use: `plotters` (SVG backend), `super::view`. No simulation, no I/O.
//!
//! Colours: a colour-blind-safe qualitative set (the Okabe-Ito palette,
//! a published general-purpose palette), dark grey ink on white, light
//! grey grid; every series also differs by marker or line form, so the
//! figures survive grey-scale printing.

mod costs;
mod exceedance;
mod frontier;
mod life;
mod mean_life;
mod money;
mod stock;
mod units_up;

pub use costs::{components, costs};
pub use exceedance::exceedance;
pub use frontier::frontier;
pub use life::life;
pub use mean_life::mean_life;
pub use money::money_years;
pub use stock::stock;
pub use units_up::units_up;

use std::collections::HashSet;

use plotters::chart::MeshStyle;
use plotters::coord::ranged1d::Ranged;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ReportError;
use super::view::{
    PolicyView, View, chance_pct, display, hours, money_short, pct_trim, percentiles, trim,
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

/// Draw one figure `WIDTH` by `height` pixels on white with `body`, and
/// return its SVG text.
fn draw(
    figure: &'static str,
    height: u32,
    body: impl FnOnce(&Root<'_>) -> Result<(), ReportError>,
) -> Result<String, ReportError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, height)).into_drawing_area();
        root.fill(&WHITE).map_err(pe(figure))?;
        body(&root)?;
        root.present().map_err(pe(figure))?;
    }
    Ok(svg)
}

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

/// The figures' axes on `mesh`: grid lines at the labelled ticks, soft
/// axis lines, tick labels in ink at `label` points and axis titles at
/// `desc` points.
fn axes<'m, 'a, 'b, X: Ranged, Y: Ranged, DB: DrawingBackend>(
    mesh: &'m mut MeshStyle<'a, 'b, X, Y, DB>,
    label: u32,
    desc: u32,
) -> &'m mut MeshStyle<'a, 'b, X, Y, DB> {
    mesh.bold_line_style(GRID.stroke_width(1))
        .axis_style(SOFT.stroke_width(1))
        .label_style((FONT, label).into_font().color(&INK))
        .axis_desc_style((FONT, desc).into_font().color(&INK))
}

/// A policy's name left of its row, which starts at pixel `at`; larger
/// when the policy is singled out.
fn row_label(
    root: &Root<'_>,
    name: &str,
    at: (i32, i32),
    chosen: bool,
    figure: &'static str,
) -> Result<(), ReportError> {
    let size = if chosen { 14.0 } else { 13.0 };
    text(
        root,
        name,
        (at.0 - 8, at.1),
        &style(size, &INK, HPos::Right, VPos::Center),
        figure,
    )
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
            Swatch::Square(c) => root
                .draw(&Rectangle::new(
                    [(x + 2, y - 5), (x + 12, y + 5)],
                    c.filled(),
                ))
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
    Square(RGBColor),
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

/// The figure's area under its title.
fn titled<'a>(root: &Root<'a>, title: &str, figure: &'static str) -> Result<Root<'a>, ReportError> {
    root.titled(title, (FONT, 20).into_font().color(&INK))
        .map_err(pe(figure))
}

/// A figure of one panel per part type, `panel_h` pixels high, two to a
/// row, under `title`, with a foot for the legend: `body` draws on the
/// whole figure, its panels (in part-type order) and its foot.
fn part_panels(
    figure: &'static str,
    parts: usize,
    panel_h: u32,
    title: &str,
    body: impl FnOnce(&Root<'_>, &[Root<'_>], &Root<'_>) -> Result<(), ReportError>,
) -> Result<String, ReportError> {
    let (rows, cols) = panels(parts);
    let height = 60 + panel_h * rows as u32 + 36;
    draw(figure, height, |root| {
        let inner = titled(root, title, figure)?;
        let (panels_area, foot) = inner.split_vertically(panel_h * rows as u32);
        body(root, &panels_area.split_evenly((rows, cols)), &foot)
    })
}

/// Panels for `n` part types: (rows, columns).
fn panels(n: usize) -> (usize, usize) {
    let cols = if n > 1 { 2 } else { 1 };
    (n.div_ceil(cols), cols)
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
