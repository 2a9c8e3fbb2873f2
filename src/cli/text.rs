//! Number formatting for tables people read.

/// A number with thousands separators and `decimals` decimals: 1,234,567.8.
pub fn num(x: f64, decimals: usize) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    let s = format!("{:.*}", decimals, x.abs());
    let (int, frac) = match s.find('.') {
        Some(i) => (&s[..i], &s[i..]),
        None => (s.as_str(), ""),
    };
    let mut out = String::new();
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    let sign = if x < 0.0 && s.chars().any(|c| c != '0' && c != '.') {
        "-"
    } else {
        ""
    };
    format!("{sign}{out}{frac}")
}

/// Money: whole units with separators.
pub fn money(x: f64) -> String {
    num(x, 0)
}

/// A share as a percentage with one decimal: 91.4 %.
pub fn pct(x: f64) -> String {
    format!("{:.1} %", 100.0 * x)
}

/// A share as a percentage with two decimals.
pub fn pct2(x: f64) -> String {
    format!("{:.2} %", 100.0 * x)
}

/// Left-aligned table rows with columns padded to their widest cell.
pub fn table(rows: &[Vec<String>]) -> String {
    let cols = rows.iter().map(Vec::len).max().unwrap_or(0);
    let mut width = vec![0; cols];
    for r in rows {
        for (i, c) in r.iter().enumerate() {
            width[i] = width[i].max(c.chars().count());
        }
    }
    let mut out = String::new();
    for r in rows {
        let mut line = String::new();
        for (i, c) in r.iter().enumerate() {
            let pad = width[i] - c.chars().count();
            if i == 0 {
                line.push_str(c);
                line.push_str(&" ".repeat(pad));
            } else {
                line.push_str("  ");
                line.push_str(&" ".repeat(pad));
                line.push_str(c);
            }
        }
        out.push_str(line.trim_end());
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separators() {
        assert_eq!(num(1234567.891, 1), "1,234,567.9");
        assert_eq!(num(-999.0, 0), "-999");
        assert_eq!(num(12.0, 0), "12");
    }
}
