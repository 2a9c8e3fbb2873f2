//! Terminal tables: percentages and padded columns (numbers and money
//! come from `crate::text`).

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
