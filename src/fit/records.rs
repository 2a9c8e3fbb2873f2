//! Reading life records from CSV.
//!
//! Owns: the records format (column names, kind spellings, inspection
//! intervals, entry ages, counts) and its error messages, telling a
//! records file from a removal log, and the grouping of records into one
//! [`Sample`] per part type. May use: `super::csvtext`,
//! `super::removals`, `super::sample`. The format, copied into the README:
//!
#![doc = include_str!("records_format.md")]

use std::path::Path;

use super::FitError;
use super::csvtext::{Row, Table, parse_table, read_text};
use super::removals::{self, LogSummary};
use super::sample::{MAX_COUNT, Obs, Observed, Sample};

/// The records format as text (the same text as this module's
/// documentation), for `--help` output and the README.
pub const RECORDS_FORMAT_HELP: &str = include_str!("records_format.md");

/// Accepted names of the life column.
pub const HOURS_COLUMN_NAMES: &str = "life, hours, age, time, operating_hours \
     (or hours_..., age_..., life_..., time_... with a unit or note)";
/// Accepted names of the kind column.
pub const FLAG_COLUMN_NAMES: &str = "kind, failed, failure, status, event, state (1 = failure); \
     censored, suspended, suspension (1 = suspension)";
/// Accepted names of the optional part-type column.
pub const PART_COLUMN_NAMES: &str = "part, part_type, part_name, component";
/// What a records file needs, for the message when neither is there.
pub const LIFE_OR_INTERVAL: &str = "a life column (life, hours, age, time, operating_hours, \
     or hours_... with a unit) with a kind column (kind, failed, status, ...), or an \
     inspection interval in the columns after and before";
/// Accepted kind spellings, as listed in error messages.
pub const FLAG_SPELLINGS: &str = "failure: 1, true, yes, y, F, fail, failed, failure, removed; \
     suspension: 0, false, no, n, S, susp, suspended, suspension, running, censored; \
     found at an inspection (with after and before): interval, found";

const HOURS_EXACT: [&str; 5] = ["life", "hours", "age", "time", "operating_hours"];
const HOURS_PREFIX: [&str; 4] = ["hours_", "age_", "life_", "time_"];
const FLAG_FAILED_SENSE: [&str; 6] = ["kind", "failed", "failure", "status", "event", "state"];
const FLAG_CENSORED_SENSE: [&str; 3] = ["censored", "suspended", "suspension"];
const PART_EXACT: [&str; 4] = ["part", "part_type", "part_name", "component"];
const AFTER_EXACT: [&str; 2] = ["after", "last_good"];
const BEFORE_EXACT: [&str; 2] = ["before", "found_at"];
const ENTRY_EXACT: [&str; 4] = ["entry_age", "entry", "age_at_entry", "entered_at"];
const COUNT_EXACT: [&str; 5] = ["count", "number", "quantity", "qty", "n"];

/// Part name given to every record of a file without a part column.
pub const DEFAULT_PART: &str = "all";

/// One record: what is known of the life of `count` parts of one type.
#[derive(Debug, Clone, PartialEq)]
pub struct Record {
    /// Line of the file the record came from (1-based, counting comments).
    pub line: u64,
    /// Part type ([`DEFAULT_PART`] when the file has no part column).
    pub part: String,
    /// The observation (life or interval, entry age, count).
    pub obs: Obs,
}

/// Where records came from, for reports.
#[derive(Debug, Clone, PartialEq)]
pub struct RecordsSource {
    /// The file read.
    pub file: String,
    /// The current-meter file, for a removal log.
    pub meters: Option<String>,
    /// What a removal log turned into, when the file was one.
    pub log: Option<LogSummary>,
    /// Data rows read.
    pub rows: usize,
}

/// Read records from a CSV file (see the module documentation for the format).
///
/// # Errors
/// When the file cannot be read or any line breaks the format; the error
/// names the file and line.
pub fn read_records(path: &Path) -> Result<Vec<Record>, FitError> {
    parse_records(&read_text(path)?, &path.display().to_string())
}

/// Read a records file or a removal log (told apart by its columns: a
/// removal log has a `fitted_at` column), with the current meter readings
/// of a log's units from `meters` when given.
///
/// # Errors
/// As [`read_records`], and the removal-log refusals of [`removals`]; a meters file given
/// with a records file is refused.
pub fn read_records_or_log(
    path: &Path,
    meters: Option<&Path>,
) -> Result<(Vec<Record>, RecordsSource), FitError> {
    let file = path.display().to_string();
    let text = read_text(path)?;
    let table = parse_table(&text, &file)?;
    if removals::is_removal_log(&table) {
        let meter_table = match meters {
            Some(m) => Some(parse_table(&read_text(m)?, &m.display().to_string())?),
            None => None,
        };
        let (records, summary) = removals::parse_log(&table, meter_table.as_ref())?;
        let rows = table.rows.len();
        return Ok((
            records,
            RecordsSource {
                file,
                meters: meters.map(|m| m.display().to_string()),
                log: Some(summary),
                rows,
            },
        ));
    }
    if let Some(m) = meters {
        return Err(FitError::BadRow {
            file: file.clone(),
            line: 1,
            message: format!(
                "a meters file ({}) was given, but this is a records file, not a removal log \
                 (a removal log has the columns unit, fitted_at, removed_at, reason); leave the \
                 meters file out, or give the removal log",
                m.display()
            ),
        });
    }
    let rows = table.rows.len();
    let records = records_of(&table)?;
    Ok((
        records,
        RecordsSource {
            file,
            meters: None,
            log: None,
            rows,
        },
    ))
}

/// What a kind cell says, before the column's sense is applied.
enum Flag {
    /// A yes/no answer (`1`, `true`, `yes`, ...), read by the column's sense.
    Answer(bool),
    /// A word with its own meaning: `true` for a failure.
    Word(bool),
    /// A failure found at an inspection (needs after and before).
    Found,
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
        "interval" | "found" => Some(Flag::Found),
        _ => None,
    }
}

/// The columns of a records file.
struct Columns {
    life: Option<usize>,
    /// The kind column and whether its yes/no answers mean "suspension".
    kind: Option<(usize, bool)>,
    part: Option<usize>,
    after: Option<usize>,
    before: Option<usize>,
    entry: Option<usize>,
    count: Option<usize>,
}

fn columns(t: &Table) -> Result<Columns, FitError> {
    let part = t.column(&PART_EXACT, &[], &[], "part")?;
    let after = t.column(&AFTER_EXACT, &[], &[], "after")?;
    let before = t.column(&BEFORE_EXACT, &[], &[], "before")?;
    let entry = t.column(&ENTRY_EXACT, &[], &[], "entry age")?;
    let count = t.column(&COUNT_EXACT, &[], &[], "count")?;
    let failed = t.column(&FLAG_FAILED_SENSE, &[], &[], "kind")?;
    let censored = t.column(&FLAG_CENSORED_SENSE, &[], &[], "kind")?;
    let kind = match (failed, censored) {
        (Some(a), Some(b)) => {
            return Err(FitError::AmbiguousColumn {
                file: t.file.clone(),
                column: "kind",
                candidates: format!("'{}', '{}'", t.headers[a], t.headers[b]),
            });
        }
        (Some(a), None) => Some((a, false)),
        (None, Some(b)) => Some((b, true)),
        (None, None) => None,
    };
    let taken: Vec<usize> = [part, after, before, entry, count, kind.map(|k| k.0)]
        .into_iter()
        .flatten()
        .collect();
    let life = t.column(&HOURS_EXACT, &HOURS_PREFIX, &taken, "life")?;
    match (life, before) {
        (None, None) => {
            if t.headers.is_empty() {
                return Err(t.missing("life", HOURS_COLUMN_NAMES));
            }
            return Err(t.missing("life", LIFE_OR_INTERVAL));
        }
        (Some(_), _) if kind.is_none() => {
            return Err(t.missing("kind (failed or suspended)", FLAG_COLUMN_NAMES));
        }
        _ => {}
    }
    if before.is_some() && after.is_none() {
        return Err(t.missing(
            "after",
            "after, last_good (the last age at which the part was seen working; with before)",
        ));
    }
    if after.is_some() && before.is_none() {
        return Err(t.missing(
            "before",
            "before, found_at (the age at which the part was found failed; with after)",
        ));
    }
    Ok(Columns {
        life,
        kind,
        part,
        after,
        before,
        entry,
        count,
    })
}

/// Parse records from CSV text; `file` names the source in error messages.
///
/// # Errors
/// See [`read_records`].
pub fn parse_records(text: &str, file: &str) -> Result<Vec<Record>, FitError> {
    records_of(&parse_table(text, file)?)
}

fn records_of(t: &Table) -> Result<Vec<Record>, FitError> {
    if t.headers.is_empty() {
        return Err(t.missing("life", HOURS_COLUMN_NAMES));
    }
    let c = columns(t)?;
    let mut out = Vec::new();
    for row in &t.rows {
        if let Some(r) = record(t, &c, row)? {
            out.push(r);
        }
    }
    if out.is_empty() {
        return Err(FitError::NoRecords {
            file: t.file.clone(),
        });
    }
    Ok(out)
}

/// One row as a record; `None` for a row with count 0.
fn record(t: &Table, c: &Columns, row: &Row) -> Result<Option<Record>, FitError> {
    let line = row.line;
    let part = match c.part {
        Some(col) => {
            let p = row.get(Some(col));
            if p.is_empty() {
                return Err(FitError::EmptyPart {
                    file: t.file.clone(),
                    line,
                    column: t.name(Some(col)),
                });
            }
            p.to_string()
        }
        None => DEFAULT_PART.to_string(),
    };
    let count = match t.hours(row, c.count) {
        Ok(None) => 1.0,
        Ok(Some(n)) if n >= 0.0 && n.fract() == 0.0 && n <= MAX_COUNT => n,
        Ok(Some(n)) => {
            return Err(t.bad(
                line,
                format!(
                    "the count in column '{}' must be a whole number from 0 to 1000000 (got {n}); \
                     a row with count 0 is skipped",
                    t.name(c.count)
                ),
            ));
        }
        Err(_) => {
            return Err(t.bad(
                line,
                format!(
                    "'{}' in column '{}' is not a count; allowed: a whole number from 0 to \
                     1000000, or empty for 1",
                    row.get(c.count),
                    t.name(c.count)
                ),
            ));
        }
    };
    let entry = match t.hours(row, c.entry)? {
        None => 0.0,
        Some(e) if e >= 0.0 => e,
        Some(e) => {
            return Err(t.bad(
                line,
                format!(
                    "the entry age in column '{}' must be 0 or more hours (got {e}); leave it \
                     empty for a part watched from new",
                    t.name(c.entry)
                ),
            ));
        }
    };
    let flag_cell = c.kind.map_or("", |k| row.get(Some(k.0)));
    let flag = if flag_cell.is_empty() {
        None
    } else {
        match parse_flag(flag_cell) {
            Some(f) => Some(f),
            None => {
                return Err(FitError::UnknownFlag {
                    file: t.file.clone(),
                    line,
                    column: t.name(c.kind.map(|k| k.0)),
                    value: flag_cell.to_string(),
                    allowed: FLAG_SPELLINGS,
                });
            }
        }
    };
    let life = t.hours(row, c.life)?;
    let before = t.hours(row, c.before)?;
    let after = t.hours(row, c.after)?;
    let what = match (life, before) {
        (Some(_), Some(_)) => {
            return Err(t.bad(
                line,
                format!(
                    "both a life ('{}') and an inspection interval ('{}') are given; a row is \
                     either a life with its kind, or a failure found at an inspection with after \
                     and before",
                    t.name(c.life),
                    t.name(c.before)
                ),
            ));
        }
        (Some(hours), None) => {
            if after.is_some() {
                return Err(t.bad(
                    line,
                    "'after' is given without 'before': a failure found at an inspection needs \
                     both; a life needs neither",
                ));
            }
            if hours <= 0.0 {
                return Err(FitError::NonPositiveHours {
                    file: t.file.clone(),
                    line,
                    value: hours,
                });
            }
            let failed = match flag {
                Some(Flag::Answer(yes)) => yes != c.kind.is_some_and(|k| k.1),
                Some(Flag::Word(f)) => f,
                Some(Flag::Found) => {
                    return Err(t.bad(
                        line,
                        format!(
                            "kind '{flag_cell}' is a failure found at an inspection: give the \
                             interval in after and before, not a life"
                        ),
                    ));
                }
                None => {
                    return Err(FitError::UnknownFlag {
                        file: t.file.clone(),
                        line,
                        column: t.name(c.kind.map(|k| k.0)),
                        value: String::new(),
                        allowed: FLAG_SPELLINGS,
                    });
                }
            };
            if entry >= hours {
                return Err(t.bad(
                    line,
                    format!(
                        "the entry age ({entry}) must be less than the life ({hours}): a part \
                         enters the records before it fails or is removed"
                    ),
                ));
            }
            if failed {
                Observed::Failure(hours)
            } else {
                Observed::Suspension(hours)
            }
        }
        (None, Some(b)) => {
            let a = after.unwrap_or(0.0);
            match flag {
                None | Some(Flag::Found) | Some(Flag::Word(true)) => {}
                Some(Flag::Answer(yes)) if yes != c.kind.is_some_and(|k| k.1) => {}
                _ => {
                    return Err(t.bad(
                        line,
                        format!(
                            "kind '{flag_cell}' says suspension, but after and before describe \
                             a failure found at an inspection; a part found working at an \
                             inspection is a suspension: give its age in the life column"
                        ),
                    ));
                }
            }
            if a < 0.0 {
                return Err(t.bad(
                    line,
                    format!(
                        "after must be 0 or more hours (got {a}); 0 (or empty) means the failure \
                         was found at the first inspection"
                    ),
                ));
            }
            if b <= 0.0 {
                return Err(FitError::NonPositiveHours {
                    file: t.file.clone(),
                    line,
                    value: b,
                });
            }
            if a >= b {
                return Err(t.bad(
                    line,
                    format!(
                        "after ({a}) must be less than before ({b}): after is the last age at \
                         which the part was seen working, before the age at which it was found \
                         failed"
                    ),
                ));
            }
            if entry >= b {
                return Err(t.bad(
                    line,
                    format!(
                        "the entry age ({entry}) must be less than before ({b}): a part enters \
                         the records before it is found failed"
                    ),
                ));
            }
            Observed::Interval {
                after: a,
                before: b,
            }
        }
        (None, None) => {
            return Err(t.bad(
                line,
                format!(
                    "no life and no inspection interval: give the hours run in '{}' with its \
                     kind, or the interval in after and before",
                    if c.life.is_some() {
                        t.name(c.life)
                    } else {
                        "life".to_string()
                    }
                ),
            ));
        }
    };
    if count == 0.0 {
        return Ok(None);
    }
    Ok(Some(Record {
        line,
        part,
        obs: Obs { what, entry, count },
    }))
}

/// Group records into one sample per part type, in order of first appearance.
pub fn samples_by_part(records: &[Record]) -> Vec<Sample> {
    let mut order: Vec<String> = Vec::new();
    let mut groups: std::collections::HashMap<&str, (Vec<Obs>, u64, u64)> =
        std::collections::HashMap::new();
    for r in records {
        let g = groups.entry(r.part.as_str()).or_insert_with(|| {
            order.push(r.part.clone());
            (Vec::new(), u64::MAX, 0)
        });
        g.0.push(r.obs);
        g.1 = g.1.min(r.line);
        g.2 = g.2.max(r.line);
    }
    order
        .into_iter()
        .filter_map(|p| {
            let (obs, first, last) = groups.remove(p.as_str())?;
            Sample::from_obs(&p, obs)
                .ok()
                .map(|s| s.with_lines(first, last))
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
        let failed: Vec<bool> = r.iter().map(|x| x.obs.what.is_failure()).collect();
        assert_eq!(failed, vec![true, false, true, false]);
        assert_eq!(r[0].line, 4);
        assert_eq!(r[1].line, 6);
        assert_eq!(r[3].obs.what, Observed::Suspension(75.5));
        let s = samples_by_part(&r);
        assert_eq!(s.len(), 2);
        assert_eq!(s[1].part(), "pump");
        assert_eq!(s[1].failures(), &[50.0]);
        assert_eq!(s[1].lines(), Some((7, 8)));
    }

    #[test]
    fn censored_column_turns_answers_round() {
        let text = "hours,censored\n10,1\n20,0\n30,F\n40,suspended\n";
        let r = parse_records(text, "t.csv").unwrap();
        let flags: Vec<bool> = r.iter().map(|x| x.obs.what.is_failure()).collect();
        assert_eq!(flags, vec![false, true, true, false]);
        assert_eq!(r[0].part, DEFAULT_PART);
    }

    #[test]
    fn semicolon_and_unit_suffix() {
        let text = "life_mrev;failed\n17.88;1\n28,92;yes\n";
        let r = parse_records(text, "t.csv").unwrap();
        assert_eq!(r.len(), 2);
        assert!(r.iter().all(|x| x.obs.what.is_failure()));
        assert_eq!(r[1].obs.what, Observed::Failure(28.92));
    }

    #[test]
    fn intervals_entry_ages_and_counts() {
        let text = "part,life,kind,after,before,entry_age,count\n\
                    seal,1200,failure,,,,\n\
                    seal,,,400,900,,\n\
                    seal,,found,,300,,2\n\
                    seal,5000,suspension,,,3000,12\n\
                    seal,4000,S,,,,0\n\
                    seal,,interval,3100,3500,3000,\n";
        let r = parse_records(text, "t.csv").unwrap();
        assert_eq!(r.len(), 5, "the count-0 row is skipped");
        assert_eq!(
            r[1].obs.what,
            Observed::Interval {
                after: 400.0,
                before: 900.0
            }
        );
        assert_eq!(r[2].obs.count, 2.0);
        assert_eq!(r[3].obs.entry, 3000.0);
        let s = &samples_by_part(&r)[0];
        let c = s.counts();
        assert_eq!(
            (c.exact_failures, c.interval_failures, c.left_censored),
            (1, 2, 2)
        );
        assert_eq!((c.suspensions, c.truncated), (12, 13));
        // An interval-only file needs no life or kind column.
        let r = parse_records("after,before,count\n0,100,3\n100,200,5\n", "t.csv").unwrap();
        assert_eq!(r.len(), 2);
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
        assert!(e.to_string().contains("thousands"), "{e}");
        let e = parse_records("\u{feff}hours,failed\n10,1\n# c\n-1,1\n", "w.csv").unwrap_err();
        assert!(
            matches!(e, FitError::NonPositiveHours { line: 4, .. }),
            "{e}"
        );
        let e = parse_records("hours,failed\n12\n", "w.csv").unwrap_err();
        assert!(matches!(e, FitError::UnknownFlag { .. }), "{e}");
    }

    #[test]
    fn new_format_mistakes_say_what_is_allowed() {
        let cases = [
            ("life,kind\n2024-03-01,failure\n", 2, "looks like a date"),
            ("after,before\n900,400\n", 2, "must be less than before"),
            ("life,kind,count\n100,F,-2\n", 2, "whole number"),
            ("life,kind,count\n100,F,1.5\n", 2, "whole number"),
            ("life,kind,entry_age\n100,F,150\n", 2, "entry age"),
            ("life,kind,after,before\n100,F,50,90\n", 2, "either a life"),
            ("life,kind,after,before\n,S,50,90\n", 2, "says suspension"),
            ("part,life,kind,after,before\nx,,,,\n", 2, "no life and no"),
            ("life,kind\n100,interval\n", 2, "after and before"),
            ("life,kind,after,before\n100,F,50,\n", 2, "without 'before'"),
        ];
        for (text, line, words) in cases {
            let e = parse_records(text, "w.csv").unwrap_err();
            let m = e.to_string();
            assert!(m.contains(&format!("line {line}")), "{text}: {m}");
            assert!(m.contains(words), "{text}: {m}");
        }
        let e = parse_records("after,kind\n1,F\n", "w.csv").unwrap_err();
        assert!(e.to_string().contains("before"), "{e}");
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig {
            cases: 256,
            rng_seed: proptest::test_runner::RngSeed::Fixed(20_261_210),
            failure_persistence: None,
            ..proptest::prelude::ProptestConfig::default()
        })]

        /// Any table of the new columns, with cells from a list of the
        /// valid and the absurd, is read or refused with the file named:
        /// never a panic, and every record read is a usable observation.
        #[test]
        fn any_records_table_is_read_or_refused(
            header in proptest::sample::subsequence(
                vec!["part", "life", "kind", "after", "before", "entry_age", "count", "hours"], 1..8),
            rows in proptest::collection::vec(
                proptest::collection::vec(proptest::sample::select(vec![
                    "", "0", "1", "-1", "12", "1200", "1e308", "nan", "2024-01-02", "1,5", "F",
                    "S", "found", "interval", "x", "3000", "0.5", "\"a;b\"",
                ]), 0..9),
                0..12),
            sep in proptest::sample::select(vec![",", ";", "\t"]),
        ) {
            let mut text = header.join(sep);
            text.push_str("\r\n");
            for r in &rows {
                text.push_str(&r.join(sep));
                text.push('\n');
            }
            match parse_records(&text, "p.csv") {
                Ok(recs) => {
                    for s in samples_by_part(&recs) {
                        proptest::prop_assert!(!s.is_empty());
                    }
                    for r in &recs {
                        proptest::prop_assert!(Sample::from_obs("x", vec![r.obs]).is_ok(), "{:?}", r);
                    }
                }
                Err(e) => proptest::prop_assert!(e.to_string().contains("p.csv"), "{}", e),
            }
        }
    }

    #[test]
    fn help_text_lists_every_spelling() {
        for s in FLAG_SPELLINGS
            .split([':', ';', ','])
            .map(str::trim)
            .filter(|s| {
                !s.is_empty() && *s != "failure" && *s != "suspension" && !s.starts_with("found at")
            })
        {
            assert!(parse_flag(s).is_some(), "{s} in the help but not accepted");
            assert!(
                RECORDS_FORMAT_HELP.contains(&format!("`{s}`")),
                "{s} missing from help"
            );
        }
    }
}
