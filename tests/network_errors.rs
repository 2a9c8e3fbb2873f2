//! Bad input in the scenario keys of sites, a depot, lateral supply,
//! rotables and the ready-units target (issue 15, item 8): each mistake is
//! refused by `wearout check` with exit status 2 and one message naming the
//! file, the line, the field path and what is allowed; never a panic.

mod common;

use common::{check_refuses, check_text, scenario_text};

fn b2() -> String {
    scenario_text("b2")
}

fn b0() -> String {
    scenario_text("b0")
}

/// One broken scenario: exit 2, one message with the file, a line number,
/// and every needle.
fn refuses(tag: &str, text: &str, needles: &[&str]) {
    let err = check_refuses(tag, text, needles);
    assert!(
        err.contains(&format!("{tag}.toml:")),
        "{tag}: no file and line in {err}"
    );
}

fn with(text: &str, from: &str, to: &str) -> String {
    assert!(
        text.contains(from),
        "fixture text `{from}` not in the scenario"
    );
    text.replacen(from, to, 1)
}

#[test]
fn b2_as_shipped_is_valid() {
    let (code, err) = check_text("b2-ok", &b2());
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn fleet_group_naming_a_missing_site() {
    refuses(
        "missing-site",
        &with(&b2(), "site = \"east\"", "site = \"eats\""),
        &[
            "fleet[1].site",
            "site `eats` is not defined",
            "did you mean `east`?",
        ],
    );
}

#[test]
fn fleet_group_without_a_site_when_sites_exist() {
    refuses(
        "no-site",
        &with(&b2(), "count = 16\nsite = \"east\"\n", "count = 16\n"),
        &["fleet[1]", "missing field `site`", "north, east, south"],
    );
}

#[test]
fn fleet_group_with_a_site_but_no_sites() {
    refuses(
        "site-without-sites",
        &with(&b0(), "count = 6", "count = 6\nsite = \"pit\""),
        &["fleet[0].site", "no [sites]"],
    );
}

#[test]
fn a_site_with_no_units() {
    refuses(
        "empty-site",
        &with(&b2(), "[sites.south]", "[sites.south]\n[sites.west]"),
        &["sites.west", "site `west` has no units"],
    );
}

#[test]
fn a_stock_for_a_site_that_does_not_exist() {
    refuses(
        "stock-site",
        &with(
            &b2(),
            "stock = { depot = 2, every_site = 1 } }",
            "stock = { depot = 2, every_site = 1, west = 3 } }",
        ),
        &[
            "policies.reference.traction_motor.stock.west",
            "which the scenario does not define",
            "allowed keys: every_site, north, east, south, depot",
        ],
    );
}

#[test]
fn a_site_left_without_stock() {
    refuses(
        "stock-missing",
        &with(
            &b2(),
            "stock = { depot = 2, every_site = 1 } }",
            "stock = { depot = 2, north = 1 } }",
        ),
        &["traction_motor.stock", "no stock for site `east`"],
    );
}

#[test]
fn a_depot_stock_without_a_depot() {
    let text = with(&b2(), "[depot]\n", "[nodepot]\n");
    let text = with(
        &text,
        "[nodepot]\ntransport = { north = { dist = \"fixed\", hours = 24 }, east = { dist = \"fixed\", hours = 36 }, south = { dist = \"lognormal\", median_hours = 48, log_sd = 0.3 } }\n",
        "",
    );
    refuses(
        "depot-stock",
        &text,
        &[
            "policies.reference.traction_motor.stock.depot",
            "the scenario has no [depot]",
        ],
    );
}

#[test]
fn a_depot_without_sites() {
    refuses(
        "depot-no-sites",
        &format!(
            "{}\n[depot]\ntransport = {{ every_site = {{ dist = \"fixed\", hours = 5 }} }}\n",
            b0()
        ),
        &["depot", "a depot needs sites"],
    );
}

#[test]
fn a_depot_missing_a_sites_transport_time() {
    refuses(
        "transport",
        &with(
            &b2(),
            "transport = { north = { dist = \"fixed\", hours = 24 }, ",
            "transport = { ",
        ),
        &["depot.transport", "no transport time for site `north`"],
    );
}

#[test]
fn lateral_without_sites() {
    refuses(
        "lateral-no-sites",
        &format!(
            "{}\n[lateral]\ntransfer = {{ dist = \"fixed\", hours = 5 }}\n",
            b0()
        ),
        &["lateral", "needs at least two sites"],
    );
}

#[test]
fn negative_or_nan_repair_times_and_costs() {
    refuses(
        "repair-time",
        &with(&b2(), "median_hours = 400", "median_hours = -400"),
        &[
            "parts.traction_motor.repair.time.median_hours",
            "greater than 0",
        ],
    );
    refuses(
        "repair-fixed",
        &with(
            &b2(),
            "time = { dist = \"gamma\", mean_hours = 120, cv = 0.5 }",
            "time = { dist = \"fixed\", hours = nan }",
        ),
        &["parts.air_compressor.repair.time.hours", "at least 0"],
    );
    refuses(
        "repair-cost",
        &with(
            &b2(),
            "cost = { planned = 6000, failed = 12000 }",
            "cost = { planned = 6000, failed = -1 }",
        ),
        &["parts.traction_motor.repair.cost.failed", "at least 0"],
    );
    refuses(
        "repair-cost-nan",
        &with(
            &b2(),
            "cost = { planned = 800, failed = 1500 }",
            "cost = { planned = nan, failed = 1500 }",
        ),
        &["parts.air_compressor.repair.cost.planned", "at least 0"],
    );
}

#[test]
fn condemnation_chances_outside_zero_to_one() {
    refuses(
        "condemn-high",
        &with(
            &b2(),
            "condemn = { planned = 0.02, failed = 0.10 }",
            "condemn = { planned = 0.02, failed = 1.5 }",
        ),
        &[
            "parts.traction_motor.repair.condemn.failed",
            "from 0 to 1",
            "got 1.5",
        ],
    );
    refuses(
        "condemn-neg",
        &with(
            &b2(),
            "condemn = { planned = 0.05, failed = 0.20 }",
            "condemn = { planned = -0.05, failed = 0.20 }",
        ),
        &["parts.air_compressor.repair.condemn.planned", "from 0 to 1"],
    );
    refuses(
        "condemn-nan",
        &with(
            &b2(),
            "condemn = { planned = 0.05, failed = 0.20 }",
            "condemn = { planned = nan, failed = 0.20 }",
        ),
        &["parts.air_compressor.repair.condemn.planned", "from 0 to 1"],
    );
}

#[test]
fn zero_repair_channels() {
    refuses(
        "channels",
        &with(&b2(), "channels = 2", "channels = 0"),
        &[
            "parts.traction_motor.repair.channels",
            "at least 1",
            "leave `channels` out",
        ],
    );
}

#[test]
fn a_ready_count_larger_than_the_site() {
    refuses(
        "ready-count",
        &with(&b2(), "south = 10 }", "south = 13 }"),
        &["ready_units.at_least.south", "only 12 units", "0 to 12"],
    );
    // Without sites: against the fleet.
    refuses(
        "ready-fleet",
        &format!("{}\n[ready_units]\nat_least = 7\nshare = 0.9\n", b0()),
        &["ready_units.at_least", "the fleet has only 6 units"],
    );
}

#[test]
fn a_share_outside_zero_to_one() {
    for (tag, v) in [
        ("share-zero", "0"),
        ("share-high", "1.2"),
        ("share-nan", "nan"),
    ] {
        refuses(
            tag,
            &with(&b2(), "share = 0.95", &format!("share = {v}")),
            &["ready_units.share", "(0, 1]"],
        );
    }
}

#[test]
fn a_ready_count_for_an_unknown_site() {
    refuses(
        "ready-site",
        &with(&b2(), "south = 10 }", "south = 10, west = 2 }"),
        &[
            "ready_units.at_least.west",
            "does not define",
            "north, east, south",
        ],
    );
}

#[test]
fn a_number_where_sites_need_a_table() {
    refuses(
        "stock-number",
        &with(
            &b2(),
            "stock = { depot = 1, every_site = 1 } }",
            "stock = 1 }",
        ),
        &["battery_module.stock", "give the stock per site"],
    );
    refuses(
        "search-number",
        &with(
            &b2(),
            "stock = { every_site = { min = 0, max = 4 }, depot = { min = 0, max = 8 } }",
            "stock = { min = 0, max = 4 }",
        ),
        &["search.every_part.stock", "give a range per site"],
    );
}

#[test]
fn a_target_availability_is_needed_without_ready_units() {
    let text = with(
        &b2(),
        "[ready_units]\nat_least = { north = 18, east = 14, south = 10 }\nshare = 0.95\n",
        "",
    );
    refuses(
        "no-target",
        &text,
        &["scenario", "target_availability", "[ready_units]"],
    );
}
