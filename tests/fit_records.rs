//! Life data as maintenance records come: grouped counts, removal logs,
//! the Weibull with an assumed shape (Weibayes), and the `fit` command's
//! refusals of bad input.
//!
//! Sources: the assumed-shape closed form and its chi-square lower bound
//! (Nelson, Applied Life Data Analysis, 1982, ch. 6, and Abernethy, The
//! New Weibull Handbook, ch. 6; both from memory), worked by hand below
//! with chi-square points from the standard table (Abramowitz & Stegun,
//! table 26.8); the removal log is invented and its lives are worked out
//! by hand in the test.

mod common;

use std::path::{Path, PathBuf};

use wearout::fit::{
    BoundMethod, FitOptions, Method, Obs, Observed, Sample, fit_assumed_shape, fit_part_with,
    parse_records, read_records_or_log, samples_by_part,
};

fn folder(tag: &str) -> PathBuf {
    common::temp_dir(&format!("fit-records-{tag}"))
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

// ------------------------------------------------------------ grouping

/// Grouped rows and the same rows written out one by one, in another
/// order, give the same fit to the last digit: every estimate, standard
/// error, interval, log-likelihood, B-life and bound is compared with `==`.
#[test]
fn grouped_rows_fit_exactly_like_the_rows_written_out() {
    let grouped = "part,life,kind,after,before,entry_age,count\n\
        seal,1520,F,,,,\nseal,2210,F,,,1000,\nseal,3400,F,,,,2\nseal,5230,F,,,,\n\
        seal,2500,S,,,1500,3\nseal,4000,S,,,,5\nseal,6000,S,,,3000,4\n\
        seal,,,3000,4000,,2\nseal,,,2000,3000,1000,\nseal,,,0,1000,,\n";
    // The same parts, one row each, shuffled by hand.
    let expanded = "part,life,kind,after,before,entry_age\n\
        seal,4000,S,,,\nseal,,,3000,4000,\nseal,6000,S,,,3000\nseal,3400,F,,,\n\
        seal,2500,S,,,1500\nseal,4000,S,,,\nseal,5230,F,,,\nseal,6000,S,,,3000\n\
        seal,,,0,1000,\nseal,4000,S,,,\nseal,2500,S,,,1500\nseal,1520,F,,,\n\
        seal,6000,S,,,3000\nseal,4000,S,,,\nseal,,,2000,3000,1000\nseal,3400,F,,,\n\
        seal,2210,F,,,1000\nseal,6000,S,,,3000\nseal,2500,S,,,1500\nseal,,,3000,4000,\n\
        seal,4000,S,,,\n";
    let a = &samples_by_part(&parse_records(grouped, "g.csv").unwrap())[0];
    let b = &samples_by_part(&parse_records(expanded, "e.csv").unwrap())[0];
    assert_eq!(a.obs(), b.obs(), "the same canonical sample");
    assert_eq!(a.counts().total(), 21);
    let opts = FitOptions {
        assumed_shape: Some(2.0),
        ..FitOptions::default()
    };
    let pa = fit_part_with(a, &opts).unwrap();
    let pb = fit_part_with(b, &opts).unwrap();
    assert!(pa.mle.len() >= 4, "{:?}", pa.not_fitted);
    for (x, y) in pa
        .mle
        .iter()
        .zip(&pb.mle)
        .chain(pa.assumed_shape.iter().zip(&pb.assumed_shape))
    {
        assert_eq!(x.distribution, y.distribution);
        assert_eq!(x.params, y.params, "{}", x.distribution.name());
        assert_eq!(x.loglik.to_bits(), y.loglik.to_bits());
        assert_eq!(x.lr_ci95, y.lr_ci95);
        assert_eq!(x.b_lives, y.b_lives);
        assert_eq!(x.log_param_covariance(), y.log_param_covariance());
        assert_eq!(x.assumed, y.assumed);
    }
}

// ------------------------------------------------------------ removal log

/// An invented removal log of two buses, worked out by hand.
///
/// Bus T01 (meter 6000 h today; its log began at 1000 h):
/// - left: pad fitted at 0, removed at 1800 planned -> suspension 1800 h,
///   fitted before the log began: entry age 1000 - 0 = 1000 h;
///   then 1800 -> 3050 failure -> failure 1250 h;
///   then 3050 -> still fitted -> suspension 6000 - 3050 = 2950 h.
/// - right: 500 -> 2600 failure -> failure 2100 h, entry age 1000 - 500 = 500 h;
///   2600 -> 5100 scheduled -> suspension 2500 h; 5100 -> fitted -> 900 h.
///
/// Bus T02 (meter 4500 h, log from new):
/// - left: 0 -> 1400 breakdown -> failure 1400 h; 1400 -> fitted -> 3100 h.
/// - wiper motor 200 -> 4300 F -> failure 4100 h.
#[test]
fn a_removal_log_becomes_lives_and_suspensions() {
    let dir = folder("log");
    let log = write(
        &dir,
        "removals.csv",
        "# invented removal log\n\
         unit,position,part,fitted_at,removed_at,reason\n\
         T01,left,brake pad,0,1800,planned\n\
         T01,left,brake pad,1800,3050,failure\n\
         T01,left,brake pad,3050,,\n\
         T01,right,brake pad,500,2600,failure\n\
         T01,right,brake pad,2600,5100,scheduled\n\
         T01,right,brake pad,5100,,\n\
         T02,left,brake pad,0,1400,breakdown\n\
         T02,left,brake pad,1400,,\n\
         T02,wiper,wiper motor,200,4300,F\n",
    );
    let meters = write(
        &dir,
        "meters.csv",
        "unit;meter;log_start\r\nT01;6000;1000\r\nT02;4500;0\r\n",
    );
    let (records, source) = read_records_or_log(&log, Some(&meters)).unwrap();
    let s = source.log.unwrap();
    assert_eq!(
        (s.rows, s.failures, s.planned, s.still_fitted, s.entry_ages),
        (9, 4, 2, 3, 2)
    );
    let want: Vec<(u64, &str, Observed, f64)> = vec![
        (3, "brake pad", Observed::Suspension(1800.0), 1000.0),
        (4, "brake pad", Observed::Failure(1250.0), 0.0),
        (5, "brake pad", Observed::Suspension(2950.0), 0.0),
        (6, "brake pad", Observed::Failure(2100.0), 500.0),
        (7, "brake pad", Observed::Suspension(2500.0), 0.0),
        (8, "brake pad", Observed::Suspension(900.0), 0.0),
        (9, "brake pad", Observed::Failure(1400.0), 0.0),
        (10, "brake pad", Observed::Suspension(3100.0), 0.0),
        (11, "wiper motor", Observed::Failure(4100.0), 0.0),
    ];
    assert_eq!(records.len(), want.len());
    for (r, (line, part, what, entry)) in records.iter().zip(want) {
        assert_eq!((r.line, r.part.as_str()), (line, part));
        assert_eq!((r.obs.what, r.obs.entry, r.obs.count), (what, entry, 1.0));
    }
    let samples = samples_by_part(&records);
    assert_eq!(samples[0].failures(), vec![1250.0, 1400.0, 2100.0]);
    assert_eq!(
        samples[0].suspensions(),
        vec![900.0, 1800.0, 2500.0, 2950.0, 3100.0]
    );
    let _ = std::fs::remove_dir_all(&dir);
}

// ------------------------------------------------------------ assumed shape

fn close(what: &str, got: f64, want: f64, rel: f64) {
    assert!(
        (got - want).abs() <= rel * want.abs(),
        "{what}: got {got}, want {want}"
    );
}

/// No failures: four suspensions at 1000, 1500, 2000 and 2500 h, shape 2.
/// By hand: T = 1000^2 + 1500^2 + 2000^2 + 2500^2 = 13 500 000; with one
/// failure assumed the scale is sqrt(T) = 3674.2346; the 95% lower bound
/// uses chi-square with 2 d.f., chi2(0.95; 2) = -2 ln 0.05 = 5.991465, so
/// eta_L = sqrt(2 T / 5.991465) = sqrt(T / 2.995732) = 2122.8308.
#[test]
fn assumed_shape_without_failures_is_the_chi_square_bound() {
    let s = Sample::new("seal", vec![], vec![1000.0, 1500.0, 2000.0, 2500.0]).unwrap();
    let f = fit_assumed_shape(&s, 2.0, 0.95).unwrap();
    assert_eq!(f.method, Method::AssumedShape);
    close("scale", f.param("scale").unwrap(), 3674.2346142, 1e-9);
    let a = f.assumed.as_ref().unwrap();
    assert_eq!(a.failures, 0);
    assert_eq!(a.bound, BoundMethod::ChiSquare { dof: 2.0 });
    close("lower", a.scale_lower, 2122.8308245, 1e-9);
    assert!(f.notes.iter().any(|n| n.contains("one failure")));
    // fit_part refuses no failures without a shape, and gives this fit with one.
    let e = wearout::fit::fit_part(&s).unwrap_err().to_string();
    assert!(e.contains("no failures") && e.contains("--shape"), "{e}");
    let p = fit_part_with(
        &s,
        &FitOptions {
            assumed_shape: Some(2.0),
            ..FitOptions::default()
        },
    )
    .unwrap();
    assert!(p.mle.is_empty());
    let (chosen, why) = p.chosen().unwrap();
    assert_eq!(chosen.method, Method::AssumedShape);
    assert!(why.contains("fewer than two failures"), "{why}");
}

/// One failure at 1200 h added: T = 13 500 000 + 1200^2 = 14 940 000;
/// scale (T / 1)^(1/2) = 3865.2296; chi2(0.95; 4) = 9.487729 (table), so
/// eta_L = sqrt(2 T / 9.487729) = 1774.6355; the B10 life's bound is
/// eta_L (-ln 0.9)^(1/2) = 1774.6355 x 0.3245928 = 576.0340.
/// With an entry age of 2000 h on the 2500 h suspension, T loses 2000^2:
/// T = 10 940 000, eta = 3307.5671, eta_L = 1518.5969.
/// Shape 1.5, failures 800 and 1900 h, three suspensions at 3000 h:
/// T = 800^1.5 + 1900^1.5 + 3 x 3000^1.5 = 598 396.80, eta = (T / 2)^(1/1.5)
/// = 4473.4183, chi2(0.95; 6) = 12.591587, eta_L = (2 T / 12.591587)^(1/1.5)
/// = 2082.6959.
#[test]
fn assumed_shape_closed_form_by_hand() {
    let s = Sample::new("seal", vec![1200.0], vec![1000.0, 1500.0, 2000.0, 2500.0]).unwrap();
    let f = fit_assumed_shape(&s, 2.0, 0.95).unwrap();
    close("scale", f.param("scale").unwrap(), 3865.2296180, 1e-9);
    let a = f.assumed.as_ref().unwrap();
    assert_eq!(a.bound, BoundMethod::ChiSquare { dof: 4.0 });
    close("lower", a.scale_lower, 1774.6354835, 1e-7);
    let b10 = f.b_lives.iter().find(|b| b.name == "B10").unwrap();
    close("B10 lower", b10.lower_bound.unwrap(), 576.0339821, 1e-7);
    // The scale is the maximum of the likelihood with the shape fixed.
    let known = wearout::fit::fit_weibull_known_shape(&s, 2.0).unwrap();
    close("mle", known.param("scale").unwrap(), 3865.2296180, 1e-9);

    let t = Sample::from_obs(
        "seal",
        vec![
            Obs::failure(1200.0),
            Obs::suspension(1000.0),
            Obs::suspension(1500.0),
            Obs::suspension(2000.0),
            Obs::suspension(2500.0).entered_at(2000.0),
        ],
    )
    .unwrap();
    let f = fit_assumed_shape(&t, 2.0, 0.95).unwrap();
    close("entry scale", f.param("scale").unwrap(), 3307.5670817, 1e-9);
    close(
        "entry lower",
        f.assumed.unwrap().scale_lower,
        1518.5969495,
        1e-7,
    );

    let u = Sample::new("seal", vec![800.0, 1900.0], vec![3000.0; 3]).unwrap();
    let f = fit_assumed_shape(&u, 1.5, 0.95).unwrap();
    close("1.5 scale", f.param("scale").unwrap(), 4473.4183051, 1e-9);
    close(
        "1.5 lower",
        f.assumed.unwrap().scale_lower,
        2082.6958792,
        1e-7,
    );
}

/// With interval data the assumed-shape bound is the one-sided
/// likelihood-ratio bound: the log-likelihood there is z(0.95)^2 / 2 =
/// 1.35277 below its maximum (1.644854^2 / 2, normal table).
#[test]
fn assumed_shape_with_inspection_data_uses_the_likelihood_ratio_bound() {
    let s = Sample::from_obs(
        "seal",
        vec![
            Obs::interval(1000.0, 2000.0),
            Obs::failure(2500.0),
            Obs::suspension(3000.0).times(6.0),
        ],
    )
    .unwrap();
    let f = fit_assumed_shape(&s, 2.0, 0.95).unwrap();
    let a = f.assumed.as_ref().unwrap();
    assert_eq!(a.bound, BoundMethod::LikelihoodRatio);
    let at = |eta: f64| fit_mle_loglik(&s, 2.0, eta);
    let drop = at(f.param("scale").unwrap()) - at(a.scale_lower);
    assert!((drop - 1.352_771).abs() < 1e-6, "{drop}");
    assert!(a.scale_lower < f.param("scale").unwrap());
}

/// The Weibull log-likelihood at (shape, scale), written out here from
/// its definition (Meeker & Escobar 1998, ch. 2), independently of the
/// library's.
fn fit_mle_loglik(s: &Sample, shape: f64, scale: f64) -> f64 {
    let mut ll = 0.0;
    let z = |t: f64| (t / scale).powf(shape);
    for o in s.obs() {
        let v = match o.what {
            Observed::Failure(t) => (shape / scale).ln() + (shape - 1.0) * (t / scale).ln() - z(t),
            Observed::Suspension(t) => -z(t),
            Observed::Interval { after, before } => ((-z(after)).exp() - (-z(before)).exp()).ln(),
        };
        ll += o.count * v;
    }
    ll
}

// ------------------------------------------------------------ the command

/// Run the binary; return (exit code, stdout, stderr).
fn wearout(args: &[&str]) -> (i32, String, String) {
    let ran = common::run_wearout(args);
    (ran.code.unwrap_or(-1), ran.stdout, ran.stderr)
}

/// Spreadsheet habits are read: a byte-order mark, semicolons with decimal
/// commas, CRLF line ends.
#[test]
fn spreadsheet_files_are_read() {
    let dir = folder("sheet");
    let p = dir.join("sheet.csv");
    std::fs::write(
        &p,
        "\u{feff}part;life;kind;count\r\nfan;450;F;1\r\nfan;1150,5;F;2\r\nfan;1600;F;1\r\n\
         fan;2070;F;1\r\nfan;4000;S;5\r\n",
    )
    .unwrap();
    let (code, out, err) = wearout(&["fit", p.to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["parts"][0]["failures"], 5);
    assert_eq!(v["parts"][0]["suspensions"], 5);
    assert_eq!(v["source"]["format"], "records");
    let _ = std::fs::remove_dir_all(&dir);
}

/// Every refusal: exit 2, one message with the file, the line and what is
/// allowed, never a panic.
#[test]
fn bad_records_exit_2_with_the_line_and_what_is_allowed() {
    let dir = folder("bad");
    let cases: [(&str, &str, &[&str]); 7] = [
        (
            "date",
            "part,life,kind\nfan,1200,F\nfan,2024-05-01,S\n",
            &["line 3", "looks like a date", "allowed"],
        ),
        (
            "after-before",
            "part,after,before\nfan,0,300\nfan,900,400\n",
            &["line 3", "after (900) must be less than before (400)"],
        ),
        (
            "negative-count",
            "part,life,kind,count\nfan,1200,F,\nfan,2000,S,-3\n",
            &["line 3", "whole number from 0 to 1000000"],
        ),
        (
            "all-suspensions",
            "part,life,kind\nfan,1200,S\nfan,2000,suspension\n",
            &["lines 2-3", "no failures", "--shape"],
        ),
        (
            "unknown-kind",
            "life,kind\n100,maybe\n",
            &["line 2", "allowed", "suspension"],
        ),
        (
            "overlap",
            "unit,position,fitted_at,removed_at,reason\nT1,L,0,900,failure\nT1,L,800,1500,planned\n",
            &["line 3", "two parts in unit 'T1' position 'L' at once"],
        ),
        (
            "removed-first",
            "unit,position,fitted_at,removed_at,reason\nT1,L,900,800,failure\n",
            &["line 2", "is not after fitted_at"],
        ),
    ];
    for (tag, text, needles) in cases {
        let p = write(&dir, &format!("{tag}.csv"), text);
        let (code, _, err) = wearout(&["fit", p.to_str().unwrap()]);
        assert_eq!(code, 2, "{tag}: {err}");
        assert!(!err.contains("panicked"), "{tag}: {err}");
        assert!(err.contains(&format!("{tag}.csv")), "{tag}: {err}");
        for n in needles {
            assert!(err.contains(n), "{tag}: `{n}` not in {err}");
        }
    }
    // A bad --shape, and a shape for a part that is not there.
    let p = write(&dir, "ok.csv", "part,life,kind\nfan,1200,F\nfan,2000,S\n");
    let (code, _, err) = wearout(&["fit", p.to_str().unwrap(), "--shape", "-1"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("above 0"), "{err}");
    let (code, _, err) = wearout(&["fit", p.to_str().unwrap(), "--shape", "pump=2"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("'pump'"), "{err}");
    let _ = std::fs::remove_dir_all(&dir);
}

/// All suspensions with a shape given: the assumed-shape fit, said so, in
/// the table and the JSON with its records; the life block pastes.
#[test]
fn assumed_shape_on_the_command_line() {
    let dir = folder("shape");
    let p = write(
        &dir,
        "seals.csv",
        "part,life,kind\nseal,1000,S\nseal,1500,S\nseal,2000,S\nseal,2500,S\n\
         fan,450,F\nfan,1150,F\nfan,1600,F\nfan,2070,F\nfan,3100,S\n",
    );
    let (code, out, err) = wearout(&["fit", p.to_str().unwrap(), "--shape", "seal=2"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("fewer than two failures"), "{out}");
    assert!(out.contains("assumed_shape"), "{out}");
    assert!(
        out.contains("life = { dist = \"weibull\", shape = 2.000, scale = 3674"),
        "{out}"
    );
    let (code, out, err) = wearout(&["fit", p.to_str().unwrap(), "--shape", "seal=2", "--json"]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let seal = v["parts"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["part"] == "seal")
        .unwrap();
    assert_eq!(seal["chosen"]["method"], "assumed_shape");
    assert_eq!(seal["lines"], serde_json::json!([2, 5]));
    let r = seal["chosen"]["records_reference"].as_str().unwrap();
    assert!(
        r.contains("assumed_shape = 2.000") && r.contains("seals.csv"),
        "{r}"
    );
    let fit = v["fits"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["part"] == "seal" && f["method"] == "assumed_shape")
        .unwrap();
    let lb = fit["assumed_shape"]["scale_lower_bound"].as_f64().unwrap();
    close("lower bound", lb, 2122.8308245, 1e-9);
    assert_eq!(fit["assumed_shape"]["chi_square_dof"], 2.0);
    // The fan part had no shape given: maximum likelihood as before.
    let fan = v["parts"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["part"] == "fan")
        .unwrap();
    assert_eq!(fan["chosen"]["method"], "mle");
    // The pasted block (comments and life line) reads as TOML.
    let block = seal["chosen"]["life_block"].as_str().unwrap();
    let t: toml::Table = toml::from_str(block).unwrap();
    assert_eq!(t["life"]["shape"].as_float(), Some(2.0));
    let _ = std::fs::remove_dir_all(&dir);
}
