//! Bad input in the `[money]` keys (issue 16, item 6): each mistake is
//! refused by `wearout check` with exit status 2 and one message naming the
//! file, the line, the field path and what is allowed; never a panic.

mod common;

use common::{check_refuses, check_text, scenario_text};

/// One broken scenario: exit 2, one message with the file, a line number,
/// and every needle.
fn refuses(tag: &str, text: &str, needles: &[&str]) {
    let err = check_refuses(tag, text, needles);
    assert!(
        err.contains(&format!("{tag}.toml:")),
        "{tag}: no file and line in {err}"
    );
}

/// B2 with one line of its `[money]` table replaced.
fn b2_with(from: &str, to: &str) -> String {
    let text = scenario_text("b2");
    assert!(text.contains(from), "fixture text `{from}` not in b2");
    text.replacen(from, to, 1)
}

#[test]
fn b2_with_money_is_valid() {
    let (code, err) = check_text("money-ok", &scenario_text("b2"));
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn zero_or_negative_hours_per_year() {
    for (tag, v) in [("hours-zero", "0"), ("hours-negative", "-4000")] {
        refuses(
            tag,
            &b2_with("hours_per_year = 4000", &format!("hours_per_year = {v}")),
            &["money.hours_per_year", "greater than 0"],
        );
    }
}

#[test]
fn hours_per_year_missing() {
    refuses(
        "hours-missing",
        &b2_with("hours_per_year = 4000\n", ""),
        &["money", "hours_per_year"],
    );
}

#[test]
fn discount_rate_of_minus_100_percent_or_below_or_nan() {
    for (tag, v) in [
        ("rate-minus-one", "-1.0"),
        ("rate-below", "-1.5"),
        ("rate-nan", "nan"),
        ("rate-inf", "inf"),
    ] {
        refuses(
            tag,
            &b2_with("discount_rate = 0.06", &format!("discount_rate = {v}")),
            &["money.discount_rate", "above -1 (-100 %)"],
        );
    }
}

#[test]
fn negative_budget() {
    refuses(
        "budget-negative",
        &b2_with("yearly_budget = 750000", "yearly_budget = -1"),
        &["money.yearly_budget", "0 or more"],
    );
    refuses(
        "part-budget-negative",
        &b2_with(
            "yearly_budget = 750000",
            "yearly_budget = 750000\nyearly_budget_by_part = { traction_motor = -5 }",
        ),
        &["money.yearly_budget_by_part.traction_motor", "0 or more"],
    );
}

#[test]
fn part_budget_naming_a_missing_part_type() {
    refuses(
        "part-budget-name",
        &b2_with(
            "yearly_budget = 750000",
            "yearly_budget = 750000\nyearly_budget_by_part = { traction_moter = 5 }",
        ),
        &["traction_moter", "did you mean `traction_motor`?"],
    );
}

#[test]
fn unknown_money_key() {
    refuses(
        "money-typo",
        &b2_with("yearly_budget = 750000", "yearly_budjet = 750000"),
        &["unknown field `yearly_budjet`", "yearly_budget"],
    );
}

#[test]
fn pv_spend_without_money() {
    let b0 = scenario_text("b0");
    assert!(b0.contains("cost = \"spend\""));
    refuses(
        "pv-without-money",
        &b0.replacen("cost = \"spend\"", "cost = \"pv_spend\"", 1),
        &["search.cost", "needs a [money] table"],
    );
}
