//! Streaming: a long trace piped from `synth` into `replay` on standard input keeps memory
//! bounded (the replay's peak resident memory does not grow with the row count).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::process::{Command, Stdio};

use common::*;

/// Pipe `rows` synthetic rows through replay (estimate to /dev/null); the replay's summary.
fn pipeline(rows: u64) -> serde_json::Value {
    let d = scratch(&format!("stream_{rows}"));
    let cfg = write(&d, "demo.toml", DEMO);
    let bin = env!("CARGO_BIN_EXE_clampwise");
    let mut synth = Command::new(bin)
        .args([
            "-q",
            "synth",
            "-c",
            &cfg,
            "-o",
            "-",
            "--scenario",
            "hoist",
            "--rows",
            &rows.to_string(),
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let replay = Command::new(bin)
        .args(["--json", "-q", "replay", "-c", &cfg, "-", "-o", "/dev/null"])
        .stdin(synth.stdout.take().unwrap())
        .output()
        .unwrap();
    assert!(synth.wait().unwrap().success());
    assert_eq!(
        replay.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&replay.stderr)
    );
    let js: serde_json::Value = serde_json::from_slice(&replay.stdout).unwrap();
    let s = js["traces"][0]["summary"].clone();
    assert_eq!(s["tally"]["rows"], rows);
    s
}

fn peak(s: &serde_json::Value) -> f64 {
    s["peak_rss_bytes"]
        .as_f64()
        .expect("peak memory is reported on Linux")
        / 1_048_576.0
}

#[test]
fn memory_does_not_grow_with_the_trace() {
    let small = pipeline(100_000);
    let large = pipeline(2_000_000);
    let (a, b) = (peak(&small), peak(&large));
    eprintln!(
        "peak RSS: {a:.1} MiB for 1e5 rows, {b:.1} MiB for 2e6 rows; {:.0} rows/s",
        large["rows_per_s"]
    );
    assert!(b < 64.0, "{b} MiB");
    // 20× the rows, at most 4 MiB more memory (buffers, allocator slack).
    assert!(b - a < 4.0, "{a} → {b} MiB");
}

/// 10⁷ rows (about 30 s in release): `cargo test -p clampwise-sim --release --test streaming -- --ignored`.
#[test]
#[ignore = "long: 10^7 rows"]
fn ten_million_rows_bounded() {
    let s = pipeline(10_000_000);
    eprintln!(
        "peak RSS {:.1} MiB, {:.0} rows/s",
        peak(&s),
        s["rows_per_s"]
    );
    assert!(peak(&s) < 64.0);
}
