//! The `fit` command: maintenance records (or a removal log and the
//! units' meter readings) in; fitted life distributions, a paste-ready
//! scenario life block and optionally a probability plot out.
//!
//! Owns: the command's options ([`FitCommand`], which the parent module
//! places among the subcommands) and turning [`FitArgs`] into the report on
//! a writer and the plot file(s).
//! May use: `wearout::fit`, `wearout::dist`, `clap` (the options only),
//! `serde_json`, `std::io`.

use std::collections::HashSet;
use std::io::Write;
use std::path::{Path, PathBuf};

use wearout::dist::Life;
use wearout::fit::{self, Family, Fit, FitError, FitOptions, PartFits, PartNotFitted};

/// The `fit` command's options, as the command line gives them.
#[derive(Debug, Clone, clap::Args)]
#[command(after_long_help = wearout::fit::RECORDS_FORMAT_HELP)]
pub struct FitCommand {
    /// Records CSV (life, kind; or after, before for failures found at
    /// inspections; optional part, entry_age, count), or a removal log
    /// (unit, position, fitted_at, removed_at, reason): see the format
    /// below (--help).
    pub records: PathBuf,
    /// Fit only this part type.
    #[arg(long)]
    pub part: Option<String>,
    /// Print JSON instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Write a Weibull probability plot (SVG) to this file.
    #[arg(long)]
    pub plot: Option<PathBuf>,
    /// The units' current meter readings, for a removal log (CSV: unit,
    /// meter, optional log_start).
    #[arg(long, value_name = "FILE")]
    pub meters: Option<PathBuf>,
    /// Assume this Weibull shape from experience and fit only the scale,
    /// with a one-sided 95% lower bound (works with no failures): `B` for
    /// every part, or `PART=B` for one part (repeat for several).
    #[arg(long, value_name = "[PART=]B", allow_negative_numbers = true)]
    pub shape: Vec<String>,
}

impl From<FitCommand> for FitArgs {
    fn from(c: FitCommand) -> Self {
        FitArgs {
            records: c.records,
            part: c.part,
            json: c.json,
            plot: c.plot,
            meters: c.meters,
            shapes: c.shape,
        }
    }
}

/// What to fit and how to report it.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct FitArgs {
    /// The records CSV or removal log (format: [`wearout::fit::RECORDS_FORMAT_HELP`]).
    pub records: PathBuf,
    /// Fit only this part type (exact name, else ignoring ASCII case).
    pub part: Option<String>,
    /// Print `{"fits": [...], ...}` JSON instead of the table.
    pub json: bool,
    /// Write the Weibull probability plot (SVG) here. With several parts,
    /// one file per part: `<stem>-<part>.<ext>` beside it.
    pub plot: Option<PathBuf>,
    /// The current meter readings of a removal log's units.
    pub meters: Option<PathBuf>,
    /// Assumed Weibull shapes as typed: `B` (every part) or `PART=B`.
    pub shapes: Vec<String>,
}

/// The assumed shape of each part, from `--shape` values.
#[derive(Debug, Default)]
struct Shapes {
    all: Option<f64>,
    by_part: Vec<(String, f64)>,
}

impl Shapes {
    fn parse(specs: &[String]) -> Result<Self, FitError> {
        let mut out = Shapes::default();
        for spec in specs {
            let (part, num) = match spec.rsplit_once('=') {
                Some((p, n)) => (Some(p.trim().to_string()), n.trim()),
                None => (None, spec.trim()),
            };
            let b: f64 = num
                .parse()
                .ok()
                .filter(|b: &f64| *b > 0.0 && *b <= 1e3)
                .ok_or_else(|| FitError::BadOption {
                    message: format!(
                        "--shape '{spec}': the shape must be a number above 0 and at most 1000; \
                         allowed: --shape 1.5 (every part) or --shape \"pump seal=1.5\" (one part)"
                    ),
                })?;
            match part {
                Some(p) if p.is_empty() => {
                    return Err(FitError::BadOption {
                        message: format!("--shape '{spec}': the part name before '=' is empty"),
                    });
                }
                Some(p) => out.by_part.push((p, b)),
                None => {
                    if out.all.is_some() {
                        return Err(FitError::BadOption {
                            message: "--shape without a part name is given twice; give one \
                                      shape for every part, or PART=B for each part"
                                .to_string(),
                        });
                    }
                    out.all = Some(b);
                }
            }
        }
        Ok(out)
    }

    /// The shape assumed for `part`: its own, else the one for every part.
    fn of(&self, part: &str) -> Option<f64> {
        self.by_part
            .iter()
            .rev()
            .find(|(p, _)| p == part)
            .or_else(|| {
                self.by_part
                    .iter()
                    .rev()
                    .find(|(p, _)| p.eq_ignore_ascii_case(part))
            })
            .map(|x| x.1)
            .or(self.all)
    }
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

/// The fit drawn on the probability plot: the assumed-shape Weibull when a
/// shape was given, else the Weibull MLE, else the exponential (a Weibull
/// of shape 1).
fn plot_line(p: &PartFits) -> Option<&Fit> {
    p.assumed_shape
        .as_ref()
        .filter(|f| matches!(f.life(), Life::Weibull { location: 0.0, .. }))
        .or_else(|| p.mle_of(Family::Weibull))
        .or_else(|| p.mle_of(Family::Exponential))
}

/// Run the `fit` command: read the records (or the removal log and its
/// meter readings), fit every part (or the one chosen), write the table
/// and scenario block (or JSON) to `out`, and the plot file(s) atomically.
///
/// # Errors
/// A [`FitError`] naming the file, line or part for bad records, an
/// unknown part, no part with any failure (and no assumed shape), a bad
/// `--shape`, or a file that cannot be written.
pub fn run(args: &FitArgs, out: &mut dyn Write) -> Result<(), FitError> {
    let shapes = Shapes::parse(&args.shapes)?;
    let (records, source) = fit::read_records_or_log(&args.records, args.meters.as_deref())?;
    let samples = fit::select_parts(&records, args.part.as_deref())?;
    for (name, _) in &shapes.by_part {
        if !samples
            .iter()
            .any(|s| s.part() == name || s.part().eq_ignore_ascii_case(name))
        {
            let names: Vec<String> = samples.iter().map(|s| format!("'{}'", s.part())).collect();
            return Err(FitError::BadOption {
                message: format!(
                    "--shape names part '{name}', which is not among the parts fitted ({})",
                    names.join(", ")
                ),
            });
        }
    }
    let mut fitted = Vec::new();
    let mut skipped: Vec<PartNotFitted> = Vec::new();
    let mut first_error = None;
    for s in &samples {
        let options = FitOptions {
            assumed_shape: shapes.of(s.part()),
            ..FitOptions::default()
        };
        match fit::fit_part_with(s, &options) {
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
        return Err(match first_error {
            Some(e) => FitError::InFile {
                file: source.file.clone(),
                message: e.to_string(),
            },
            None => FitError::NoRecords {
                file: source.file.clone(),
            },
        });
    }

    let mut written = Vec::new();
    if let Some(base) = &args.plot {
        let mut used = HashSet::new();
        for (s, p) in &fitted {
            let Some(line) = plot_line(p) else {
                continue;
            };
            let svg = fit::probability_plot_svg(s, line)?;
            let path = if fitted.len() > 1 {
                plot_path_for_part(base, &p.part, &mut used)
            } else {
                base.clone()
            };
            fit::write_atomic(&path, svg.as_bytes())?;
            written.push((path, line.distribution, line.method));
        }
    }

    let parts: Vec<PartFits> = fitted.into_iter().map(|(_, p)| p).collect();
    if args.json {
        writeln!(
            out,
            "{}",
            fit::report::fits_json_with_source(&parts, &skipped, Some(&source))?
        )
        .map_err(out_err)?;
        return Ok(());
    }
    if let Some(log) = &source.log {
        writeln!(out, "{}: {}\n", source.file, log.text()).map_err(out_err)?;
    }
    write!(
        out,
        "{}",
        fit::report::table_with_source(&parts, Some(&source))
    )
    .map_err(out_err)?;
    for s in &skipped {
        writeln!(out, "\nPart '{}' not fitted: {}", s.part, s.reason).map_err(out_err)?;
    }
    for (path, family, method) in &written {
        let what = if *method == fit::Method::AssumedShape {
            "Weibull with assumed shape, with its one-sided lower bound".to_string()
        } else {
            format!("{} line, 95% band by the delta method", family.name())
        };
        writeln!(out, "\nProbability plot ({what}): {}", path.display()).map_err(out_err)?;
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
            ..FitArgs::default()
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
            ..FitArgs::default()
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
        assert!(matches!(e, FitError::InFile { .. }), "{e}");
        assert!(e.to_string().contains("no failures"), "{e}");
        assert!(e.to_string().contains("records.csv"), "{e}");
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
