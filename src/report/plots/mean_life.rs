//! The mean-life plan beside the simulated spread.

use super::*;

/// The policies the mean-life plan's figure shows: all of them when few,
/// else the chosen ones.
pub fn mean_life_rows(v: &View<'_>) -> Vec<usize> {
    if v.policies.len() <= 24 {
        (0..v.policies.len()).collect()
    } else {
        v.chosen.clone()
    }
}

/// Two panels, one row per policy: the simulated spread of availability
/// and of cost (5-95 % line, 25-75 % bar, mean dot) beside the single
/// figure the mean-life plan gives (diamond).
pub fn mean_life(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "mean-life.svg";
    let basis = v.measure.basis;
    let idx = mean_life_rows(v);
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
        CostBasis::PvSpend => "Present value of spend",
    };
    draw(FIG, height, |root| {
        let inner = titled(root, "The mean-life plan beside the simulated futures", FIG)?;
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
            axes(&mut chart.configure_mesh(), 12, 12)
                .disable_y_mesh()
                .y_labels(0)
                .x_label_formatter(&fmt)
                .max_light_lines(0)
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
                    row_label(root, v.policies[i].name(), (lx, ly), chosen, FIG)?;
                }
            }
        }
        let (fx, fy) = foot.get_base_pixel();
        legend_row(
            root,
            fx + 24,
            fy + 16,
            &[
                ("simulated: 5-95 % of trials".into(), Swatch::Line(sim)),
                (
                    "25-75 %".into(),
                    Swatch::Block(sim.mix(0.35).to_rgba().into_rgb()),
                ),
                ("mean".into(), Swatch::Dot(sim)),
                ("mean-life plan".into(), Swatch::Diamond(plan)),
                (
                    format!("target {}", pct_trim(v.target, 1)),
                    Swatch::Dashed(INK),
                ),
            ],
            FIG,
        )?;
        Ok(())
    })
}
