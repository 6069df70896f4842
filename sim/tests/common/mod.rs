//! Helpers shared by the integration tests: run the `clampwise` binary, scratch directories,
//! configs and small traces.
#![allow(
    dead_code,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The demo config text.
pub const DEMO: &str = include_str!("../../configs/demo-hoist-brake.toml");

/// A fresh scratch directory for one test.
pub fn scratch(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("clampwise-tests")
        .join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Run the binary with arguments; returns (exit code, stdout, stderr).
pub fn run(args: &[&str]) -> (i32, String, String) {
    let out: Output = Command::new(env!("CARGO_BIN_EXE_clampwise"))
        .args(args)
        .output()
        .expect("run clampwise");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// `clampwise -q replay -c CONFIG TRACE -o OUT` with `extra` arguments after them; returns
/// (exit code, stdout, stderr).
pub fn replay(config: &str, trace: &str, out: &str, extra: &[&str]) -> (i32, String, String) {
    let mut a = vec!["-q", "replay", "-c", config, trace, "-o", out];
    a.extend_from_slice(extra);
    run(&a)
}

/// Run and parse the JSON printed with `--json`.
pub fn run_json(args: &[&str]) -> (i32, serde_json::Value, String) {
    let mut a = vec!["--json", "-q"];
    a.extend_from_slice(args);
    let (code, out, err) = run(&a);
    let v = serde_json::from_str(&out)
        .unwrap_or_else(|e| panic!("not JSON ({e}): {out}\nstderr: {err}"));
    (code, v, err)
}

/// Write a file and return its path as a string.
pub fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

/// The demo config with canonical force columns in newtons (`force_1_N` …) instead of the
/// demo's raw counts, for hand-written traces.
pub fn newton_config() -> String {
    DEMO.replace(
        "force_1 = { column = \"force_1_counts\", unit = \"counts\" }\n",
        "",
    )
    .replace(
        "force_2 = { column = \"force_2_counts\", unit = \"counts\" }\n",
        "",
    )
    .replace(
        "force_3 = { column = \"force_3_counts\", unit = \"counts\" }\n",
        "",
    )
}

/// A small good trace in newtons: a steady slip at 2 rad/s and 30 kN, 1 kHz.
pub fn small_trace(rows: usize) -> Vec<String> {
    let mut v = vec![
        "# a hand-written test trace".to_string(),
        "t_s,force_1_N,force_2_N,force_3_N,omega_in_rad_s,temp_C,torque_ref_Nm".to_string(),
    ];
    for i in 0..rows {
        let t = i as f64 * 0.001;
        v.push(format!("{t},30000,30010,29990,2.0,100.0,-14500"));
    }
    v
}

/// Lines joined with newlines, and a final newline.
pub fn text(lines: &[String]) -> String {
    let mut s = lines.join("\n");
    s.push('\n');
    s
}
