//! The units-up figure: per site, the share of the horizon with exactly
//! `m` units up, for the policies singled out, with the ready count marked.

use super::*;

/// Shares below this are left off the left of a panel's axis (a site that
/// is almost never that low).
const SHOWN: f64 = 0.0005;

/// One panel per site: bars of the share of the horizon with exactly `m`
/// units up (one bar per policy singled out, side by side), the counts
/// short of the ready count shaded, the ready count as a dashed line, the
/// chance that the site holds its count, and the mean-life plan's expected
/// units up as a diamond under the axis.
pub fn units_up(v: &View<'_>) -> Result<String, ReportError> {
    const FIG: &str = "units-up.svg";
    let model = v.model;
    let chosen: Vec<&PolicyView<'_>> = v.chosen_views().collect();
    let nk = chosen.len().max(1);
    let n_sites = model.sites.len();
    part_panels(
        FIG,
        n_sites,
        280,
        "Units up at each site: share of the time with exactly that many",
        |root, areas, foot| {
            for (i, (site, area)) in model.sites.iter().zip(areas).enumerate() {
                let views: Vec<_> = chosen.iter().filter_map(|pv| pv.site(model, i)).collect();
                let Some(first) = views.first() else { continue };
                let units = first.units;
                let at_least = first.at_least;
                // The lowest count any policy spends a visible share at.
                let lo = views
                    .iter()
                    .filter_map(|s| s.shares.iter().position(|&x| x >= SHOWN))
                    .min()
                    .unwrap_or(0)
                    .min(at_least.map_or(units, |k| k as usize).saturating_sub(1));
                // Head room for one line per policy over the tallest bar.
                let y_max = views
                    .iter()
                    .flat_map(|s| s.shares.iter().copied())
                    .fold(0.0, f64::max)
                    .max(0.01)
                    * (1.2 + 0.1 * nk as f64);
                let caption = match at_least {
                    Some(k) => {
                        format!("{}: {units} units, at least {k} ready", display(&site.name))
                    }
                    None => format!("{}: {units} units", display(&site.name)),
                };
                let x0 = lo as f64 - 0.5;
                let x1 = units as f64 + 0.5;
                let mut chart = ChartBuilder::on(area)
                    .caption(caption, (FONT, 15).into_font().color(&INK))
                    .margin(10)
                    .margin_right(24)
                    .x_label_area_size(34)
                    .y_label_area_size(48)
                    .build_cartesian_2d(x0..x1, 0f64..y_max)
                    .map_err(pe(FIG))?;
                let span = units - lo + 1;
                axes(&mut chart.configure_mesh(), 12, 12)
                    .disable_x_mesh()
                    .x_desc("Units up")
                    .y_desc("Share of the time")
                    .x_labels(span.min(12))
                    .x_label_formatter(&|x| format!("{:.0}", x))
                    .y_label_formatter(&|y| pct_trim(*y, 0))
                    .max_light_lines(0)
                    .y_labels(5)
                    .draw()
                    .map_err(pe(FIG))?;
                if let Some(k) = at_least {
                    // Counts short of the ready count: a pale band.
                    let k = k as f64;
                    if k - 0.5 > x0 {
                        chart
                            .draw_series(std::iter::once(Rectangle::new(
                                [(x0, 0.0), (k - 0.5, y_max)],
                                RGBColor(0xf4, 0xe3, 0xdc).filled(),
                            )))
                            .map_err(pe(FIG))?;
                    }
                    chart
                        .draw_series(DashedLineSeries::new(
                            vec![(k - 0.5, 0.0), (k - 0.5, y_max)],
                            5,
                            4,
                            INK.stroke_width(2),
                        ))
                        .map_err(pe(FIG))?;
                    let (tx, ty) = chart.backend_coord(&(k - 0.5, y_max));
                    text(
                        root,
                        "short of the count",
                        (tx - 6, ty + 4),
                        &style(12.0, &SOFT, HPos::Right, VPos::Top),
                        FIG,
                    )?;
                }
                let w = 0.8 / nk as f64;
                for (kk, s) in views.iter().enumerate() {
                    let bars = s
                        .shares
                        .iter()
                        .enumerate()
                        .skip(lo)
                        .filter(|(_, x)| **x > 0.0)
                        .map(|(m, &x)| {
                            let left = m as f64 - 0.4 + kk as f64 * w;
                            Rectangle::new([(left, 0.0), (left + w, x)], colour(kk).filled())
                        });
                    chart.draw_series(bars).map_err(pe(FIG))?;
                    // The mean-life plan's expected units up, under the axis.
                    if s.plan_units_up.is_finite() {
                        let (dx, dy) = chart.backend_coord(&(s.plan_units_up.max(x0), 0.0));
                        root.draw(&PathElement::new(
                            diamond((dx, dy + 7 + 5 * kk as i32), 5),
                            colour(kk).stroke_width(2),
                        ))
                        .map_err(pe(FIG))?;
                    }
                }
                // The chance of the count, per policy, top right.
                for (kk, (pv, s)) in chosen.iter().zip(&views).enumerate() {
                    if let Some(ch) = s.chance {
                        let (tx, ty) = chart.backend_coord(&(x1, y_max));
                        text(
                            root,
                            &format!(
                                "{}: holds the count in {} of futures",
                                pv.name(),
                                chance_pct(ch.value)
                            ),
                            (tx - 6, ty + 4 + 16 * kk as i32),
                            &style(12.0, &colour(kk), HPos::Right, VPos::Top),
                            FIG,
                        )?;
                    }
                }
            }
            let mut items: Vec<(String, Swatch)> = chosen
                .iter()
                .enumerate()
                .map(|(k, pv)| (pv.name().to_string(), Swatch::Block(colour(k))))
                .collect();
            items.push((
                "mean-life plan's expected units up".into(),
                Swatch::Diamond(SOFT),
            ));
            if model.ready.is_some() {
                items.push(("ready count".into(), Swatch::Dashed(INK)));
            }
            let (fx, fy) = foot.get_base_pixel();
            legend_row(root, fx + 60, fy + 18, &items, FIG)?;
            Ok(())
        },
    )
}
