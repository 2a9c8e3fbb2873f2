//! The `fit` command: work-order records in; fitted life distributions,
//! a paste-ready scenario life block and optionally a probability plot out.
//!
//! Owns: turning [`FitArgs`] into the report on a writer and the plot
//! file(s). Knows nothing of clap: the parent module maps its arguments
//! onto [`FitArgs`].
//! May use: `wearout::fit`, `serde_json`, `std::io`.

use std::collections::HashSet;
use std::io::Write;
use std::path::{Path, PathBuf};

use wearout::fit::{self, Family, FitError, PartFits, PartNotFitted};

/// What to fit and how to report it.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct FitArgs {
    /// The records CSV (format: [`wearout::fit::RECORDS_FORMAT_HELP`]).
    pub records: PathBuf,
    /// Fit only this part type (exact name, else ignoring ASCII case).
    pub part: Option<String>,
    /// Print `{"fits": [...], ...}` JSON instead of the table.
    pub json: bool,
    /// Write the Weibull probability plot (SVG) here. With several parts,
    /// one file per part: `<stem>-<part>.<ext>` beside it.
    pub plot: Option<PathBuf>,
}

fn out_err(e: std::io::Error) -> FitError {
    FitError::Output {
        what: "the report".into(),
        message: e.to_string(),
    }
}

/// `plots/fan.svg` + part `Fan bearing` -> `plots/fan-Fan_bearing.svg`.
fn plot_path_for_part(base: &Path, part: &str, used: &mut HashSet<PathBuf>) -> PathBuf {
    let stem = base
        .file_stem()
        .map_or_else(|| "plot".to_string(), |s| s.to_string_lossy().into_owned());
    let ext = base
        .extension()
        .map_or_else(|| "svg".to_string(), |s| s.to_string_lossy().into_owned());
    let safe: String = part
        .chars()
        .map(|c| {
            if c.is_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect();
    let mut k = 1;
    loop {
        let suffix = if k == 1 {
            String::new()
        } else {
            format!("-{k}")
        };
        let p = base.with_file_name(format!("{stem}-{safe}{suffix}.{ext}"));
        if used.insert(p.clone()) {
            return p;
        }
        k += 1;
    }
}

/// Run the `fit` command: read the records, fit every part (or the one
/// chosen), write the table and scenario block (or JSON) to `out`, and the
/// plot file(s) atomically.
///
/// # Errors
/// A [`FitError`] naming the file, line or part for bad records, an
/// unknown part, no part with any failure, or a file that cannot be written.
pub fn run(args: &FitArgs, out: &mut dyn Write) -> Result<(), FitError> {
    let records = fit::read_records(&args.records)?;
    let samples = fit::select_parts(&records, args.part.as_deref())?;
    let mut fitted = Vec::new();
    let mut skipped: Vec<PartNotFitted> = Vec::new();
    let mut first_error = None;
    for s in &samples {
        match fit::fit_part(s) {
            Ok(p) => fitted.push((s, p)),
            Err(e) => {
                skipped.push(PartNotFitted {
                    part: s.part().to_string(),
                    reason: e.to_string(),
                });
                first_error.get_or_insert(e);
            }
        }
    }
    if fitted.is_empty() {
        return Err(first_error.unwrap_or_else(|| FitError::NoRecords {
            file: args.records.display().to_string(),
        }));
    }

    let mut written = Vec::new();
    if let Some(base) = &args.plot {
        let mut used = HashSet::new();
        for (s, p) in &fitted {
            let Some(line) = p
                .mle_of(Family::Weibull)
                .or_else(|| p.mle_of(Family::Exponential))
            else {
                continue;
            };
            let svg = fit::probability_plot_svg(s, line)?;
            let path = if fitted.len() > 1 {
                plot_path_for_part(base, &p.part, &mut used)
            } else {
                base.clone()
            };
            fit::write_atomic(&path, svg.as_bytes())?;
            written.push((path, line.distribution));
        }
    }

    let parts: Vec<PartFits> = fitted.into_iter().map(|(_, p)| p).collect();
    if args.json {
        writeln!(out, "{}", fit::fits_json(&parts, &skipped)?).map_err(out_err)?;
        return Ok(());
    }
    write!(out, "{}", fit::table(&parts)).map_err(out_err)?;
    for s in &skipped {
        writeln!(out, "\nPart '{}' not fitted: {}", s.part, s.reason).map_err(out_err)?;
    }
    for (path, family) in &written {
        writeln!(
            out,
            "\nProbability plot ({} line, 95% band by the delta method): {}",
            family.name(),
            path.display()
        )
        .map_err(out_err)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    struct TempDir(PathBuf);

    impl TempDir {
        fn new(tag: &str) -> Self {
            let p =
                std::env::temp_dir().join(format!("wearout-cli-fit-{tag}-{}", std::process::id()));
            std::fs::create_dir_all(&p).unwrap();
            TempDir(p)
        }
    }

    impl Drop for TempDir {
        fn drop(&mut self) {
            let _ = std::fs::remove_dir_all(&self.0);
        }
    }

    const RECORDS: &str = "# invented demo records\npart,hours,status\n\
        fan,450,F\nfan,1150,F\nfan,1150,F\nfan,1600,F\nfan,2070,F\nfan,3100,F\n\
        fan,460,S\nfan,4000,running\nfan,5000,running\n\
        seal,300,S\nseal,900,S\n";

    fn write_records(dir: &TempDir) -> PathBuf {
        let p = dir.0.join("records.csv");
        std::fs::write(&p, RECORDS).unwrap();
        p
    }

    #[test]
    fn table_block_and_plot() {
        let dir = TempDir::new("table");
        let args = FitArgs {
            records: write_records(&dir),
            part: None,
            json: false,
            plot: Some(dir.0.join("plot.svg")),
        };
        let mut out = Vec::new();
        run(&args, &mut out).unwrap();
        let text = String::from_utf8(out).unwrap();
        assert!(
            text.contains("Part 'fan': 6 failures, 3 suspensions"),
            "{text}"
        );
        assert!(text.contains("rank_regression"));
        assert!(text.contains("life = { dist = "));
        assert!(text.contains("Part 'seal' not fitted"), "{text}");
        // One part fitted: the plot goes to the path given.
        let svg = std::fs::read_to_string(dir.0.join("plot.svg")).unwrap();
        assert!(svg.contains("<svg"));
    }

    #[test]
    fn json_output_and_part_choice() {
        let dir = TempDir::new("json");
        let args = FitArgs {
            records: write_records(&dir),
            part: Some("FAN".into()),
            json: true,
            plot: None,
        };
        let mut out = Vec::new();
        run(&args, &mut out).unwrap();
        let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
        let fits = v["fits"].as_array().unwrap();
        assert!(fits.iter().all(|f| f["part"] == "fan"));
        // Every family is either fitted or listed with its reason.
        let not = v["not_fitted"].as_array().unwrap();
        for fam in Family::ALL {
            let name = fam.name();
            assert!(
                fits.iter().chain(not).any(|f| f["distribution"] == name),
                "{name}"
            );
        }
        assert!(fits.iter().any(|f| f["method"] == "rank_regression"));
    }

    #[test]
    fn errors_are_reported_not_panicked() {
        let dir = TempDir::new("err");
        let records = write_records(&dir);
        let mut out = Vec::new();
        let e = run(
            &FitArgs {
                records: records.clone(),
                part: Some("pump".into()),
                ..FitArgs::default()
            },
            &mut out,
        )
        .unwrap_err();
        assert!(matches!(e, FitError::UnknownPart { .. }), "{e}");
        let e = run(
            &FitArgs {
                records: records.clone(),
                part: Some("seal".into()),
                ..FitArgs::default()
            },
            &mut out,
        )
        .unwrap_err();
        assert!(matches!(e, FitError::NoFailures { .. }), "{e}");
        let e = run(
            &FitArgs {
                records: dir.0.join("missing.csv"),
                ..FitArgs::default()
            },
            &mut out,
        )
        .unwrap_err();
        assert!(matches!(e, FitError::Io { .. }), "{e}");
    }

    #[test]
    fn plot_names_per_part() {
        let mut used = HashSet::new();
        let base = Path::new("out/p.svg");
        assert_eq!(
            plot_path_for_part(base, "fan bearing", &mut used),
            PathBuf::from("out/p-fan_bearing.svg")
        );
        assert_eq!(
            plot_path_for_part(base, "fan/bearing", &mut used),
            PathBuf::from("out/p-fan_bearing-2.svg")
        );
    }
}
