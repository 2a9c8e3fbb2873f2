//! The stock figure: base stock against the demand during a lead time.

use super::*;

/// Per part type and chosen policy: the base stock against the demand
/// expected during one mean lead time, with the 5-95 % range of that
/// demand (Poisson, by Palm's theorem).
pub fn stock(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "stock.svg";
    let model = v.model;
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let nk = chosen.len().max(1);
    part_panels(
        FIG,
        model.parts.len(),
        260,
        "Spares on the shelf against demand during a resupply lead time",
        |root, areas, foot| {
            for (p, (part, area)) in model.parts.iter().zip(areas).enumerate() {
                let figs: Vec<(u32, f64, u32, u32)> = chosen
                    .iter()
                    .map(|pv| {
                        let pipeline = pv.pipeline(model, p);
                        (
                            pv.policy.parts[p].stock.total(),
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
                axes(&mut chart.configure_mesh(), 12, 12)
                    .disable_x_mesh()
                    .x_labels(0)
                    .y_desc("Spares")
                    .y_label_formatter(&|y| format!("{y:.0}"))
                    .max_light_lines(0)
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
                        root,
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
                        root,
                        pv.name(),
                        (lx, ly + 6),
                        &style(13.0, &INK, HPos::Center, VPos::Top),
                        FIG,
                    )?;
                }
            }
            let (fx, fy) = foot.get_base_pixel();
            legend_row(
                root,
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
            Ok(())
        },
    )
}
