//! The cluster mechanism, locally: N shards run as N separate `wearout`
//! processes at the same time (as a scheduler's array tasks would), merged
//! with `wearout merge`, give exactly the output of one process, for
//! several splits and thread counts; and the command line's refusals.
//!
//! The reference is the single-process run of the same command (an
//! independent path that never writes or reads a shard).

mod common;

use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};

use common::{scenario_path as scenario, temp_dir, wearout as bin};

fn ok(out: Output, what: &str) -> String {
    assert!(
        out.status.success(),
        "{what}: exit {:?}, stderr: {}",
        out.status.code(),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("utf-8")
}

/// Start every shard of an `n`-split at once; wait for all.
fn run_shards(args: &[&str], n: u64, threads: usize, dir: &Path) -> Vec<PathBuf> {
    let mut children: Vec<(Child, PathBuf)> = Vec::new();
    for k in 0..n {
        let out = dir.join(format!("part-{k}-of-{n}.shard"));
        let child = bin()
            .args(args)
            .args(["--threads", &threads.to_string()])
            .args(["--shard", &format!("{k}/{n}")])
            .arg("--out")
            .arg(&out)
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .expect("spawn shard");
        children.push((child, out));
    }
    children
        .into_iter()
        .map(|(c, out)| {
            let o = c.wait_with_output().expect("shard runs");
            assert!(
                o.status.success(),
                "shard {}: {}",
                out.display(),
                String::from_utf8_lossy(&o.stderr)
            );
            out
        })
        .collect()
}

fn merge(files: &[PathBuf], json: bool) -> Output {
    let mut c = bin();
    c.arg("merge").args(files);
    if json {
        c.arg("--json");
    }
    c.output().expect("merge runs")
}

#[test]
fn parallel_processes_merge_to_the_single_run() {
    let b1 = scenario("b1");
    let args = ["evaluate", &b1, "--policy", "reference", "--trials", "320"];
    let single_json = ok(bin().args(args).arg("--json").output().unwrap(), "single");
    let single_text = ok(bin().args(args).output().unwrap(), "single text");
    let dir = temp_dir("shards-evaluate");
    for (n, threads) in [(1, 2), (2, 1), (7, 2), (16, 1)] {
        let mut files = run_shards(&args, n, threads, &dir);
        files.reverse();
        let merged = ok(merge(&files, true), "merge");
        assert_eq!(merged, single_json, "{n} shards, {threads} threads");
        if n == 7 {
            let text = ok(merge(&files, false), "merge text");
            assert_eq!(text, single_text, "table of {n} shards");
        }
        for f in files {
            std::fs::remove_file(f).expect("remove shard");
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// B2 (sites, a depot, lateral supply, rotables, a ready-units target):
/// the merged table, JSON and report equal the single run's, file by file
/// (the report's `trials.csv` re-runs the trials, so it checks them too).
#[test]
fn b2_shards_merge_to_the_single_run_table_json_and_report() {
    let b2 = scenario("b2");
    let dir = temp_dir("shards-b2");
    let single_report = dir.join("single");
    let merged_report = dir.join("merged");
    let args = ["evaluate", &b2, "--policy", "reference", "--trials", "240"];
    let single_json = ok(bin().args(args).arg("--json").output().unwrap(), "single");
    let single_text = ok(
        bin()
            .args(args)
            .arg("--report-dir")
            .arg(&single_report)
            .output()
            .unwrap(),
        "single text",
    );
    let mut files = run_shards(&args, 3, 1, &dir);
    files.reverse();
    assert_eq!(ok(merge(&files, true), "merge"), single_json);
    let merged_text = ok(
        bin()
            .arg("merge")
            .args(&files)
            .arg("--report-dir")
            .arg(&merged_report)
            .output()
            .unwrap(),
        "merge text",
    );
    // The last line names the report's folder, which differs.
    let body = |s: &str| {
        s.lines()
            .filter(|l| !l.starts_with("report written"))
            .collect::<Vec<_>>()
            .join("\n")
    };
    assert_eq!(body(&merged_text), body(&single_text));
    assert!(single_text.contains("north"), "the table shows the sites");
    let mut names: Vec<String> = std::fs::read_dir(&single_report)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    for want in [
        "sites.csv",
        "units-up.csv",
        "stores.csv",
        "rotables.csv",
        "units-up.svg",
    ] {
        assert!(names.iter().any(|n| n == want), "{want} missing: {names:?}");
    }
    for name in &names {
        let a = std::fs::read(single_report.join(name)).unwrap();
        let b = std::fs::read(merged_report.join(name)).unwrap();
        assert!(
            a == b,
            "{name} differs between the single run and the merge"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn frontier_validation_spread_over_processes() {
    let b0 = scenario("b0");
    let dir = temp_dir("shards-frontier");
    let front = ok(
        bin()
            .args([
                "frontier",
                &b0,
                "--trials",
                "200",
                "--validate-trials",
                "200",
                "--json",
            ])
            .output()
            .unwrap(),
        "frontier",
    );
    let list = dir.join("front.json");
    std::fs::write(&list, front).expect("write list");
    let list = list.display().to_string();
    let args = [
        "frontier",
        &b0,
        "--policies",
        &list,
        "--validate-trials",
        "300",
    ];
    let single = ok(bin().args(args).arg("--json").output().unwrap(), "single");
    let files = run_shards(&args, 3, 1, &dir);
    let merged = ok(merge(&files, true), "merge");
    // Everything but the timings.
    let figures = |s: &str| -> String {
        s.lines()
            .filter(|l| !l.contains("\"seconds"))
            .collect::<Vec<_>>()
            .join("\n")
    };
    assert_eq!(figures(&merged), figures(&single));
    assert!(single.contains("\"validate_trials\": 300"), "{single}");
    let _ = std::fs::remove_dir_all(&dir);
}

fn refused(args: &[&str], needles: &[&str]) {
    let out = bin().args(args).output().expect("runs");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
    assert!(!err.contains("panicked"), "{err}");
    assert_eq!(err.trim().lines().count(), 1, "one message: {err}");
    for n in needles {
        assert!(err.contains(n), "`{n}` not in: {err}");
    }
}

#[test]
fn command_line_refusals() {
    let b0 = scenario("b0");
    let dir = temp_dir("shards-refusals");
    let out = dir.join("x.shard").display().to_string();
    refused(
        &["evaluate", &b0, "--shard", "1/4"],
        &["--shard 1/4 needs --out FILE"],
    );
    refused(
        &["evaluate", &b0, "--shard", "4/4", "--out", &out],
        &["K counts from 0", "0/4 to 3/4"],
    );
    refused(
        &["evaluate", &b0, "--shard", "1/4", "--out", &out, "--json"],
        &["--json does not go with --shard"],
    );
    refused(
        &["frontier", &b0, "--shard", "1/4", "--out", &out],
        &["need --policies"],
    );
    let args = ["evaluate", &b0, "--trials", "40"];
    let files = run_shards(&args, 4, 1, &dir);
    let f: Vec<String> = files.iter().map(|p| p.display().to_string()).collect();
    refused(
        &["merge", &f[0], &f[1], &f[3]],
        &["shards missing", "20..30", "share 2/4"],
    );
    refused(
        &["merge", &f[0], &f[1], &f[1], &f[2], &f[3]],
        &["shards overlap", "same share given twice"],
    );
    refused(&["merge", &b0], &["not a wearout shard file"]);
    // A bad list of policies names the file and the entry.
    let bad = dir.join("bad.json");
    std::fs::write(&bad, r#"{"policies": [{"rules": {}, "stock": {}}]}"#).unwrap();
    refused(
        &["frontier", &b0, "--policies", bad.to_str().unwrap()],
        &["bad.json", "policies[0].rules", "has no rule"],
    );
    // A shard the merge does not need is left untouched.
    let before = std::fs::read(&files[0]).unwrap();
    refused(
        &[
            "evaluate", &b0, "--trials", "40", "--shard", "0/4", "--out", &f[0], "--target", "2",
        ],
        &["--target"],
    );
    assert_eq!(std::fs::read(&files[0]).unwrap(), before);
    let _ = std::fs::remove_dir_all(&dir);
}

/// The folded (`>-`) shell command under `args:` in a Kubernetes manifest.
fn folded_args(yaml: &str) -> String {
    let lines: Vec<&str> = yaml.lines().collect();
    let at = lines
        .iter()
        .position(|l| l.trim() == "- >-")
        .expect("a folded args block");
    let indent = |l: &str| l.len() - l.trim_start().len();
    let base = indent(lines[at]);
    lines[at + 1..]
        .iter()
        .take_while(|l| indent(l) > base && !l.trim().is_empty())
        .map(|l| l.trim())
        .collect::<Vec<_>>()
        .join(" ")
}

/// The value of `name` in a manifest's `env:` list.
fn env_value(yaml: &str, name: &str) -> String {
    let lines: Vec<&str> = yaml.lines().collect();
    let at = lines
        .iter()
        .position(|l| l.trim() == format!("- name: {name}"))
        .unwrap_or_else(|| panic!("no env {name}"));
    lines[at + 1]
        .trim()
        .strip_prefix("value: ")
        .expect("value line")
        .trim_matches('"')
        .to_string()
}

#[test]
fn the_deploy_files_run_as_the_schedulers_would() {
    let root = env!("CARGO_MANIFEST_DIR");
    let bin_dir = Path::new(env!("CARGO_BIN_EXE_wearout"))
        .parent()
        .expect("bin folder")
        .display()
        .to_string();
    let path = format!("{bin_dir}:{}", std::env::var("PATH").unwrap_or_default());
    let b0 = scenario("b0");
    let single = ok(
        bin()
            .args([
                "evaluate",
                &b0,
                "--policy",
                "reference",
                "--trials",
                "120",
                "--json",
            ])
            .output()
            .unwrap(),
        "single",
    );

    // Slurm: four array tasks at once, then the merge script.
    let dir = temp_dir("shards-slurm");
    let shards = dir.join("shards").display().to_string();
    let script = format!("{root}/deploy/slurm/evaluate-array.sh");
    let tasks: Vec<Child> = (0..4)
        .map(|k| {
            Command::new("bash")
                .args([&script, &b0, "reference", "120", &shards])
                .env("PATH", &path)
                .env("SLURM_ARRAY_TASK_ID", k.to_string())
                .env("SLURM_ARRAY_TASK_COUNT", "4")
                .env("SLURM_CPUS_PER_TASK", "1")
                .stdout(Stdio::null())
                .spawn()
                .expect("task")
        })
        .collect();
    for t in tasks {
        assert!(t.wait_with_output().expect("task").status.success());
    }
    let result = dir.join("result.json");
    let merged = Command::new("bash")
        .args([
            &format!("{root}/deploy/slurm/merge.sh"),
            &shards,
            result.to_str().unwrap(),
        ])
        .env("PATH", &path)
        .output()
        .expect("merge script");
    ok(merged, "merge script");
    assert_eq!(std::fs::read_to_string(&result).unwrap(), single);

    // Kubernetes: the Indexed Job's command, with its environment, for
    // each completion index; the merge Job's command.
    let yaml = std::fs::read_to_string(format!(
        "{root}/deploy/kubernetes/evaluate-indexed-job.yaml"
    ))
    .unwrap();
    let merge_yaml =
        std::fs::read_to_string(format!("{root}/deploy/kubernetes/merge-job.yaml")).unwrap();
    let kdir = temp_dir("shards-kubernetes");
    let scen = kdir.join("scenario");
    let out = kdir.join("shards");
    std::fs::create_dir_all(&scen).unwrap();
    std::fs::create_dir_all(&out).unwrap();
    std::fs::copy(&b0, scen.join("scenario.toml")).unwrap();
    let local = |cmd: String| {
        cmd.replace("/scenario/", &format!("{}/", scen.display()))
            .replace("/shards/", &format!("{}/", out.display()))
    };
    let cmd = local(folded_args(&yaml));
    let n: u32 = 3;
    assert_eq!(env_value(&yaml, "POLICY"), "reference");
    let pods: Vec<Child> = (0..n)
        .map(|k| {
            Command::new("sh")
                .args(["-c", &cmd])
                .env("PATH", &path)
                .env("JOB_COMPLETION_INDEX", k.to_string())
                .env("SHARDS", n.to_string())
                .env("POLICY", env_value(&yaml, "POLICY"))
                .env("TRIALS", "120")
                .env("THREADS", "1")
                .stdout(Stdio::null())
                .spawn()
                .expect("pod")
        })
        .collect();
    for p in pods {
        assert!(p.wait_with_output().expect("pod").status.success());
    }
    let merged = Command::new("sh")
        .args(["-c", &local(folded_args(&merge_yaml))])
        .env("PATH", &path)
        .output()
        .expect("merge pod");
    assert_eq!(ok(merged, "merge pod"), single);
    let _ = std::fs::remove_dir_all(&dir);
    let _ = std::fs::remove_dir_all(&kdir);
}
