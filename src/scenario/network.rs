//! The scenario keys of sites, a depot, lateral supply, repairable part
//! types, per-site stock levels and the ready-units target (MODEL.md,
//! "Second part").
//!
//! Owns: reading `[sites.NAME]`, `[[fleet]] site`, `[depot]`, `[lateral]`,
//! `[ready_units]`, `[parts.NAME] repair`, and the per-site `stock` tables of
//! policies and of the search space, with errors that name the file, line,
//! field path and what is allowed. `read_model` in the parent module calls
//! these in the order the data depend on each other: sites before the
//! fleet, the depot before policies.
//! May use: `model`, `dist`, the parent's lead-time reader and the `tree`
//! walker.

use crate::dist::LeadTime;
use crate::model::{Depot, FleetGroup, Lateral, ReadyTarget, Repair, Site, Stock, StockRanges};

use super::tree::{Tbl, Val};
use super::{ScenarioError, check_name, did_you_mean, read_lead};

/// The name of the one site of a scenario without `[sites]`.
pub(super) const IMPLICIT_SITE: &str = "fleet";

/// Where stock may be held: the sites (in index order) and whether there
/// is a depot. Policies and the search read their stock tables against it.
pub(super) struct Layout {
    pub names: Vec<String>,
    /// True when the scenario names no sites.
    pub implicit: bool,
    pub depot: bool,
}

impl Layout {
    pub fn new(sites: &[Site], depot: bool) -> Self {
        Layout {
            names: sites.iter().map(|s| s.name.clone()).collect(),
            implicit: sites.iter().all(|s| s.implicit),
            depot,
        }
    }

    fn site(&self, name: &str) -> Option<usize> {
        self.names.iter().position(|n| n == name)
    }

    /// The keys a per-site table may hold.
    fn keys(&self) -> Vec<&str> {
        let mut k: Vec<&str> = vec!["every_site"];
        k.extend(self.names.iter().map(String::as_str));
        k.push("depot");
        k
    }

    fn unknown_key(&self, v: &Val<'_, '_>, key: &str, what: &str) -> ScenarioError {
        let keys = self.keys();
        let hint = did_you_mean(key, keys.iter().copied());
        v.error(format!(
            "{what} for site `{key}`, which the scenario does not define{hint}; allowed keys: {}",
            keys.join(", ")
        ))
    }
}

/// `[sites.NAME]` tables, in file order; one implicit site without them.
pub(super) fn read_sites(root: &Tbl<'_, '_>) -> Result<Vec<Site>, ScenarioError> {
    let sites = root
        .with("sites", |v| {
            let t = v.table()?;
            let sites = t.entries(|key, v| {
                check_name(&v, key)?;
                let st = v.table()?;
                st.finish(&[])?;
                Ok(Site {
                    name: key.to_string(),
                    implicit: false,
                })
            })?;
            if sites.is_empty() {
                return Err(v.error(
                    "no sites given; name each site as a table, e.g. [sites.north], or leave [sites] out for one store",
                ));
            }
            if sites.len() > 10_000 {
                return Err(v.error("at most 10 000 sites are allowed"));
            }
            Ok(sites)
        })?
        .unwrap_or_else(|| {
            vec![Site {
                name: IMPLICIT_SITE.to_string(),
                implicit: true,
            }]
        });
    Ok(sites)
}

/// A fleet group's `site`: required when the scenario names sites,
/// refused when it does not.
pub(super) fn read_group_site(t: &Tbl<'_, '_>, sites: &[Site]) -> Result<usize, ScenarioError> {
    let implicit = sites.iter().all(|s| s.implicit);
    let names: Vec<&str> = sites.iter().map(|s| s.name.as_str()).collect();
    let site = t.with("site", |v| {
        let s = v.string()?;
        if implicit {
            return Err(v.error(format!(
                "this fleet group names site `{s}`, but the scenario has no [sites]; add [sites.{s}] (and a site for every group) or remove `site`"
            )));
        }
        names.iter().position(|n| *n == s).ok_or_else(|| {
            let hint = did_you_mean(s, names.iter().copied());
            v.error(format!(
                "site `{s}` is not defined{hint}; sites: {}",
                names.join(", ")
            ))
        })
    })?;
    match site {
        Some(i) => Ok(i),
        None if implicit => Ok(0),
        None => Err(t.error(format!(
            "missing field `site`: the scenario names sites, so each fleet group says where its units are kept; sites: {}",
            names.join(", ")
        ))),
    }
}

/// A chance in [0, 1].
fn chance(v: Val<'_, '_>) -> Result<f64, ScenarioError> {
    let x = v.number()?;
    if (0.0..=1.0).contains(&x) {
        Ok(x)
    } else {
        Err(v.error(format!("must be a chance from 0 to 1, e.g. 0.05 (got {x})")))
    }
}

/// `repair = { time = {..}, cost = {..}, condemn = {..}, channels = N }`.
pub(super) fn read_repair(v: Val<'_, '_>) -> Result<Repair, ScenarioError> {
    let t = v.table()?;
    let time = t.need(
        "time",
        "the repair time of one part, a lead-time table, e.g. { dist = \"lognormal\", median_hours = 400, log_sd = 0.5 }",
        read_lead,
    )?;
    let (cost_planned, cost_failed) = t.need(
        "cost",
        "repair cost per part: { planned = .., failed = .. } (at least 0)",
        |v| {
            let c = v.table()?;
            let p = c.need(
                "planned",
                "repair cost of a part removed at a planned replacement (at least 0)",
                |v| v.non_negative(),
            )?;
            let f = c.need("failed", "repair cost of a failed part (at least 0)", |v| {
                v.non_negative()
            })?;
            c.finish(&["planned", "failed"])?;
            Ok((p, f))
        },
    )?;
    let (condemn_planned, condemn_failed) = t
        .with("condemn", |v| {
            let c = v.table()?;
            let p = c.need(
                "planned",
                "chance (0 to 1) that a part removed at a planned replacement is scrapped",
                chance,
            )?;
            let f = c.need(
                "failed",
                "chance (0 to 1) that a failed part is scrapped",
                chance,
            )?;
            c.finish(&["planned", "failed"])?;
            Ok((p, f))
        })?
        .unwrap_or((0.0, 0.0));
    let channels = t.with("channels", |v| {
        v.integer(1, 1_000_000).map_err(|e| {
            ScenarioError {
                message: format!(
                    "{}; the number of parts the repair shop works on at once is at least 1 (leave `channels` out for no limit)",
                    e.message
                ),
                ..e
            }
        })
    })?;
    t.finish(&["time", "cost", "condemn", "channels"])?;
    Ok(Repair {
        time,
        cost_planned,
        cost_failed,
        condemn_planned,
        condemn_failed,
        channels: channels.map(|c| c as u32),
    })
}

/// Money per move: at least 0.
fn money(t: &Tbl<'_, '_>, key: &str) -> Result<f64, ScenarioError> {
    Ok(t.with(key, |v| v.non_negative())?.unwrap_or(0.0))
}

/// `[depot]`: the transport time to each site (`every_site` and/or one key
/// per site) and an optional cost per shipment.
pub(super) fn read_depot(
    root: &Tbl<'_, '_>,
    layout: &Layout,
) -> Result<Option<Depot>, ScenarioError> {
    root.with("depot", |v| {
        let t = v.table()?;
        if layout.implicit {
            return Err(t.error(
                "a depot needs sites: name them as [sites.NAME] and give each [[fleet]] group a `site`",
            ));
        }
        let transport = t.need(
            "transport",
            "transport time from the depot to each site: { every_site = { dist = \"fixed\", hours = 24 } } or one lead-time table per site",
            |v| {
                let tt = v.table()?;
                let mut every: Option<LeadTime> = None;
                let mut per: Vec<Option<LeadTime>> = vec![None; layout.names.len()];
                tt.entries(|key, v| {
                    if key == "every_site" {
                        every = Some(read_lead(v)?);
                    } else {
                        let Some(i) = layout.site(key) else {
                            return Err(layout.unknown_key(&v, key, "a transport time"));
                        };
                        per[i] = Some(read_lead(v)?);
                    }
                    Ok(())
                })?;
                per.iter()
                    .zip(&layout.names)
                    .map(|(p, name)| {
                        p.or(every).ok_or_else(|| {
                            tt.error(format!(
                                "no transport time for site `{name}`; give `{name} = {{ .. }}` or `every_site = {{ .. }}`"
                            ))
                        })
                    })
                    .collect::<Result<Vec<_>, _>>()
            },
        )?;
        let cost_per_shipment = money(&t, "cost_per_shipment")?;
        t.finish(&["transport", "cost_per_shipment"])?;
        Ok(Depot {
            transport,
            cost_per_shipment,
        })
    })
}

/// `[lateral]`: the transfer time between sites and an optional cost per
/// transfer; needs at least two sites.
pub(super) fn read_lateral(
    root: &Tbl<'_, '_>,
    layout: &Layout,
) -> Result<Option<Lateral>, ScenarioError> {
    root.with("lateral", |v| {
        let t = v.table()?;
        if layout.implicit || layout.names.len() < 2 {
            return Err(t.error(
                "lateral supply moves spares between sites, so it needs at least two sites ([sites.NAME], and a `site` for each [[fleet]] group)",
            ));
        }
        let transfer = t.need(
            "transfer",
            "time for a spare to reach a unit from another site: a lead-time table, e.g. { dist = \"fixed\", hours = 12 }",
            read_lead,
        )?;
        let cost_per_transfer = money(&t, "cost_per_transfer")?;
        t.finish(&["transfer", "cost_per_transfer"])?;
        Ok(Lateral {
            transfer,
            cost_per_transfer,
        })
    })
}

/// `[ready_units]`: at least `k` units up (per site when sites are named)
/// for at least a share of the horizon. Returns the target and the share.
pub(super) fn read_ready(
    root: &Tbl<'_, '_>,
    layout: &Layout,
    groups: &[FleetGroup],
) -> Result<Option<(ReadyTarget, f64)>, ScenarioError> {
    let mut units = vec![0usize; layout.names.len()];
    for g in groups {
        units[g.site] += g.count;
    }
    root.with("ready_units", |v| {
        let t = v.table()?;
        let at_least = t.need(
            "at_least",
            if layout.implicit {
                "the units that must be up at once, e.g. 18"
            } else {
                "the units that must be up at once at each site, e.g. { north = 18, east = 14 }"
            },
            |v| {
                let count = |v: Val<'_, '_>, site: usize| -> Result<u32, ScenarioError> {
                    let k = v.integer(0, 1_000_000)? as u32;
                    if k as usize > units[site] {
                        let place = if layout.implicit {
                            "the fleet".to_string()
                        } else {
                            format!("site `{}`", layout.names[site])
                        };
                        return Err(v.error(format!(
                            "{k} units must be up, but {place} has only {} units; allowed: 0 to {}",
                            units[site], units[site]
                        )));
                    }
                    Ok(k)
                };
                if layout.implicit {
                    if v.is_table() {
                        return Err(v.error(
                            "the scenario has no sites: give one whole number of units, e.g. at_least = 18",
                        ));
                    }
                    return Ok(vec![count(v, 0)?]);
                }
                if !v.is_table() {
                    return Err(v.error(format!(
                        "the scenario names sites: give a count per site, e.g. {{ {} }}",
                        layout
                            .names
                            .iter()
                            .map(|n| format!("{n} = 1"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )));
                }
                let tt = v.table()?;
                let mut per: Vec<Option<u32>> = vec![None; layout.names.len()];
                tt.entries(|key, v| {
                    let Some(i) = layout.site(key) else {
                        let hint = did_you_mean(key, layout.names.iter().map(String::as_str));
                        return Err(v.error(format!(
                            "a ready count for site `{key}`, which the scenario does not define{hint}; sites: {}",
                            layout.names.join(", ")
                        )));
                    };
                    per[i] = Some(count(v, i)?);
                    Ok(())
                })?;
                per.iter()
                    .zip(&layout.names)
                    .map(|(k, name)| {
                        k.ok_or_else(|| {
                            tt.error(format!(
                                "no ready count for site `{name}`; give one for every site (0 for a site with no requirement)"
                            ))
                        })
                    })
                    .collect()
            },
        )?;
        let share = t.need(
            "share",
            "the share q of the horizon the count must hold for, in (0, 1], e.g. 0.95",
            |v| {
                let x = v.number()?;
                if x > 0.0 && x <= 1.0 {
                    Ok(x)
                } else {
                    Err(v.error(format!("must be in (0, 1], e.g. 0.95 (got {x})")))
                }
            },
        )?;
        t.finish(&["at_least", "share"])?;
        Ok((ReadyTarget { at_least }, share))
    })
}

/// A site that holds no units is refused (surely a typo in the fleet).
pub(super) fn check_sites_used(
    root: &Tbl<'_, '_>,
    layout: &Layout,
    groups: &[FleetGroup],
) -> Result<(), ScenarioError> {
    if layout.implicit {
        return Ok(());
    }
    for (i, name) in layout.names.iter().enumerate() {
        if !groups.iter().any(|g| g.site == i) {
            let message = format!(
                "site `{name}` has no units: give it a [[fleet]] group with site = \"{name}\", or remove it"
            );
            // Point at the site's own table.
            let at = root
                .with("sites", |v| {
                    v.table()?.with(name, |v| Ok(v.error(message.clone())))
                })?
                .flatten();
            return Err(at.unwrap_or_else(|| root.error(message)));
        }
    }
    Ok(())
}

/// A policy's `stock`: a number without sites; with sites a table of
/// levels (`every_site`, one key per site, `depot`).
pub(super) fn read_stock(v: Val<'_, '_>, layout: &Layout) -> Result<Stock, ScenarioError> {
    let level = |v: Val<'_, '_>| v.integer(0, 100_000).map(|x| x as u32);
    if layout.implicit {
        if v.is_table() {
            return Err(v.error(
                "the scenario has no sites: the stock is one whole number, e.g. stock = 2",
            ));
        }
        return Ok(Stock::single(level(v)?));
    }
    if !v.is_table() {
        return Err(v.error(format!(
            "the scenario names sites: give the stock per site, e.g. {{ every_site = 1{} }}",
            if layout.depot { ", depot = 2" } else { "" }
        )));
    }
    let t = v.table()?;
    let mut every = None;
    let mut depot = None;
    let mut per: Vec<Option<u32>> = vec![None; layout.names.len()];
    t.entries(|key, v| {
        match key {
            "every_site" => every = Some(level(v)?),
            "depot" => {
                if !layout.depot {
                    return Err(v.error(
                        "a depot stock, but the scenario has no [depot]; add a [depot] table or remove `depot`",
                    ));
                }
                depot = Some(level(v)?);
            }
            _ => {
                let Some(i) = layout.site(key) else {
                    return Err(layout.unknown_key(&v, key, "a stock"));
                };
                per[i] = Some(level(v)?);
            }
        }
        Ok(())
    })?;
    let sites = per
        .iter()
        .zip(&layout.names)
        .map(|(p, name)| {
            p.or(every).ok_or_else(|| {
                t.error(format!(
                    "no stock for site `{name}`; give `{name} = N` or `every_site = N`"
                ))
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    if layout.depot && depot.is_none() {
        return Err(t.error("no stock at the depot; give `depot = N` (0 allowed)"));
    }
    Ok(Stock::at_sites(&sites, depot.unwrap_or(0)))
}

/// `{ min = a, max = b }`.
fn range(v: Val<'_, '_>) -> Result<(u32, u32), ScenarioError> {
    let s = v.table()?;
    let a = s.need("min", "smallest stock level", |v| v.integer(0, 10_000))? as u32;
    let b = s.need("max", "largest stock level", |v| v.integer(0, 10_000))? as u32;
    s.finish(&["min", "max"])?;
    if b < a {
        return Err(s.error("`max` must be at least `min`"));
    }
    Ok((a, b))
}

/// A search's `stock`: `{ min, max }` without sites; with sites a table of
/// such ranges (`every_site`, one key per site, `depot`). Returns the range
/// of the total and, with sites, each location's range.
pub(super) fn read_stock_ranges(
    v: Val<'_, '_>,
    layout: &Layout,
) -> Result<(u32, u32, Option<StockRanges>), ScenarioError> {
    if layout.implicit {
        let t = v.table()?;
        if t.has("every_site") || t.has("depot") {
            return Err(
                v.error("the scenario has no sites: the stock range is { min = .., max = .. }")
            );
        }
        let (a, b) = range(v)?;
        return Ok((a, b, None));
    }
    let t = v.table()?;
    if t.has("min") || t.has("max") {
        return Err(v.error(format!(
            "the scenario names sites: give a range per site, e.g. {{ every_site = {{ min = 0, max = 4 }}{} }}",
            if layout.depot {
                ", depot = { min = 0, max = 8 }"
            } else {
                ""
            }
        )));
    }
    let mut every = None;
    let mut depot = None;
    let mut per: Vec<Option<(u32, u32)>> = vec![None; layout.names.len()];
    t.entries(|key, v| {
        match key {
            "every_site" => every = Some(range(v)?),
            "depot" => {
                if !layout.depot {
                    return Err(v.error(
                        "a depot stock range, but the scenario has no [depot]; add a [depot] table or remove `depot`",
                    ));
                }
                depot = Some(range(v)?);
            }
            _ => {
                let Some(i) = layout.site(key) else {
                    return Err(layout.unknown_key(&v, key, "a stock range"));
                };
                per[i] = Some(range(v)?);
            }
        }
        Ok(())
    })?;
    let sites = per
        .iter()
        .zip(&layout.names)
        .map(|(p, name)| {
            p.or(every).ok_or_else(|| {
                t.error(format!(
                    "no stock range for site `{name}`; give `{name} = {{ min = .., max = .. }}` or `every_site = {{ .. }}`"
                ))
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    if layout.depot && depot.is_none() {
        return Err(t.error("no stock range at the depot; give `depot = { min = .., max = .. }`"));
    }
    let depot = depot.unwrap_or((0, 0));
    let lo = sites.iter().map(|r| r.0).sum::<u32>() + depot.0;
    let hi = sites.iter().map(|r| r.1).sum::<u32>() + depot.1;
    Ok((lo, hi, Some(StockRanges { sites, depot })))
}

/// The search's stock when a part's table gives none: 0 everywhere, as
/// without sites.
pub(super) fn read_stock_ranges_default(layout: &Layout) -> (u32, u32, Option<StockRanges>) {
    (
        0,
        0,
        Some(StockRanges {
            sites: vec![(0, 0); layout.names.len()],
            depot: (0, 0),
        }),
    )
}
