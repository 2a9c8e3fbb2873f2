//! Reading work-order life records from CSV.
//!
//! Owns: the records format (column names, flag spellings, comments) and
//! its error messages, and the grouping of records into one [`Sample`] per
//! part type. May use: `csv`, `std::fs`. The format, copied into the README:
//!
#![doc = include_str!("records_format.md")]

use std::path::Path;

use super::{FitError, Sample};

/// The records format as text (the same text as this module's
/// documentation), for `--help` output and the README.
pub const RECORDS_FORMAT_HELP: &str = include_str!("records_format.md");

/// Accepted names of the hours column, as listed in error messages.
pub const HOURS_COLUMN_NAMES: &str = "hours, age, life, time, operating_hours \
     (or hours_..., age_..., life_..., time_... with a unit or note)";
/// Accepted names of the failed/suspended column.
pub const FLAG_COLUMN_NAMES: &str = "failed, failure, status, event, state (1 = failure); censored, suspended, suspension (1 = suspension)";
/// Accepted names of the optional part-type column.
pub const PART_COLUMN_NAMES: &str = "part, part_type, part_name, component";
/// Accepted flag spellings, as listed in error messages.
pub const FLAG_SPELLINGS: &str = "failure: 1, true, yes, y, F, fail, failed, failure, removed; \
     suspension: 0, false, no, n, S, susp, suspended, suspension, running, censored";

const HOURS_EXACT: [&str; 5] = ["hours", "age", "life", "time", "operating_hours"];
const HOURS_PREFIX: [&str; 4] = ["hours_", "age_", "life_", "time_"];
const FLAG_FAILED_SENSE: [&str; 5] = ["failed", "failure", "status", "event", "state"];
const FLAG_CENSORED_SENSE: [&str; 3] = ["censored", "suspended", "suspension"];
const PART_EXACT: [&str; 4] = ["part", "part_type", "part_name", "component"];

/// Part name given to every record of a file without a part column.
pub const DEFAULT_PART: &str = "all";

/// One record: a part that ran `hours` and then failed, or was removed
/// working or is still running (a suspension).
#[derive(Debug, Clone, PartialEq)]
pub struct Record {
    /// Line of the file the record came from (1-based, counting comments).
    pub line: u64,
    /// Part type ([`DEFAULT_PART`] when the file has no part column).
    pub part: String,
    /// Operating hours, finite and greater than 0.
    pub hours: f64,
    /// `true` for a failure, `false` for a suspension.
    pub failed: bool,
}

/// Read records from a CSV file (see the module documentation for the format).
///
/// # Errors
/// When the file cannot be read or any line breaks the format; the error
/// names the file and line.
pub fn read_records(path: &Path) -> Result<Vec<Record>, FitError> {
    let text = std::fs::read_to_string(path).map_err(|e| FitError::Io {
        path: path.display().to_string(),
        message: e.to_string(),
    })?;
    parse_records(&text, &path.display().to_string())
}

fn normalise(name: &str) -> String {
    name.trim()
        .trim_start_matches('\u{feff}')
        .to_lowercase()
        .replace([' ', '-'], "_")
}

/// Find a column: exact names first, then names starting with a prefix.
fn find_column(
    headers: &[String],
    exact: &[&str],
    prefixes: &[&str],
    what: &'static str,
    file: &str,
) -> Result<Option<usize>, FitError> {
    let pick = |hits: Vec<usize>| -> Result<Option<usize>, FitError> {
        match hits.len() {
            0 => Ok(None),
            1 => Ok(Some(hits[0])),
            _ => Err(FitError::AmbiguousColumn {
                file: file.to_string(),
                column: what,
                candidates: hits
                    .iter()
                    .map(|&i| format!("'{}'", headers[i]))
                    .collect::<Vec<_>>()
                    .join(", "),
            }),
        }
    };
    let exact_hits: Vec<usize> = (0..headers.len())
        .filter(|&i| exact.contains(&normalise(&headers[i]).as_str()))
        .collect();
    if !exact_hits.is_empty() {
        return pick(exact_hits);
    }
    let prefix_hits: Vec<usize> = (0..headers.len())
        .filter(|&i| {
            let h = normalise(&headers[i]);
            prefixes
                .iter()
                .any(|p| h.starts_with(p) && h.len() > p.len())
        })
        .collect();
    pick(prefix_hits)
}

/// What a flag cell says, before the column's sense is applied.
enum Flag {
    /// A yes/no answer (`1`, `true`, `yes`, ...), read by the column's sense.
    Answer(bool),
    /// A word with its own meaning: `true` for a failure.
    Word(bool),
}

fn parse_flag(cell: &str) -> Option<Flag> {
    let v = cell.trim().to_lowercase();
    match v.as_str() {
        "1" | "true" | "yes" | "y" => Some(Flag::Answer(true)),
        "0" | "false" | "no" | "n" => Some(Flag::Answer(false)),
        "f" | "fail" | "failed" | "failure" | "removed" => Some(Flag::Word(true)),
        "s" | "susp" | "suspended" | "suspension" | "running" | "censored" => {
            Some(Flag::Word(false))
        }
        _ => None,
    }
}

fn missing(
    file: &str,
    column: &'static str,
    allowed: &'static str,
    headers: &[String],
) -> FitError {
    FitError::MissingColumn {
        file: file.to_string(),
        column,
        allowed,
        found: if headers.is_empty() {
            "none".to_string()
        } else {
            headers
                .iter()
                .map(|h| format!("'{h}'"))
                .collect::<Vec<_>>()
                .join(", ")
        },
    }
}

/// 1-based line number of the record that the reader places at byte
/// offset `byte` of `text`. The reader's offset can point at comment or
/// empty lines it skipped before the record, so those are stepped over.
fn line_of(text: &str, byte: u64) -> u64 {
    let end = usize::try_from(byte).unwrap_or(usize::MAX).min(text.len());
    let mut line = 1 + text.as_bytes()[..end]
        .iter()
        .filter(|&&b| b == b'\n')
        .count() as u64;
    let rest = text.get(end..).unwrap_or("");
    for l in rest.lines() {
        if l.starts_with('#') || l.trim().is_empty() {
            line += 1;
        } else {
            break;
        }
    }
    line
}

/// Parse records from CSV text; `file` names the source in error messages.
///
/// # Errors
/// See [`read_records`].
pub fn parse_records(text: &str, file: &str) -> Result<Vec<Record>, FitError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    // The header is the first line that is neither empty nor a comment.
    let header_line = text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'))
        .unwrap_or("");
    let delimiter = if !header_line.contains(',') && header_line.contains(';') {
        b';'
    } else if !header_line.contains(',') && header_line.contains('\t') {
        b'\t'
    } else {
        b','
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .comment(Some(b'#'))
        .delimiter(delimiter)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());

    let mut headers: Option<Vec<String>> = None;
    let mut columns: Option<(usize, (usize, bool), Option<usize>)> = None;
    let mut out = Vec::new();
    for row in reader.records() {
        let row = row.map_err(|e| FitError::Csv {
            file: file.to_string(),
            line: e.position().map_or(0, |p| line_of(text, p.byte())),
            message: e.to_string(),
        })?;
        // The reader's own line count skips comment lines, so count
        // newlines up to the record's first byte instead.
        let line = row.position().map_or(0, |p| line_of(text, p.byte()));
        if row.iter().all(|c| c.trim().is_empty()) {
            continue;
        }
        let Some((hours_col, (flag_col, censored_sense), part_col)) = columns else {
            let h: Vec<String> = row.iter().map(|c| c.trim().to_string()).collect();
            let hours = find_column(&h, &HOURS_EXACT, &HOURS_PREFIX, "hours", file)?
                .ok_or_else(|| missing(file, "hours", HOURS_COLUMN_NAMES, &h))?;
            let failed = find_column(&h, &FLAG_FAILED_SENSE, &[], "failed/suspended", file)?;
            let censored = find_column(&h, &FLAG_CENSORED_SENSE, &[], "failed/suspended", file)?;
            let flag = match (failed, censored) {
                (Some(a), Some(b)) => {
                    return Err(FitError::AmbiguousColumn {
                        file: file.to_string(),
                        column: "failed/suspended",
                        candidates: format!("'{}', '{}'", h[a], h[b]),
                    });
                }
                (Some(a), None) => (a, false),
                (None, Some(b)) => (b, true),
                (None, None) => {
                    return Err(missing(file, "failed/suspended", FLAG_COLUMN_NAMES, &h));
                }
            };
            let part = find_column(&h, &PART_EXACT, &[], "part", file)?;
            columns = Some((hours, flag, part));
            headers = Some(h);
            continue;
        };
        let names = headers.as_deref().unwrap_or(&[]);
        let col_name = |i: usize| names.get(i).cloned().unwrap_or_default();
        let hours_cell = row.get(hours_col).unwrap_or("").trim();
        let hours: f64 = match hours_cell.parse::<f64>() {
            Ok(v) if v.is_finite() => v,
            _ => {
                return Err(FitError::BadNumber {
                    file: file.to_string(),
                    line,
                    column: col_name(hours_col),
                    value: hours_cell.to_string(),
                });
            }
        };
        if hours <= 0.0 {
            return Err(FitError::NonPositiveHours {
                file: file.to_string(),
                line,
                value: hours,
            });
        }
        let flag_cell = row.get(flag_col).unwrap_or("").trim();
        let failed = match parse_flag(flag_cell) {
            Some(Flag::Answer(yes)) => yes != censored_sense,
            Some(Flag::Word(failed)) => failed,
            None => {
                return Err(FitError::UnknownFlag {
                    file: file.to_string(),
                    line,
                    column: col_name(flag_col),
                    value: flag_cell.to_string(),
                    allowed: FLAG_SPELLINGS,
                });
            }
        };
        let part = match part_col {
            Some(c) => {
                let p = row.get(c).unwrap_or("").trim();
                if p.is_empty() {
                    return Err(FitError::EmptyPart {
                        file: file.to_string(),
                        line,
                        column: col_name(c),
                    });
                }
                p.to_string()
            }
            None => DEFAULT_PART.to_string(),
        };
        out.push(Record {
            line,
            part,
            hours,
            failed,
        });
    }
    if columns.is_none() {
        return Err(missing(file, "hours", HOURS_COLUMN_NAMES, &[]));
    }
    if out.is_empty() {
        return Err(FitError::NoRecords {
            file: file.to_string(),
        });
    }
    Ok(out)
}

/// Group records into one sample per part type, in order of first appearance.
pub fn samples_by_part(records: &[Record]) -> Vec<Sample> {
    let mut order: Vec<String> = Vec::new();
    let mut groups: std::collections::HashMap<&str, (Vec<f64>, Vec<f64>)> =
        std::collections::HashMap::new();
    for r in records {
        let g = groups.entry(r.part.as_str()).or_insert_with(|| {
            order.push(r.part.clone());
            (Vec::new(), Vec::new())
        });
        if r.failed {
            g.0.push(r.hours);
        } else {
            g.1.push(r.hours);
        }
    }
    order
        .into_iter()
        .filter_map(|p| {
            let (f, s) = groups.remove(p.as_str())?;
            Sample::new(&p, f, s).ok()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_columns_flags_comments_and_lines() {
        let text = "# a comment\n\nPart Type,Operating Hours,Status,notes\n\
                    fan,120,failed,x\n# mid comment\nfan,300, S ,\npump,50,1,\npump,75.5,running,\n";
        let r = parse_records(text, "t.csv").unwrap();
        assert_eq!(r.len(), 4);
        assert_eq!(r[0].part, "fan");
        assert!(r[0].failed && !r[1].failed && r[2].failed && !r[3].failed);
        assert_eq!(r[0].line, 4);
        assert_eq!(r[1].line, 6);
        assert_eq!(r[3].hours, 75.5);
        let s = samples_by_part(&r);
        assert_eq!(s.len(), 2);
        assert_eq!(s[1].part(), "pump");
        assert_eq!(s[1].failures(), &[50.0]);
    }

    #[test]
    fn censored_column_turns_answers_round() {
        let text = "hours,censored\n10,1\n20,0\n30,F\n40,suspended\n";
        let r = parse_records(text, "t.csv").unwrap();
        let flags: Vec<bool> = r.iter().map(|x| x.failed).collect();
        assert_eq!(flags, vec![false, true, true, false]);
        assert_eq!(r[0].part, DEFAULT_PART);
    }

    #[test]
    fn semicolon_and_unit_suffix() {
        let text = "life_mrev;failed\n17.88;1\n28.92;yes\n";
        let r = parse_records(text, "t.csv").unwrap();
        assert_eq!(r.len(), 2);
        assert!(r.iter().all(|x| x.failed));
    }

    #[test]
    fn errors_name_the_line_and_the_problem() {
        let e = parse_records("hours,failed\n10,1\nabc,0\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::BadNumber { line: 3, .. }), "{e}");
        assert!(e.to_string().contains("w.csv") && e.to_string().contains("line 3"));
        let e = parse_records("hours,failed\n10,1\n-5,0\n", "w.csv").unwrap_err();
        assert!(
            matches!(e, FitError::NonPositiveHours { line: 3, .. }),
            "{e}"
        );
        let e = parse_records("hours,failed\n0,1\n", "w.csv").unwrap_err();
        assert!(
            matches!(e, FitError::NonPositiveHours { line: 2, .. }),
            "{e}"
        );
        let e = parse_records("hours,failed\n10,maybe\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::UnknownFlag { line: 2, .. }), "{e}");
        assert!(e.to_string().contains("suspended"), "{e}");
        let e = parse_records("hours,when\n10,1\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::MissingColumn { .. }), "{e}");
        assert!(e.to_string().contains("'when'"), "{e}");
        let e = parse_records("age,hours,failed\n10,1,1\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::AmbiguousColumn { .. }), "{e}");
        let e = parse_records("# only\nhours,failed\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::NoRecords { .. }), "{e}");
        let e = parse_records("", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::MissingColumn { .. }), "{e}");
        let e = parse_records("hours,failed\ninf,1\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::BadNumber { .. }), "{e}");
        // Line numbers count comment and empty lines.
        let e =
            parse_records("# c\nhours,failed\n# c\n\n10,1\n\"1,250\",0\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::BadNumber { line: 6, .. }), "{e}");
        let e = parse_records("\u{feff}hours,failed\n10,1\n# c\n-1,1\n", "w.csv").unwrap_err();
        assert!(
            matches!(e, FitError::NonPositiveHours { line: 4, .. }),
            "{e}"
        );
        let e = parse_records("hours,failed\n12\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::UnknownFlag { .. }), "{e}");
    }

    #[test]
    fn help_text_lists_every_spelling() {
        for s in FLAG_SPELLINGS
            .split([':', ';', ','])
            .map(str::trim)
            .filter(|s| !s.is_empty() && *s != "failure" && *s != "suspension")
        {
            assert!(parse_flag(s).is_some(), "{s} in the help but not accepted");
            assert!(
                RECORDS_FORMAT_HELP.contains(&format!("`{s}`")),
                "{s} missing from help"
            );
        }
    }
}
