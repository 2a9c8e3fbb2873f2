//! CSV text as spreadsheets write it: the one layer under the records,
//! removal-log and meter-table readers.
//!
//! Owns: decoding the bytes (UTF-8 with or without a byte-order mark,
//! UTF-16 with one, and Latin-1 for files that are not UTF-8), choosing
//! the separator (comma, semicolon or tab), CRLF line ends, comment and
//! empty lines, line numbers that count every line, column matching, and
//! reading numbers (decimal commas in semicolon and tab files; dates and
//! thousands separators recognised and refused with a hint).
//! May use: `csv`, `std::fs`.

use std::path::Path;

use super::FitError;

/// A table: its header cells and its data rows with their line numbers.
#[derive(Debug, Clone)]
pub(crate) struct Table {
    /// The file's name, for messages.
    pub file: String,
    /// Header cells, trimmed.
    pub headers: Vec<String>,
    /// Data rows (not empty, not comments).
    pub rows: Vec<Row>,
    /// True when a decimal comma is read as a decimal point (semicolon or
    /// tab separated files).
    pub decimal_comma: bool,
}

/// One data row.
#[derive(Debug, Clone)]
pub(crate) struct Row {
    /// 1-based line of the file, counting comment and empty lines.
    pub line: u64,
    /// Cells, trimmed.
    pub cells: Vec<String>,
}

impl Row {
    /// The cell of column `c` (empty when the row is short).
    pub fn get(&self, c: Option<usize>) -> &str {
        c.and_then(|c| self.cells.get(c)).map_or("", String::as_str)
    }
}

/// Read a file's text (see the module documentation for the encodings).
pub(crate) fn read_text(path: &Path) -> Result<String, FitError> {
    let bytes = std::fs::read(path).map_err(|e| FitError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    })?;
    Ok(decode(&bytes))
}

/// Bytes to text: UTF-16 (little or big endian) when it starts with its
/// byte-order mark, UTF-8 when valid (a byte-order mark dropped), else
/// Latin-1 (each byte one character).
pub(crate) fn decode(bytes: &[u8]) -> String {
    let utf16 = |le: bool| {
        let units: Vec<u16> = bytes[2..]
            .chunks_exact(2)
            .map(|c| {
                if le {
                    u16::from_le_bytes([c[0], c[1]])
                } else {
                    u16::from_be_bytes([c[0], c[1]])
                }
            })
            .collect();
        String::from_utf16_lossy(&units)
    };
    match bytes {
        [0xff, 0xfe, ..] => utf16(true),
        [0xfe, 0xff, ..] => utf16(false),
        _ => match std::str::from_utf8(bytes) {
            Ok(s) => s.strip_prefix('\u{feff}').unwrap_or(s).to_string(),
            Err(_) => bytes.iter().map(|&b| b as char).collect(),
        },
    }
}

/// A column name as matched: trimmed, lower case, a byte-order mark
/// dropped, spaces and `-` read as `_`.
pub(crate) fn normalise(name: &str) -> String {
    name.trim()
        .trim_start_matches('\u{feff}')
        .to_lowercase()
        .replace([' ', '-'], "_")
}

/// Byte offsets of every newline of a text, to turn the reader's byte
/// offsets into line numbers in logarithmic time (counting newlines from
/// the start for every record made a 200 000-row file take minutes).
struct Newlines<'a> {
    text: &'a str,
    at: Vec<usize>,
}

impl<'a> Newlines<'a> {
    fn new(text: &'a str) -> Self {
        let at = text
            .bytes()
            .enumerate()
            .filter_map(|(i, b)| (b == b'\n').then_some(i))
            .collect();
        Newlines { text, at }
    }

    /// 1-based line number of the record that the reader places at byte
    /// offset `byte`. The reader's offset can point at comment or empty
    /// lines it skipped before the record, so those are stepped over.
    fn line_of(&self, byte: u64) -> u64 {
        let end = usize::try_from(byte)
            .unwrap_or(usize::MAX)
            .min(self.text.len());
        let mut line = 1 + self.at.partition_point(|&i| i < end) as u64;
        let rest = self.text.get(end..).unwrap_or("");
        for l in rest.lines() {
            if l.starts_with('#') || l.trim().is_empty() {
                line += 1;
            } else {
                break;
            }
        }
        line
    }
}

/// The separator of a header line: the most frequent of comma, semicolon
/// and tab outside quotes (comma on a tie).
fn separator(header: &str) -> u8 {
    let mut n = [0usize; 3];
    let mut quoted = false;
    for c in header.chars() {
        match c {
            '"' => quoted = !quoted,
            ',' if !quoted => n[0] += 1,
            ';' if !quoted => n[1] += 1,
            '\t' if !quoted => n[2] += 1,
            _ => {}
        }
    }
    if n[1] > n[0] && n[1] >= n[2] {
        b';'
    } else if n[2] > n[0] && n[2] > n[1] {
        b'\t'
    } else {
        b','
    }
}

/// Parse CSV text into a [`Table`]: the first line that is neither empty
/// nor a comment (`#` first) is the header.
pub(crate) fn parse_table(text: &str, file: &str) -> Result<Table, FitError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let header_line = text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .unwrap_or("");
    let delimiter = separator(header_line);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .comment(Some(b'#'))
        .delimiter(delimiter)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let newlines = Newlines::new(text);
    let mut headers: Option<Vec<String>> = None;
    let mut rows = Vec::new();
    for row in reader.records() {
        let row = row.map_err(|e| FitError::Csv {
            file: file.to_string(),
            line: e.position().map_or(0, |p| newlines.line_of(p.byte())),
            message: e.to_string(),
        })?;
        // The reader's own line count skips comment lines, so count
        // newlines up to the record's first byte instead.
        let line = row.position().map_or(0, |p| newlines.line_of(p.byte()));
        if row.iter().all(|c| c.trim().is_empty()) {
            continue;
        }
        let cells: Vec<String> = row.iter().map(|c| c.trim().to_string()).collect();
        if headers.is_none() {
            headers = Some(cells);
        } else {
            rows.push(Row { line, cells });
        }
    }
    Ok(Table {
        file: file.to_string(),
        headers: headers.unwrap_or_default(),
        rows,
        decimal_comma: delimiter != b',',
    })
}

impl Table {
    /// The header cells quoted and joined, or `none`, for messages.
    pub fn found(&self) -> String {
        if self.headers.is_empty() {
            "none".to_string()
        } else {
            self.headers
                .iter()
                .map(|h| format!("'{h}'"))
                .collect::<Vec<_>>()
                .join(", ")
        }
    }

    /// The column whose name is one of `exact`, else the one whose name
    /// starts with one of `prefixes` (and is longer), skipping columns in
    /// `taken`. Two matches are an error.
    pub fn column(
        &self,
        exact: &[&str],
        prefixes: &[&str],
        taken: &[usize],
        what: &'static str,
    ) -> Result<Option<usize>, FitError> {
        let h = &self.headers;
        let pick = |hits: Vec<usize>| -> Result<Option<usize>, FitError> {
            match hits.len() {
                0 => Ok(None),
                1 => Ok(Some(hits[0])),
                _ => Err(FitError::AmbiguousColumn {
                    file: self.file.clone(),
                    column: what,
                    candidates: hits
                        .iter()
                        .map(|&i| format!("'{}'", h[i]))
                        .collect::<Vec<_>>()
                        .join(", "),
                }),
            }
        };
        let free = |i: &usize| !taken.contains(i);
        let exact_hits: Vec<usize> = (0..h.len())
            .filter(free)
            .filter(|&i| exact.contains(&normalise(&h[i]).as_str()))
            .collect();
        if !exact_hits.is_empty() {
            return pick(exact_hits);
        }
        let prefix_hits: Vec<usize> = (0..h.len())
            .filter(free)
            .filter(|&i| {
                let n = normalise(&h[i]);
                prefixes
                    .iter()
                    .any(|p| n.starts_with(p) && n.len() > p.len())
            })
            .collect();
        pick(prefix_hits)
    }

    /// A missing-column error.
    pub fn missing(&self, column: &'static str, allowed: &'static str) -> FitError {
        FitError::MissingColumn {
            file: self.file.clone(),
            column,
            allowed,
            found: self.found(),
        }
    }

    /// The header name of column `c`.
    pub fn name(&self, c: Option<usize>) -> String {
        c.and_then(|c| self.headers.get(c))
            .cloned()
            .unwrap_or_default()
    }

    /// A bad-row error at `line`.
    pub fn bad(&self, line: u64, message: impl Into<String>) -> FitError {
        FitError::BadRow {
            file: self.file.clone(),
            line,
            message: message.into(),
        }
    }

    /// The number in `row`'s cell of column `c`, hours; `None` for an
    /// empty cell. A cell that is not a finite number is an error naming
    /// the line, the column and what the cell looks like.
    pub fn hours(&self, row: &Row, c: Option<usize>) -> Result<Option<f64>, FitError> {
        let cell = row.get(c);
        if cell.is_empty() {
            return Ok(None);
        }
        parse_number(cell, self.decimal_comma)
            .map(Some)
            .map_err(|hint| FitError::BadNumber {
                file: self.file.clone(),
                line: row.line,
                column: self.name(c),
                value: cell.to_string(),
                hint,
            })
    }
}

/// True when `s` looks like a calendar date or a date and time
/// (`2024-03-01`, `01/03/2024`, `1.3.2024`, `2024-03-01 14:00`).
fn looks_like_date(s: &str) -> bool {
    let head = s.split([' ', 'T']).next().unwrap_or("");
    let parts: Vec<&str> = head.split(['-', '/', '.']).collect();
    parts.len() == 3
        && parts
            .iter()
            .all(|p| !p.is_empty() && p.len() <= 4 && p.chars().all(|c| c.is_ascii_digit()))
        && parts
            .iter()
            .any(|p| p.len() == 4 || head.contains(['-', '/']))
}

/// A finite number from a cell: `1250`, `1250.5`, `1.25e3`; with
/// `decimal_comma`, `1250,5` too. Errors carry what is allowed and what
/// the cell looks like, starting with "; ".
pub(crate) fn parse_number(cell: &str, decimal_comma: bool) -> Result<f64, String> {
    let c = cell.trim();
    let swapped;
    let text = if decimal_comma && c.matches(',').count() == 1 && !c.contains('.') {
        swapped = c.replace(',', ".");
        swapped.as_str()
    } else {
        c
    };
    if let Ok(v) = text.parse::<f64>()
        && v.is_finite()
    {
        return Ok(v);
    }
    let allowed = "allowed: a number of hours such as 1250 or 1250.5";
    Err(if looks_like_date(c) {
        format!(
            "; it looks like a date: give hours (the unit's hour-meter reading, or the part's \
             age in hours), not a calendar date; {allowed}"
        )
    } else if c.contains(':') {
        format!("; it looks like a time of day, not a number of hours; {allowed}")
    } else if c.contains(',') {
        format!(
            "; write numbers without thousands separators and with a decimal point (a decimal \
             comma is read only in files separated by semicolons or tabs); {allowed}"
        )
    } else {
        format!("; {allowed}")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separators_encodings_and_line_ends() {
        let t = parse_table("\u{feff}a;b\r\n1,5;2\r\n# c\r\n\r\n3;4\r\n", "f").unwrap();
        assert_eq!(t.headers, vec!["a", "b"]);
        assert!(t.decimal_comma);
        assert_eq!(t.rows.len(), 2);
        assert_eq!(t.rows[1].line, 5);
        assert_eq!(t.hours(&t.rows[0], Some(0)).unwrap(), Some(1.5));
        let t = parse_table("a\tb\n1\t2\n", "f").unwrap();
        assert_eq!(t.rows[0].cells, vec!["1", "2"]);
        // UTF-16 little endian with its mark, and Latin-1.
        let mut b = vec![0xff, 0xfe];
        for u in "x,y\n1,2\n".encode_utf16() {
            b.extend(u.to_le_bytes());
        }
        assert_eq!(decode(&b), "x,y\n1,2\n");
        assert_eq!(decode(&[b'p', 0xe9]), "p\u{e9}");
    }

    #[test]
    fn numbers_dates_and_separators() {
        assert_eq!(parse_number("1.25e3", false), Ok(1250.0));
        assert_eq!(parse_number("1250,5", true), Ok(1250.5));
        assert!(
            parse_number("1,250", false)
                .unwrap_err()
                .contains("thousands")
        );
        for d in [
            "2024-03-01",
            "01/03/2024",
            "1.3.2024",
            "2024-03-01 14:00",
            "3/1/24",
        ] {
            assert!(parse_number(d, false).unwrap_err().contains("date"), "{d}");
        }
        assert!(parse_number("12:30", false).unwrap_err().contains("time"));
        assert!(parse_number("inf", false).is_err());
        assert!(parse_number("nan", false).is_err());
        assert!(!parse_number("1.2.3.4", false).unwrap_err().contains("date"));
    }
}
