//! Outputs never destroy data: an output that is an input is refused before anything is
//! written, the previous good file stays until a run succeeds, a closed or full standard output
//! is an I/O error (exit 4) and never a panic, and `--json` never shares a stream with data.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::io::Read;
use std::process::{Command, Stdio};

use common::*;

const BIN: &str = env!("CARGO_BIN_EXE_clampwise");

/// A scratch folder with the newton config and a good 200-row trace.
fn setup(name: &str) -> (std::path::PathBuf, String, String) {
    let d = scratch(name);
    let cfg = write(&d, "cfg.toml", &newton_config());
    let tr = write(&d, "t.csv", &text(&small_trace(200)));
    (d, cfg, tr)
}

fn assert_refused(code: i32, err: &str, file: &str, before: &str) {
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("refusing to write"), "{err}");
    assert_eq!(
        std::fs::read_to_string(file).unwrap(),
        before,
        "{file} must be untouched"
    );
}

#[test]
fn replay_refuses_to_write_over_its_trace_or_config() {
    let (d, cfg, tr) = setup("clobber_replay");
    let trace_text = std::fs::read_to_string(&tr).unwrap();
    let cfg_text = std::fs::read_to_string(&cfg).unwrap();
    let (code, _, err) = replay(&cfg, &tr, &tr, &[]);
    assert_refused(code, &err, &tr, &trace_text);
    let (code, _, err) = replay(&cfg, &tr, &cfg, &[]);
    assert_refused(code, &err, &cfg, &cfg_text);
    // The same file under another name: a hard link, and a path spelled differently.
    let link = d.join("link.csv");
    std::fs::hard_link(&tr, &link).unwrap();
    let (code, _, err) = run(&[
        "-q",
        "replay",
        "-c",
        &cfg,
        &tr,
        "-o",
        link.to_str().unwrap(),
    ]);
    assert_refused(code, &err, &tr, &trace_text);
    assert!(err.contains("hard or symbolic link"), "{err}");
    let dotted = format!("{}/./t.csv", d.display());
    let (code, _, err) = replay(&cfg, &tr, &dotted, &[]);
    assert_refused(code, &err, &tr, &trace_text);
    // A plot named like the estimate.
    let est = d.join("e.csv").display().to_string();
    let (code, _, err) = replay(&cfg, &tr, &est, &["--plot", &est]);
    assert_eq!(code, 1, "{err}");
    assert!(!std::path::Path::new(&est).exists());
}

#[test]
fn other_commands_refuse_to_write_over_their_inputs() {
    let (d, cfg, tr) = setup("clobber_others");
    let cfg_text = std::fs::read_to_string(&cfg).unwrap();
    let est = d.join("e.csv").display().to_string();
    assert_eq!(replay(&cfg, &tr, &est, &[]).0, 0);
    let est_text = std::fs::read_to_string(&est).unwrap();
    let (code, _, err) = run(&["-q", "compare", &est, "--regions-csv", &est]);
    assert_refused(code, &err, &est, &est_text);
    let (code, _, err) = run(&["-q", "compare", &est, "-c", &cfg, "--regions-csv", &cfg]);
    assert_refused(code, &err, &cfg, &cfg_text);
    let (code, _, err) = run(&["-q", "tables", "-c", &cfg, "--emit", &cfg]);
    assert_refused(code, &err, &cfg, &cfg_text);
    let (code, _, err) = run(&["-q", "tables", "-c", &cfg, "--emit-c", &cfg]);
    assert_refused(code, &err, &cfg, &cfg_text);
    let (code, _, err) = run(&["-q", "synth", "-c", &cfg, "-o", &cfg, "--rows", "10"]);
    assert_refused(code, &err, &cfg, &cfg_text);
    let truth = write(&d, "truth.toml", &cfg_text);
    let (code, _, err) = run(&[
        "-q",
        "synth",
        "-c",
        &cfg,
        "--truth-config",
        &truth,
        "-o",
        &truth,
        "--rows",
        "10",
    ]);
    assert_refused(code, &err, &truth, &cfg_text);
    let trace_text = std::fs::read_to_string(&tr).unwrap();
    let (code, _, err) = run(&["-q", "fit", "-c", &cfg, &tr, "--coverage-csv", &tr]);
    assert_refused(code, &err, &tr, &trace_text);
    let (code, _, err) = run(&["-q", "fit", "-c", &cfg, &tr, "-o", &cfg]);
    assert_refused(code, &err, &cfg, &cfg_text);
    let (code, _, err) = run(&["-q", "plot", &est, "-o", &est]);
    assert_refused(code, &err, &est, &est_text);
}

#[test]
fn a_failed_run_keeps_the_previous_good_output() {
    let (d, cfg, tr) = setup("keep_previous");
    let est = d.join("e.csv");
    let est_s = est.display().to_string();
    assert_eq!(replay(&cfg, &tr, &est_s, &[]).0, 0);
    let good = std::fs::read_to_string(&est).unwrap();
    let mut t = small_trace(50);
    t[30] = "0.028,30000,abc,29990,2.0,100.0,-14500".into();
    let bad = write(&d, "bad.csv", &text(&t));
    let (code, _, err) = replay(&cfg, &bad, &est_s, &[]);
    assert_eq!(code, 2, "{err}");
    assert_eq!(std::fs::read_to_string(&est).unwrap(), good);
    let partial = std::fs::read_to_string(format!("{est_s}.partial")).unwrap();
    assert!(
        partial
            .lines()
            .last()
            .unwrap()
            .starts_with("# INCOMPLETE: "),
        "{partial}"
    );
    // No temporary file is left beside them; a later good run removes the stale .partial.
    let names = |d: &std::path::Path| {
        let mut v: Vec<String> = std::fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    };
    assert_eq!(
        names(&d),
        ["bad.csv", "cfg.toml", "e.csv", "e.csv.partial", "t.csv"]
    );
    assert_eq!(replay(&cfg, &tr, &est_s, &[]).0, 0);
    assert_eq!(names(&d), ["bad.csv", "cfg.toml", "e.csv", "t.csv"]);
}

/// Run with standard output sent to `/dev/full` (every write fails with ENOSPC).
fn run_to_dev_full(args: &[&str]) -> (i32, String) {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .unwrap();
    let out = Command::new(BIN)
        .args(args)
        .stdout(full)
        .stderr(Stdio::piped())
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_full_standard_output_is_an_io_error_not_a_panic() {
    let (_, cfg, tr) = setup("dev_full");
    // The human summary, the JSON summary, and data streams.
    for args in [
        vec!["check", cfg.as_str()],
        vec!["--json", "check", cfg.as_str()],
        vec!["-q", "replay", "-c", cfg.as_str(), tr.as_str(), "-o", "-"],
        vec![
            "-q",
            "synth",
            "-c",
            cfg.as_str(),
            "-o",
            "-",
            "--rows",
            "5000",
        ],
        vec!["-q", "tables", "-c", cfg.as_str(), "--emit", "-"],
    ] {
        let (code, err) = run_to_dev_full(&args);
        assert_eq!(code, 4, "{args:?}: {err}");
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert!(err.contains("standard output"), "{args:?}: {err}");
    }
}

#[test]
fn a_closed_standard_output_is_an_io_error_not_a_panic() {
    let (_, cfg, _) = setup("closed_pipe");
    for args in [
        vec![
            "-q",
            "synth",
            "-c",
            cfg.as_str(),
            "-o",
            "-",
            "--rows",
            "200000",
        ],
        vec!["-q", "check", "--units", cfg.as_str()],
    ] {
        // A pipe whose reader is closed before the program starts: every write to it fails
        // with EPIPE, however small the output.
        let (reader, writer) = std::io::pipe().unwrap();
        drop(reader);
        let mut child = Command::new(BIN)
            .args(&args)
            .stdout(writer)
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        let mut err = String::new();
        child
            .stderr
            .take()
            .unwrap()
            .read_to_string(&mut err)
            .unwrap();
        let code = child.wait().unwrap().code().unwrap_or(-1);
        assert_eq!(code, 4, "{args:?}: {err}");
        assert!(!err.contains("panicked"), "{args:?}: {err}");
    }
}

/// `--json replay … -o - | compare -`: the estimate stream is pure CSV, the JSON summary is
/// on standard error.
#[test]
fn json_summary_never_enters_the_data_stream() {
    let (d, cfg, tr) = setup("json_stream");
    let replay = Command::new(BIN)
        .args(["--json", "-q", "replay", "-c", &cfg, &tr, "-o", "-"])
        .output()
        .unwrap();
    assert_eq!(replay.status.code(), Some(0));
    let js: serde_json::Value = serde_json::from_slice(&replay.stderr).unwrap_or_else(|e| {
        panic!(
            "stderr is not JSON ({e}): {}",
            String::from_utf8_lossy(&replay.stderr)
        )
    });
    assert_eq!(js["traces"][0]["summary"]["tally"]["rows"], 200);
    let est = d.join("piped.csv");
    std::fs::write(&est, &replay.stdout).unwrap();
    let (code, js, err) = run_json(&["compare", est.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(js["files"][0]["report"]["rows"], 200);
    // The same through a pipe into `compare -`.
    let mut up = Command::new(BIN)
        .args(["--json", "-q", "replay", "-c", &cfg, &tr, "-o", "-"])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let down = Command::new(BIN)
        .args(["--json", "-q", "compare", "-"])
        .stdin(up.stdout.take().unwrap())
        .output()
        .unwrap();
    assert!(up.wait().unwrap().success());
    assert_eq!(
        down.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&down.stderr)
    );
    let js: serde_json::Value = serde_json::from_slice(&down.stdout).unwrap();
    assert_eq!(js["files"][0]["report"]["rows"], 200);
    // A failing run with data on standard output: the error is in the JSON on stderr, and
    // stderr holds nothing else.
    let out = Command::new(BIN)
        .args([
            "--json",
            "-q",
            "replay",
            "-c",
            &cfg,
            "missing.csv",
            "-o",
            "-",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(4));
    let js: serde_json::Value = serde_json::from_slice(&out.stderr).unwrap();
    assert_eq!(js["error"]["kind"], "io");
    assert!(out.stdout.is_empty());
}
