//! The money-by-year figure: each singled-out policy's running spend per
//! year (mean, with its P10-P90 band), the yearly budget and the mean-life
//! plan's flat line.

use super::*;

/// Spend per year for the chosen policies; `None` without `[money]`.
/// Years are drawn as per full year of spend (a partial last year scaled up
/// by its share, and marked so) so that they compare with the budget line.
pub fn money_years(v: &View<'_>) -> Result<Option<String>, ReportError> {
    const FIG: &str = "money-years.svg";
    let Some(settings) = v.model.money.as_ref() else {
        return Ok(None);
    };
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let figs: Vec<crate::summary::MoneyFigures> =
        chosen.iter().filter_map(|p| p.summary.money()).collect();
    if figs.len() != chosen.len() || figs.is_empty() {
        return Ok(None);
    }
    let years = figs[0].years.len();
    let scale = |y: &crate::summary::YearFigures, x: f64| {
        if y.share > 0.0 { x / y.share } else { x }
    };
    let (lo, hi) = min_max(
        figs.iter()
            .flat_map(|f| {
                f.years
                    .iter()
                    .flat_map(|y| [scale(y, y.spend.p10), scale(y, y.spend.p90)])
            })
            .chain(settings.budget)
            .chain(chosen.iter().filter_map(|p| p.plan.spend_per_year))
            .chain([0.0]),
    );
    // Headroom above the data for the legend.
    let (y0, y1) = pad(lo.min(0.0), hi + 0.45 * (hi - lo.min(0.0)), 0.04);
    let (x0, x1) = (0.5, years as f64 + 0.5);
    draw(FIG, 620, |root| {
        let mut chart = ChartBuilder::on(root)
            .caption(
                "Running spend per year of operation",
                (FONT, 20).into_font().color(&INK),
            )
            .margin(16)
            .margin_right(36)
            .x_label_area_size(52)
            .y_label_area_size(84)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(pe(FIG))?;
        let last_partial = figs[0].years.last().is_some_and(|y| y.share < 1.0);
        axes(&mut chart.configure_mesh(), 13, 14)
            .x_desc(format!(
                "Year of {} operating hours{}",
                num_trim(settings.hours_per_year),
                if last_partial {
                    " (the last year partial, drawn as a full year's rate)"
                } else {
                    ""
                }
            ))
            .y_desc(format!("Spend in the year{}", v.cur_paren()))
            .x_label_formatter(&|x| format!("{x:.0}"))
            .y_label_formatter(&|y| money_short(*y))
            .light_line_style(GRID.mix(0.45).stroke_width(1))
            .x_labels(years.min(20))
            .y_labels(10)
            .draw()
            .map_err(pe(FIG))?;
        for (k, (p, f)) in chosen.iter().zip(&figs).enumerate() {
            let band: Vec<(f64, f64)> = f
                .years
                .iter()
                .map(|y| (f64::from(y.year), scale(y, y.spend.p90)))
                .chain(
                    f.years
                        .iter()
                        .rev()
                        .map(|y| (f64::from(y.year), scale(y, y.spend.p10))),
                )
                .collect();
            chart
                .draw_series(std::iter::once(Polygon::new(
                    band,
                    colour(k).mix(0.14).filled(),
                )))
                .map_err(pe(FIG))?;
            let mean: Vec<(f64, f64)> = f
                .years
                .iter()
                .map(|y| (f64::from(y.year), scale(y, y.spend.mean)))
                .collect();
            chart
                .draw_series(LineSeries::new(mean.clone(), colour(k).stroke_width(3)))
                .map_err(pe(FIG))?
                .label(format!(
                    "{}: mean, P10-P90 band (present value {}{})",
                    p.name(),
                    money_short(f.pv_spend.mean),
                    v.cur()
                ))
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 22, y)], colour(k).stroke_width(3))
                });
            chart
                .draw_series(
                    mean.iter()
                        .map(|&(x, y)| Circle::new((x, y), 4, colour(k).filled())),
                )
                .map_err(pe(FIG))?;
            if let Some(flat) = p.plan.spend_per_year {
                let series = chart
                    .draw_series(DashedLineSeries::new(
                        vec![(x0, flat), (x1, flat)],
                        2,
                        5,
                        colour(k).stroke_width(2),
                    ))
                    .map_err(pe(FIG))?;
                if k == 0 {
                    series
                        .label("dotted, in each policy's colour: its mean-life plan (flat)")
                        .legend(|(x, y)| {
                            EmptyElement::at((x, y))
                                + PathElement::new(vec![(0, 0), (5, 0)], SOFT.stroke_width(2))
                                + PathElement::new(vec![(9, 0), (14, 0)], SOFT.stroke_width(2))
                                + PathElement::new(vec![(18, 0), (22, 0)], SOFT.stroke_width(2))
                        });
                }
            }
        }
        if let Some(b) = settings.budget {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(x0, b), (x1, b)],
                    8,
                    4,
                    INK.stroke_width(2),
                ))
                .map_err(pe(FIG))?
                .label(format!("yearly budget {}{}", money_short(b), v.cur()))
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], INK.stroke_width(2)));
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .background_style(WHITE.mix(0.9))
            .border_style(GRID)
            .label_font((FONT, 12).into_font().color(&INK))
            .draw()
            .map_err(pe(FIG))?;
        Ok(())
    })
    .map(Some)
}

/// Hours as a whole number with thin separators: `4 000`.
fn num_trim(x: f64) -> String {
    crate::text::num(x, 0)
}
