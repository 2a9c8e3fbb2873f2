//! The frontier figure: cost against the chance of meeting the target.

use super::*;
use crate::report::doc::html_escape;

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
    // The scenario's named policies: (name, cost, chance).
    let named: Vec<(String, f64, f64)> = v.answer.map_or(Vec::new(), |j| {
        j.named_policies
            .iter()
            .map(|n| (n.name.clone(), n.cost.mean, n.chance.value))
            .collect()
    });
    let (_, hi) = min_max(
        v.searched
            .iter()
            .map(|s| s.1.mean)
            .chain(pts.iter().map(|p| p.cost.mean + 2.0 * p.cost.se))
            .chain(named.iter().map(|n| n.1)),
    );
    let (lo, off_scale) = frontier_left(v, hi);
    let (x0, x1) = pad(lo, hi, 0.04);
    // Room under 0 % for the off-scale label.
    let y0 = if off_scale { -0.1 } else { -0.02 };
    let mut layer = String::new();
    let title = match v.model.ready {
        None => format!(
            "Cost against the chance of at least {} availability",
            pct_trim(v.target, 1)
        ),
        Some(_) => "Cost against the chance of meeting the ready-units target".to_string(),
    };
    let y_desc = format!(
        "Chance of meeting {} (share of trials)",
        pct_trim(v.target, 1)
    );
    let svg = draw(FIG, 600, |root| {
        let mut chart = ChartBuilder::on(root)
            .caption(&title, (FONT, 20).into_font().color(&INK))
            .margin(16)
            .margin_right(36)
            .margin_bottom(44)
            .x_label_area_size(52)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, y0..1.04f64)
            .map_err(pe(FIG))?;
        axes(&mut chart.configure_mesh(), 13, 14)
            .x_desc(format!(
                "{} over the horizon{}",
                cost_measure_label(v.measure),
                v.cur_paren()
            ))
            .y_desc(&y_desc)
            .x_label_formatter(&|x| money_short(*x))
            .y_label_formatter(&|y| format!("{:.0}\u{a0}%", 100.0 * y))
            .max_light_lines(0)
            .x_labels(10)
            .y_labels(11)
            .draw()
            .map_err(pe(FIG))?;
        let plot = chart.plotting_area().get_pixel_range();
        let inside = |x: f64| x >= x0 && x <= x1;
        // The points, bars, rings and labels are written as plain SVG in
        // groups of their own (added after the figure is drawn), so that
        // the page's script can move them when the reader picks another
        // target: each point's group is moved by a translation, its bars
        // are redrawn, and `data-py0`/`data-py1` give the pixel rows of
        // chance 0 and 1 (the chance axis is linear).
        let py_of = |c: f64| chart.backend_coord(&(x0, c)).1;
        let (py0, py1) = (py_of(0.0), py_of(1.0));

        // Every searched policy, one faint dot per pixel position.
        let mut seen = HashSet::new();
        let mut searched = String::new();
        for p in v.searched.iter().map(|s| (s.1.mean, s.2.value)) {
            let px = chart.backend_coord(&p);
            if inside(p.0) && seen.insert(px) {
                searched.push_str(&svg_circle(px, 3, &FAINT, 0.6, true, ""));
            }
        }
        layer.push_str(&format!("<g id=\"wo-searched\">{searched}</g>\n"));

        let line = PALETTE[0];
        let first = usize::from(off_scale);
        let path: Vec<(i32, i32)> = pts[first..]
            .iter()
            .map(|p| chart.backend_coord(&(p.cost.mean, p.chance.value)))
            .collect();
        layer.push_str(&format!(
            "<polyline id=\"wo-line\" fill=\"none\" stroke=\"{}\" stroke-width=\"2\" points=\"{}\"/>\n",
            hex(&line),
            points_attr(&path)
        ));
        // Pixel boxes of the points and labels drawn, to keep labels apart.
        let mut placed = Placed::default();
        let cap = (x1 - x0) * 0.004;
        let mut groups: Vec<String> = vec![String::new(); pts.len()];
        for (i, p) in pts.iter().enumerate().skip(first) {
            let (x, y) = (p.cost.mean, p.chance.value);
            let px = |c: (f64, f64)| chart.backend_coord(&c);
            let (dot_x, dot_y) = px((x, y));
            let (cl, cr) = (px((x - cap, y)).0, px((x + cap, y)).0);
            // The chance bars, redrawn by the script: vertical, two caps.
            for (k, seg) in [
                vec![px((x, p.chance.lo)), px((x, p.chance.hi))],
                vec![(cl, px((x, p.chance.lo)).1), (cr, px((x, p.chance.lo)).1)],
                vec![(cl, px((x, p.chance.hi)).1), (cr, px((x, p.chance.hi)).1)],
            ]
            .iter()
            .enumerate()
            {
                layer.push_str(&format!(
                    "<polyline class=\"wo-bar\" data-i=\"{i}\" data-k=\"{k}\" data-x=\"{dot_x}\" data-x0=\"{cl}\" data-x1=\"{cr}\" fill=\"none\" stroke=\"{}\" stroke-opacity=\"0.8\" stroke-width=\"1\" points=\"{}\"/>\n",
                    hex(&line),
                    points_attr(seg)
                ));
            }
            let g = &mut groups[i];
            g.push_str(&format!(
                "<polyline fill=\"none\" stroke=\"{}\" stroke-opacity=\"0.8\" stroke-width=\"1\" points=\"{}\"/>",
                hex(&line),
                points_attr(&[
                    px((x - 1.96 * p.cost.se, y)),
                    px((x + 1.96 * p.cost.se, y))
                ])
            ));
            g.push_str(&svg_circle((dot_x, dot_y), 4, &line, 1.0, true, "wo-dot"));
            placed.take((dot_x - 5, dot_y - 5, dot_x + 5, dot_y + 5));
        }
        if off_scale {
            // The cheapest point, off the scale: an arrow at the left edge.
            let p = pts[0];
            let py = py_of(p.chance.value);
            let ex = path[0].0;
            let lx = plot.0.start + 4;
            let g = &mut groups[0];
            g.push_str(&format!(
                "<polyline fill=\"none\" stroke=\"{}\" stroke-opacity=\"0.6\" stroke-width=\"2\" points=\"{}\"/>",
                hex(&line),
                points_attr(&[(lx, py), (ex, py)])
            ));
            g.push_str(&format!(
                "<polygon fill=\"{}\" points=\"{}\"/>",
                hex(&line),
                points_attr(&[(lx, py), (lx + 9, py - 5), (lx + 9, py + 5)])
            ));
            let label = format!("{}: {}{}, ", p.name(), money_short(p.cost.mean), v.cur(),);
            let chance = chance_pct(p.chance.value);
            let w = text_width(&format!("{label}{chance} (off the scale)"), 12.0);
            placed.take((lx + 12, py + 4, lx + 12 + w, py + 20));
            g.push_str(&format!(
                "<text x=\"{}\" y=\"{}\" font-family=\"{FONT}\" font-size=\"12\" fill=\"{}\" dominant-baseline=\"text-before-edge\">{}<tspan class=\"wo-offchance\">{}</tspan> (off the scale)</text>",
                lx + 12,
                py + 6,
                hex(&INK),
                html_escape(&label),
                html_escape(&chance)
            ));
        }
        // Rings round the singled-out policies.
        for &i in &v.chosen {
            let p = pts[i];
            if inside(p.cost.mean) {
                let c = chart.backend_coord(&(p.cost.mean, p.chance.value));
                groups[i].push_str(&svg_circle(c, 8, &INK, 1.0, false, "wo-ring"));
            }
        }

        // The named policies: squares, each labelled with its name.
        let mark = PALETTE[1];
        for (name, c, k) in &named {
            if !inside(*c) {
                continue;
            }
            let (px, py) = chart.backend_coord(&(*c, *k));
            root.draw(&Rectangle::new(
                [(px - 5, py - 5), (px + 5, py + 5)],
                mark.filled(),
            ))
            .map_err(pe(FIG))?;
            let w = text_width(name, 13.0);
            let tries = [
                (px + 10, py + 4),
                (px - w - 10, py + 4),
                (px + 10, py - 20),
                (px - w - 10, py - 20),
            ];
            let fits = |x: i32, y: i32| {
                x >= plot.0.start
                    && x + w <= plot.0.end
                    && y >= plot.1.start
                    && y + 15 <= plot.1.end
            };
            let spot = tries
                .iter()
                .copied()
                .find(|&(x, y)| placed.free((x, y, x + w, y + 15)) && fits(x, y))
                .or_else(|| tries.iter().copied().find(|&(x, y)| fits(x, y)))
                .unwrap_or(tries[1]);
            placed.take((spot.0, spot.1, spot.0 + w, spot.1 + 15));
            text(
                root,
                name,
                spot,
                &style(13.0, &mark, HPos::Left, VPos::Top),
                FIG,
            )?;
        }

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
            groups[i].push_str(&format!(
                "<text class=\"wo-label\" x=\"{}\" y=\"{}\" font-family=\"{FONT}\" font-size=\"{size}\" fill=\"{}\" dominant-baseline=\"text-before-edge\">{}</text>",
                spot.0,
                spot.1,
                hex(if chosen { &INK } else { &SOFT }),
                html_escape(p.name())
            ));
        }
        for (i, g) in groups.iter().enumerate() {
            let p = pts[i];
            layer.push_str(&format!(
                "<g class=\"wo-pt\" data-i=\"{i}\" data-name=\"{}\" data-chance=\"{}\">{g}</g>\n",
                html_escape(p.name()),
                p.chance.value
            ));
        }
        layer.insert_str(
            0,
            &format!("<g id=\"wo-frontier\" data-py0=\"{py0}\" data-py1=\"{py1}\">\n"),
        );
        layer.push_str("</g>\n");

        // Shorter words when the scenario's own policies take a place too.
        let mut legend = if named.is_empty() {
            vec![
                (
                    format!("all simulated in the search ({} trials)", v.search_trials),
                    Swatch::Dot(FAINT),
                ),
                (
                    "non-dominated, on fresh trials, 95\u{a0}% intervals".into(),
                    Swatch::Line(line),
                ),
                ("named in the summary".into(), Swatch::Ring(INK)),
            ]
        } else {
            vec![
                (
                    format!("searched ({} trials)", v.search_trials),
                    Swatch::Dot(FAINT),
                ),
                (
                    "non-dominated, fresh trials, 95\u{a0}% intervals".into(),
                    Swatch::Line(line),
                ),
                ("in the summary".into(), Swatch::Ring(INK)),
            ]
        };
        if !named.is_empty() {
            legend.push(("the scenario's own".into(), Swatch::Square(mark)));
        }
        legend_row(root, 40, 580, &legend, FIG)?;
        Ok(())
    })?;
    // The layer goes last (drawn on top), and the title and the chance
    // axis's title get ids for the script.
    let svg = tag_text(&svg, &title, "wo-title");
    let svg = tag_text(&svg, &y_desc, "wo-ydesc");
    Ok(match svg.rfind("</svg>") {
        Some(end) => format!("{}{layer}{}", &svg[..end], &svg[end..]),
        None => svg,
    })
}

/// `#rrggbb` of a colour.
fn hex(c: &RGBColor) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

/// An SVG `points` attribute.
fn points_attr(pts: &[(i32, i32)]) -> String {
    pts.iter()
        .map(|(x, y)| format!("{x},{y}"))
        .collect::<Vec<_>>()
        .join(" ")
}

/// A plain SVG circle, filled or as a ring of width 2.
fn svg_circle(
    c: (i32, i32),
    r: i32,
    colour: &RGBColor,
    opacity: f64,
    filled: bool,
    class: &str,
) -> String {
    let class = if class.is_empty() {
        String::new()
    } else {
        format!(" class=\"{class}\"")
    };
    if filled {
        format!(
            "<circle{class} cx=\"{}\" cy=\"{}\" r=\"{r}\" fill=\"{}\" fill-opacity=\"{opacity}\"/>",
            c.0,
            c.1,
            hex(colour)
        )
    } else {
        format!(
            "<circle{class} cx=\"{}\" cy=\"{}\" r=\"{r}\" fill=\"none\" stroke=\"{}\" stroke-width=\"2\"/>",
            c.0,
            c.1,
            hex(colour)
        )
    }
}

/// Add `id` to the SVG `<text>` element whose content is `content` (as
/// the SVG backend escapes it), if there is one.
fn tag_text(svg: &str, content: &str, id: &str) -> String {
    let escaped = html_escape(content);
    let Some(at) = svg
        .find(&format!(">{content}</text>"))
        .or_else(|| svg.find(&format!(">{escaped}</text>")))
    else {
        return svg.to_string();
    };
    match svg[..at].rfind("<text") {
        Some(open) => format!("{}<text id=\"{id}\"{}", &svg[..open], &svg[open + 5..]),
        None => svg.to_string(),
    }
}
