//! Ctrl-C during a long run: the process stops within a second, prints no
//! partial output, writes no partial file, and leaves earlier shard files
//! and reports as they were. (Common practice for command-line tools: exit
//! status 130 = 128 + SIGINT, as shells report a process ended by Ctrl-C.)

mod common;

use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use common::{scenario_path as scenario, temp_dir};

fn start(args: &[&str]) -> Child {
    common::wearout()
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn wearout")
}

/// Send `signal` once the run is under way; return (seconds to exit, exit
/// code, stdout, stderr).
fn interrupt(
    mut child: Child,
    after: Duration,
    signal: &str,
) -> (f64, Option<i32>, String, String) {
    std::thread::sleep(after);
    assert!(
        child.try_wait().expect("status").is_none(),
        "the run ended before it could be interrupted; make it longer"
    );
    let sent = Instant::now();
    let ok = Command::new("kill")
        .args([signal, &child.id().to_string()])
        .status()
        .expect("kill runs");
    assert!(ok.success());
    let deadline = sent + Duration::from_secs(20);
    loop {
        if child.try_wait().expect("status").is_some() {
            break;
        }
        assert!(
            Instant::now() < deadline,
            "still running 20 s after {signal}"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
    let secs = sent.elapsed().as_secs_f64();
    let out = child.wait_with_output().expect("output");
    (
        secs,
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).to_string(),
        String::from_utf8_lossy(&out.stderr).to_string(),
    )
}

fn names_in(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .expect("read dir")
        .map(|e| e.expect("entry").file_name().to_string_lossy().to_string())
        .collect();
    v.sort();
    v
}

#[test]
fn ctrl_c_during_a_shard_run_keeps_the_earlier_file() {
    let dir = temp_dir("interrupt-shard");
    let target = dir.join("run.shard");
    // An earlier shard of the same name, from a short run.
    let b1 = scenario("b1");
    let out = target.display().to_string();
    let st = common::wearout()
        .args(["evaluate", &b1, "--trials", "20", "--out", &out])
        .output()
        .expect("runs");
    assert!(st.status.success());
    let before = std::fs::read(&target).expect("earlier shard");
    // A run of a million trials (minutes), stopped after a moment.
    let child = start(&[
        "evaluate", &b1, "--trials", "1000000", "--shard", "0/1", "--out", &out,
    ]);
    std::thread::sleep(Duration::from_millis(300));
    let (secs, code, stdout, stderr) = interrupt(child, Duration::from_millis(1200), "-INT");
    assert!(secs < 1.0, "took {secs:.2} s to stop");
    assert_eq!(code, Some(130), "{stderr}");
    assert!(stderr.contains("interrupted"), "{stderr}");
    assert!(stdout.is_empty(), "{stdout}");
    assert_eq!(std::fs::read(&target).expect("still there"), before);
    assert_eq!(
        names_in(&dir),
        vec!["run.shard".to_string()],
        "no temporary file left"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn sigterm_and_ctrl_c_stop_evaluate_and_frontier_promptly() {
    let dir = temp_dir("interrupt-runs");
    let report = dir.join("report");
    std::fs::create_dir_all(&report).unwrap();
    std::fs::write(report.join("index.html"), "earlier report").unwrap();
    // The mark of a folder wearout wrote (else the folder is refused
    // before the run starts).
    std::fs::write(report.join(".wearout-report"), "index.html\n").unwrap();
    let b1 = scenario("b1");
    let rep = report.display().to_string();
    // evaluate --json with a report: no JSON printed, the report untouched.
    let child = start(&[
        "evaluate",
        &b1,
        "--trials",
        "1000000",
        "--json",
        "--report-dir",
        &rep,
    ]);
    let (secs, code, stdout, stderr) = interrupt(child, Duration::from_millis(1500), "-TERM");
    assert!(secs < 1.0, "evaluate took {secs:.2} s to stop");
    assert_eq!(code, Some(130), "{stderr}");
    assert!(stdout.is_empty(), "{stdout}");
    assert_eq!(
        std::fs::read_to_string(report.join("index.html")).unwrap(),
        "earlier report"
    );
    // The frontier search of B1 (screening, linear programs, search).
    let child = start(&["frontier", &b1]);
    let (secs, code, stdout, stderr) = interrupt(child, Duration::from_millis(2500), "-INT");
    assert!(secs < 1.0, "frontier took {secs:.2} s to stop");
    assert_eq!(code, Some(130), "{stderr}");
    assert!(stdout.is_empty(), "{stdout}");
    let _ = std::fs::remove_dir_all(&dir);
}
