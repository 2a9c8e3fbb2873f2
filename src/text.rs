//! Words and number formats shared by the terminal's tables and the
//! reports: numbers with thousands separators, money and its currency, and
//! the caution every result carries.
//!
//! Owns: one home for each of these, so the terminal and the report never
//! disagree on how a figure or the caution reads.
//! May use: nothing else of the crate.

/// The caution printed with every result and carried by every report.
pub const CAUTION: &str = "wearout is decision support only. Its figures come from a model of the \
fleet and are only as good as the lives, lead times and costs it was given. They do not replace \
regulator-approved maintenance programmes, manufacturers' hard life limits, local codes or the \
judgement of licensed engineers. Safety-critical parts are never planned to run to failure.";

/// A number with thousands separators and `decimals` decimals:
/// `1,234,567.8`; `-` for a figure that is not a number or infinite.
pub fn num(x: f64, decimals: usize) -> String {
    if !x.is_finite() {
        return "-".to_string();
    }
    let s = format!("{:.*}", decimals, x.abs());
    let (int, frac) = match s.find('.') {
        Some(i) => (&s[..i], &s[i..]),
        None => (s.as_str(), ""),
    };
    let mut out = String::new();
    for (i, ch) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(ch);
    }
    // No sign on a figure that rounds to zero.
    let sign = if x < 0.0 && s.chars().any(|ch| ch != '0' && ch != '.') {
        "-"
    } else {
        ""
    };
    format!("{sign}{out}{frac}")
}

/// `before`, the currency and `after` (` (EUR)` from `" ("` and `")"`),
/// or nothing when the scenario names no currency.
pub fn currency(currency: &str, before: &str, after: &str) -> String {
    if currency.is_empty() {
        String::new()
    } else {
        format!("{before}{currency}{after}")
    }
}

/// Money in whole units with separators: `2,791,450`.
pub fn money(x: f64) -> String {
    num(x, 0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separators_signs_and_figures_that_are_not_numbers() {
        assert_eq!(num(1234567.891, 1), "1,234,567.9");
        assert_eq!(num(1234567.0, 0), "1,234,567");
        assert_eq!(num(-999.0, 0), "-999");
        assert_eq!(num(-0.004, 2), "0.00");
        assert_eq!(num(12.0, 0), "12");
        assert_eq!(num(f64::NAN, 1), "-");
        assert_eq!(num(f64::INFINITY, 0), "-");
        assert_eq!(money(2_791_450.4), "2,791,450");
        assert_eq!(currency("EUR", " (", ")"), " (EUR)");
        assert_eq!(currency("", " (", ")"), "");
    }
}
