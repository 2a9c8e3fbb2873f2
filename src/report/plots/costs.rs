//! The cost figure: each policy's mean cost by component.

use super::*;

/// The cost components of a policy, in drawing order, with their names.
/// Repair appears with rotables, transport with a depot or lateral supply.
pub fn components(
    model: &crate::model::Model,
    p: &PolicyView<'_>,
    basis: CostBasis,
) -> Vec<(&'static str, f64)> {
    let a = &p.summary.acc;
    let capital = ("initial stock capital", p.summary.initial_stock_capital);
    let downtime = ("downtime penalty", a.downtime_cost.mean());
    let mut v = vec![
        ("parts", a.parts_cost.mean()),
        ("planned labour", a.labour_planned.mean()),
        ("unplanned labour", a.labour_unplanned.mean()),
        ("holding", a.holding.mean()),
    ];
    if model.has_rotables() {
        v.push(("repair", a.repair_planned.mean() + a.repair_failed.mean()));
    }
    if model.depot.is_some() || model.lateral.is_some() {
        v.push(("transport", a.transport_cost.mean()));
    }
    match basis {
        CostBasis::Spend | CostBasis::PvSpend => {
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
        // The Okabe-Ito palette's yellow, and the figures' soft grey.
        "repair" => RGBColor(0xf0, 0xe4, 0x42),
        "transport" => SOFT,
        _ => PALETTE[3],
    }
}

/// Horizontal stacked bars: each policy's mean cost by component.
pub fn costs(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "costs.svg";
    let basis = v.measure.basis;
    let n = v.policies.len();
    // More than six components (repair, transport) take a second legend row.
    let n_items = components(v.model, &v.policies[0], basis).len();
    let legend_rows = if n_items > 6 { 2 } else { 1 };
    let height = 150 + 30 * n as u32 + 22 * (legend_rows - 1);
    let rows: Vec<Vec<(&'static str, f64)>> = v
        .policies
        .iter()
        .map(|p| components(v.model, p, basis))
        .collect();
    let max = rows
        .iter()
        .map(|r| r.iter().map(|c| c.1.max(0.0)).sum::<f64>())
        .fold(0.0, f64::max);
    let x1 = if max > 0.0 { max * 1.25 } else { 1.0 };
    draw(FIG, height, |root| {
        let mut chart = ChartBuilder::on(root)
            .caption(
                format!(
                    "Where the money goes: mean cost over the horizon{}",
                    v.cur_paren()
                ),
                (FONT, 20).into_font().color(&INK),
            )
            .margin(16)
            .margin_right(30)
            .margin_bottom(40 + 22 * (legend_rows - 1))
            .x_label_area_size(44)
            .y_label_area_size(70)
            .build_cartesian_2d(0f64..x1, -0.5f64..(n as f64 - 0.5))
            .map_err(pe(FIG))?;
        axes(&mut chart.configure_mesh(), 13, 14)
            .disable_y_mesh()
            .y_labels(0)
            .x_desc(format!(
                "Mean over trials{}; the tick ends the {}, the pale part is outside it",
                v.cur_paren(),
                match basis {
                    CostBasis::Spend => "spend",
                    CostBasis::TotalWithPenalty => "total",
                    CostBasis::PvSpend => "spend (not discounted)",
                }
            ))
            .x_label_formatter(&|x| money_short(*x))
            .max_light_lines(0)
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
            row_label(root, p.name(), (lx, ly), chosen, FIG)?;
            let measure_mean = match basis {
                CostBasis::Spend | CostBasis::PvSpend => {
                    p.summary.acc.spend.mean() + p.summary.initial_stock_capital
                }
                CostBasis::TotalWithPenalty => p.summary.acc.total.mean(),
            };
            let (ex, ey) = chart.backend_coord(&(x, y));
            let outside = row.last().map_or(0.0, |c| c.1);
            let label = match basis {
                CostBasis::Spend | CostBasis::PvSpend => format!(
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
                root,
                &label,
                (ex + 6, ey),
                &style(12.0, &SOFT, HPos::Left, VPos::Center),
                FIG,
            )?;
        }
        let items: Vec<(String, Swatch)> = components(v.model, &v.policies[0], basis)
            .iter()
            .map(|(name, _)| (name.to_string(), Swatch::Block(component_colour(name))))
            .collect();
        if legend_rows == 1 {
            legend_row(root, 86, height as i32 - 22, &items, FIG)?;
        } else {
            let (top, bottom) = items.split_at(4);
            legend_row(root, 86, height as i32 - 44, top, FIG)?;
            legend_row(root, 86, height as i32 - 22, bottom, FIG)?;
        }
        Ok(())
    })
}
