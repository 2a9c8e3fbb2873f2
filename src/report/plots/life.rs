//! The life figure: each part type's survival, with the intervals marked.

use super::*;

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

/// Per part type: the share of parts still working at each age, with the
/// chosen policies' intervals, the mean life and any hard limit marked.
pub fn life(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "life.svg";
    let model = v.model;
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    part_panels(
        FIG,
        model.parts.len(),
        300,
        "Life of each part type: share still working at each age",
        |root, areas, foot| {
            for (p, (part, area)) in model.parts.iter().zip(areas).enumerate() {
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
                    "{} ({}, {} {}, mean {})",
                    display(&part.name),
                    part.life.family(),
                    part.life.shape_named().0,
                    trim(part.life.shape_named().1, 2),
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
                axes(&mut chart.configure_mesh(), 12, 12)
                    .x_desc("Age (operating hours)")
                    .x_label_formatter(&|x| crate::text::num(*x, 0))
                    .y_label_formatter(&|y| format!("{:.0} %", 100.0 * y))
                    .max_light_lines(0)
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
                                root,
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
                root,
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
            Ok(())
        },
    )
}
