//! The exceedance figure: the chance of reaching at least each availability.

use super::*;

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
    draw(FIG, 560, |root| {
        let mut chart = ChartBuilder::on(root)
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
        axes(&mut chart.configure_mesh(), 13, 14)
            .x_desc("Fleet availability over the horizon (at least)")
            .y_desc("Chance (share of trials)")
            .x_label_formatter(&|x| pct_trim(*x, 1))
            .y_label_formatter(&|y| format!("{:.0} %", 100.0 * y))
            .light_line_style(GRID.mix(0.45).stroke_width(1))
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
            root,
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
                root,
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
        Ok(())
    })
}
