//! The frontier figure: cost against the chance of meeting the target.

use super::*;

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
    draw(FIG, 600, |root| {
        let title = format!(
            "Cost against the chance of at least {} availability",
            pct_trim(v.target, 1)
        );
        let mut chart = ChartBuilder::on(root)
            .caption(title, (FONT, 20).into_font().color(&INK))
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
            .y_desc(format!(
                "Chance of meeting {} (share of trials)",
                pct_trim(v.target, 1)
            ))
            .x_label_formatter(&|x| money_short(*x))
            .y_label_formatter(&|y| format!("{:.0}\u{a0}%", 100.0 * y))
            .max_light_lines(0)
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
                root,
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
            let st = style(
                size,
                if chosen { &INK } else { &SOFT },
                HPos::Left,
                VPos::Top,
            );
            text(root, p.name(), spot, &st, FIG)?;
        }

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
    })
}
