//! Removal logs: turning the hour-meter readings at which parts were
//! fitted and removed, and each unit's current reading, into lives and
//! suspensions.
//!
//! Owns: the removal-log and meter-table formats (documented in
//! `records_format.md`), their consistency checks (removed before fitted,
//! two parts in one position at once, a part still fitted on a unit with
//! no current reading, readings past the current one) with line numbers,
//! and the [`LogSummary`] of what was derived.
//! May use: `super::csvtext`, `super::records` (the [`Record`] it
//! produces), `super::sample`.
//!
//! Derivation, per row: a part removed for a failure lived
//! `removed_at - fitted_at` hours and failed; a part removed for planned
//! work, or still fitted (no `removed_at`), is a suspension at
//! `removed_at - fitted_at` or `meter - fitted_at` (the unit's current
//! reading). When the meter table gives the reading at which the log
//! begins (`log_start`) and a part was fitted before it, the part entered
//! the records at age `log_start - fitted_at` (left truncation: parts of
//! that position that failed before the log began are not in it).

use std::collections::HashMap;

use super::FitError;
use super::csvtext::{Row, Table};
use super::records::{DEFAULT_PART, Record};
use super::sample::{Obs, Observed};

const UNIT: [&str; 5] = ["unit", "unit_id", "machine", "asset", "vehicle"];
const POSITION: [&str; 3] = ["position", "pos", "slot"];
const PART: [&str; 4] = ["part", "part_type", "part_name", "component"];
const FITTED: [&str; 4] = ["fitted_at", "fitted", "installed_at", "fitted_meter"];
const REMOVED: [&str; 3] = ["removed_at", "removed", "removed_meter"];
const REASON: [&str; 3] = ["reason", "removal_reason", "cause"];
const METER: [&str; 4] = ["meter", "current_meter", "meter_now", "reading"];
const LOG_START: [&str; 2] = ["log_start", "records_from"];

/// Reasons read as a failure, as listed in messages.
pub const FAILURE_REASONS: &str =
    "failure, failed, fail, F, broken, breakdown, unplanned, defect, corrective";
/// Reasons read as a planned removal of a working part, as listed in messages.
pub const PLANNED_REASONS: &str = "planned, scheduled, preventive, preventative, PM, S, suspended, campaign, opportunity, working";

fn reason_is_failure(cell: &str) -> Option<bool> {
    match cell.trim().to_lowercase().as_str() {
        "failure" | "failed" | "fail" | "f" | "broken" | "breakdown" | "unplanned" | "defect"
        | "corrective" => Some(true),
        "planned" | "scheduled" | "preventive" | "preventative" | "pm" | "s" | "suspended"
        | "campaign" | "opportunity" | "working" => Some(false),
        _ => None,
    }
}

/// What a removal log turned into.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct LogSummary {
    /// Rows of the log.
    pub rows: usize,
    /// Lives that ended in a failure.
    pub failures: usize,
    /// Parts removed in working order (planned work): suspensions.
    pub planned: usize,
    /// Parts still fitted today: suspensions at the current reading.
    pub still_fitted: usize,
    /// Parts fitted before the log began: lives with an entry age.
    pub entry_ages: usize,
}

impl LogSummary {
    /// A one-line account, e.g. "removal log of 9 rows: 3 failures, 6
    /// suspensions (4 removed for planned work, 2 still fitted), 1 with an
    /// entry age".
    pub fn text(&self) -> String {
        format!(
            "removal log of {} rows: {} failures, {} suspensions ({} removed for planned work, \
             {} still fitted), {} fitted before the log began (entry ages)",
            self.rows,
            self.failures,
            self.planned + self.still_fitted,
            self.planned,
            self.still_fitted,
            self.entry_ages
        )
    }
}

/// True when a table's columns make it a removal log (it has a
/// `fitted_at` column).
pub(crate) fn is_removal_log(t: &Table) -> bool {
    t.column(&FITTED, &[], &[], "fitted_at")
        .ok()
        .flatten()
        .is_some()
}

/// One unit's readings from the meter table.
struct Meter {
    now: f64,
    start: Option<f64>,
    line: u64,
}

fn meters_of(t: &Table) -> Result<HashMap<String, Meter>, FitError> {
    let unit = t
        .column(&UNIT, &[], &[], "unit")?
        .ok_or_else(|| t.missing("unit", "unit, unit_id, machine, asset, vehicle"))?;
    let meter = t.column(&METER, &[], &[], "meter")?.ok_or_else(|| {
        t.missing(
            "meter",
            "meter, current_meter, meter_now, reading (the unit's hour-meter reading today)",
        )
    })?;
    let start = t.column(&LOG_START, &[], &[], "log_start")?;
    let mut out: HashMap<String, Meter> = HashMap::new();
    for row in &t.rows {
        let u = row.get(Some(unit));
        if u.is_empty() {
            return Err(t.bad(row.line, "the unit cell is empty"));
        }
        let now = t.hours(row, Some(meter))?.ok_or_else(|| {
            t.bad(
                row.line,
                "the meter cell is empty; give the unit's hour-meter reading today",
            )
        })?;
        let s = t.hours(row, start)?;
        if now < 0.0 || s.is_some_and(|s| s < 0.0) {
            return Err(t.bad(row.line, "meter readings must be 0 or more hours"));
        }
        if let Some(s) = s
            && s > now
        {
            return Err(t.bad(
                row.line,
                format!("log_start ({s}) is after the current reading ({now})"),
            ));
        }
        if let Some(prev) = out.get(u) {
            return Err(t.bad(
                row.line,
                format!(
                    "unit '{u}' is listed twice (also on line {}); give one current reading per \
                     unit",
                    prev.line
                ),
            ));
        }
        out.insert(
            u.to_string(),
            Meter {
                now,
                start: s,
                line: row.line,
            },
        );
    }
    Ok(out)
}

/// One log row, read.
struct Stint {
    line: u64,
    unit: String,
    position: String,
    part: String,
    fitted: f64,
    /// Removal reading and whether it was a failure; `None`: still fitted.
    removed: Option<(f64, bool)>,
}

/// Turn a removal log (and the meter table, needed when some part is still
/// fitted) into records, one per row, in the log's order.
///
/// # Errors
/// A missing column, a bad number or reason, a part removed at or before
/// the reading it was fitted at, two parts in one position at the same
/// time, a part still fitted on a unit with no current reading, a reading
/// past the unit's current one: each names the file and line.
pub(crate) fn parse_log(
    log: &Table,
    meters: Option<&Table>,
) -> Result<(Vec<Record>, LogSummary), FitError> {
    let t = log;
    let unit = t
        .column(&UNIT, &[], &[], "unit")?
        .ok_or_else(|| t.missing("unit", "unit, unit_id, machine, asset, vehicle"))?;
    let position = t.column(&POSITION, &[], &[], "position")?;
    let part = t.column(&PART, &[], &[], "part")?;
    let fitted = t
        .column(&FITTED, &[], &[], "fitted_at")?
        .ok_or_else(|| t.missing("fitted_at", "fitted_at, fitted, installed_at, fitted_meter"))?;
    let removed = t.column(&REMOVED, &[], &[], "removed_at")?.ok_or_else(|| {
        t.missing(
            "removed_at",
            "removed_at, removed, removed_meter (empty for a part still fitted)",
        )
    })?;
    let reason = t.column(&REASON, &[], &[], "reason")?.ok_or_else(|| {
        t.missing(
            "reason",
            "reason, removal_reason, cause (failure or planned; empty for a part still fitted)",
        )
    })?;
    let meter = match meters {
        Some(m) => Some(meters_of(m)?),
        None => None,
    };
    let meter_file = meters.map(|m| m.file.clone());
    let cell = |row: &Row, c: Option<usize>| row.get(c).to_string();
    let mut stints = Vec::with_capacity(t.rows.len());
    for row in &t.rows {
        let line = row.line;
        let u = cell(row, Some(unit));
        if u.is_empty() {
            return Err(t.bad(line, "the unit cell is empty"));
        }
        let p = if part.is_some() {
            let p = cell(row, part);
            if p.is_empty() {
                return Err(FitError::EmptyPart {
                    file: t.file.clone(),
                    line,
                    column: t.name(part),
                });
            }
            p
        } else {
            DEFAULT_PART.to_string()
        };
        let f = t.hours(row, Some(fitted))?.ok_or_else(|| {
            t.bad(
                line,
                "fitted_at is empty; give the unit's hour-meter reading when the part was fitted",
            )
        })?;
        if f < 0.0 {
            return Err(t.bad(line, format!("fitted_at must be 0 or more hours (got {f})")));
        }
        let why = cell(row, Some(reason));
        let r = t.hours(row, Some(removed))?;
        let removed_at = match r {
            Some(r) => {
                if r <= f {
                    return Err(t.bad(
                        line,
                        format!(
                            "removed_at ({r}) is not after fitted_at ({f}): a part is removed at \
                             a later meter reading than it was fitted at"
                        ),
                    ));
                }
                let failed = reason_is_failure(&why).ok_or_else(|| {
                    t.bad(
                        line,
                        format!(
                            "'{why}' in column '{}' is not a removal reason; allowed: for a \
                             failure {FAILURE_REASONS}; for a part removed in working order \
                             {PLANNED_REASONS}",
                            t.name(Some(reason))
                        ),
                    )
                })?;
                Some((r, failed))
            }
            None => {
                if !why.is_empty() {
                    return Err(t.bad(
                        line,
                        format!(
                            "a reason ('{why}') but no removed_at: leave both empty for a part \
                             still fitted, or give the reading at which it was removed"
                        ),
                    ));
                }
                None
            }
        };
        stints.push(Stint {
            line,
            unit: u,
            position: cell(row, position),
            part: p,
            fitted: f,
            removed: removed_at,
        });
    }
    if stints.is_empty() {
        return Err(FitError::NoRecords {
            file: t.file.clone(),
        });
    }

    // Two parts in one position at the same time.
    let mut by_place: HashMap<(&str, &str), Vec<&Stint>> = HashMap::new();
    for s in &stints {
        by_place
            .entry((s.unit.as_str(), s.position.as_str()))
            .or_default()
            .push(s);
    }
    let mut clashes: Vec<(u64, String)> = Vec::new();
    for v in by_place.values_mut() {
        v.sort_by(|a, b| a.fitted.total_cmp(&b.fitted).then(a.line.cmp(&b.line)));
        for w in v.windows(2) {
            let (a, b) = (w[0], w[1]);
            let end = a.removed.map(|r| r.0);
            if end.is_none_or(|e| b.fitted < e) {
                let place = if a.position.is_empty() {
                    format!("unit '{}'", a.unit)
                } else {
                    format!("unit '{}' position '{}'", a.unit, a.position)
                };
                let until = match end {
                    Some(e) => format!("removed at {e}"),
                    None => "still fitted".to_string(),
                };
                let hint = if a.position.is_empty() {
                    "; give a position column if the unit holds several such parts"
                } else {
                    ""
                };
                clashes.push((
                    b.line.max(a.line),
                    format!(
                        "two parts in {place} at once: the part of line {} (fitted at {}, {until}) \
                         and the part of line {} (fitted at {}); a position holds one part at a \
                         time{hint}",
                        a.line, a.fitted, b.line, b.fitted
                    ),
                ));
            }
        }
    }
    if let Some((line, m)) = clashes.into_iter().min_by_key(|c| c.0) {
        return Err(t.bad(line, m));
    }

    let mut summary = LogSummary {
        rows: stints.len(),
        ..LogSummary::default()
    };
    let mut out = Vec::with_capacity(stints.len());
    for s in &stints {
        let m = meter.as_ref().and_then(|m| m.get(&s.unit));
        let end = match s.removed {
            Some((r, _)) => r,
            None => {
                let Some(m) = m else {
                    let how = match &meter_file {
                        Some(f) => format!("the meters file {f} has no row for it"),
                        None => "give the units' current meter readings with --meters FILE \
                                 (columns unit, meter)"
                            .to_string(),
                    };
                    return Err(t.bad(
                        s.line,
                        format!(
                            "the part on unit '{}' is still fitted (no removed_at), so its age \
                             today needs the unit's current meter reading: {how}",
                            s.unit
                        ),
                    ));
                };
                if m.now <= s.fitted {
                    return Err(t.bad(
                        s.line,
                        format!(
                            "the part is still fitted, but unit '{}''s current reading ({}, \
                             meters line {}) is not after fitted_at ({})",
                            s.unit, m.now, m.line, s.fitted
                        ),
                    ));
                }
                m.now
            }
        };
        if let Some(m) = m
            && end > m.now
        {
            return Err(t.bad(
                s.line,
                format!(
                    "removed_at ({end}) is past unit '{}''s current reading ({}, meters line {})",
                    s.unit, m.now, m.line
                ),
            ));
        }
        let entry = match m.and_then(|m| m.start) {
            Some(start) if s.fitted < start => {
                if end <= start {
                    return Err(t.bad(
                        s.line,
                        format!(
                            "the part was removed at {end}, before the log began for unit '{}' \
                             (log_start {start}, meters line {})",
                            s.unit,
                            m.map_or(0, |m| m.line)
                        ),
                    ));
                }
                summary.entry_ages += 1;
                start - s.fitted
            }
            _ => 0.0,
        };
        let life = end - s.fitted;
        let what = match s.removed {
            Some((_, true)) => {
                summary.failures += 1;
                Observed::Failure(life)
            }
            Some((_, false)) => {
                summary.planned += 1;
                Observed::Suspension(life)
            }
            None => {
                summary.still_fitted += 1;
                Observed::Suspension(life)
            }
        };
        out.push(Record {
            line: s.line,
            part: s.part.clone(),
            obs: Obs {
                what,
                entry,
                count: 1.0,
            },
        });
    }
    Ok((out, summary))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::csvtext::parse_table;

    fn log(text: &str, meters: Option<&str>) -> Result<(Vec<Record>, LogSummary), FitError> {
        let t = parse_table(text, "log.csv").unwrap();
        let m = meters.map(|m| parse_table(m, "meters.csv").unwrap());
        parse_log(&t, m.as_ref())
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig {
            cases: 256,
            rng_seed: proptest::test_runner::RngSeed::Fixed(20_261_211),
            failure_persistence: None,
            ..proptest::prelude::ProptestConfig::default()
        })]

        /// Any log of units, positions, readings and reasons from a list of
        /// the valid and the absurd is turned into usable records or refused
        /// with the file named; never a panic.
        #[test]
        fn any_log_is_read_or_refused(
            rows in proptest::collection::vec(
                (
                    proptest::sample::select(vec!["T1", "T2", ""]),
                    proptest::sample::select(vec!["L", "R", ""]),
                    proptest::sample::select(vec!["0", "100", "900", "-5", "x", "1e308", ""]),
                    proptest::sample::select(vec!["", "100", "950", "2000", "nan", "5"]),
                    proptest::sample::select(vec!["", "failure", "planned", "PM", "worn"]),
                ),
                0..10,
            ),
            meters in proptest::sample::select(vec![
                None,
                Some("unit,meter\nT1,3000\nT2,1500\n"),
                Some("unit,meter,log_start\nT1,3000,500\nT2,1500,0\n"),
                Some("unit,meter\nT1,-1\n"),
            ]),
        ) {
            let mut text = String::from("unit,position,fitted_at,removed_at,reason\n");
            for r in &rows {
                text.push_str(&format!("{},{},{},{},{}\n", r.0, r.1, r.2, r.3, r.4));
            }
            match log(&text, meters) {
                Ok((recs, summary)) => {
                    proptest::prop_assert_eq!(recs.len(), summary.rows);
                    for r in &recs {
                        let ok = crate::fit::Sample::from_obs("x", vec![r.obs]).is_ok();
                        proptest::prop_assert!(ok, "{:?}", r);
                    }
                }
                Err(e) => {
                    let m = e.to_string();
                    proptest::prop_assert!(m.contains("log.csv") || m.contains("meters.csv"), "{}", m);
                }
            }
        }
    }

    #[test]
    fn refusals_name_the_line() {
        let head = "unit,position,fitted_at,removed_at,reason\n";
        let cases = [
            (
                format!("{head}T1,L,500,400,failure\n"),
                None,
                2,
                "is not after fitted_at",
            ),
            (
                format!("{head}T1,L,0,900,failure\nT1,L,800,1500,planned\n"),
                None,
                3,
                "two parts in unit 'T1' position 'L' at once",
            ),
            (
                format!("{head}T1,L,0,,\nT1,L,800,1500,planned\n"),
                Some("unit,meter\nT1,2000\n"),
                3,
                "still fitted",
            ),
            (format!("{head}T1,L,0,,\n"), None, 2, "--meters"),
            (
                format!("{head}T1,L,0,,\n"),
                Some("unit,meter\nT2,10\n"),
                2,
                "no row for it",
            ),
            (
                format!("{head}T1,L,0,300,worn\n"),
                None,
                2,
                "not a removal reason",
            ),
            (format!("{head}T1,L,0,,failure\n"), None, 2, "no removed_at"),
            (
                format!("{head}T1,L,0,3000,failure\n"),
                Some("unit,meter\nT1,2000\n"),
                2,
                "past",
            ),
            (
                format!("{head}T1,L,2024-01-05,3000,failure\n"),
                None,
                2,
                "date",
            ),
        ];
        for (text, meters, line, words) in cases {
            let e = log(&text, meters).unwrap_err().to_string();
            assert!(e.contains(&format!("line {line}")), "{text}: {e}");
            assert!(e.contains(words), "{text}: {e}");
        }
        let e = log(head, None).unwrap_err();
        assert!(matches!(e, FitError::NoRecords { .. }));
        let e = log("unit,fitted_at,reason\nT1,0,F\n", None).unwrap_err();
        assert!(e.to_string().contains("removed_at"), "{e}");
        let e = log(
            "unit,fitted_at,removed_at,reason\nT1,0,,\n",
            Some("unit,meter\nT1,10\nT1,20\n"),
        )
        .unwrap_err();
        assert!(e.to_string().contains("listed twice"), "{e}");
    }
}
