//! What the summaries say matches what was run: the demo lists only the faults inside its
//! trace and every flag the replay counted, prints time steps without float noise, and
//! `compare`'s gates judge what they name (slipping rows by default; holding rows by their own
//! gate).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use common::*;

#[test]
fn demo_summary_matches_the_run_and_compare_gates_are_explicit() {
    let d = scratch("demo_summary");
    let dir = d.join("out");
    let dir_s = dir.display().to_string();
    let (code, out, err) = run(&[
        "-q",
        "demo",
        "--out-dir",
        &dir_s,
        "--duration-s",
        "130",
        "--no-plots",
    ]);
    assert_eq!(code, 0, "{err}");
    // The two faults that start before 130 s, and not the two after.
    assert!(
        out.contains("faults stuck:2@40..45, rail_high:3@120..121\n"),
        "{out}"
    );
    assert!(
        !out.contains("dropout") && !out.contains("offset:2"),
        "{out}"
    );
    let js: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap();
    // Every flag the replay counted is in the summary line, with its count.
    let flags = js["replay"]["tally"]["flags"].as_object().unwrap();
    assert!(!flags.is_empty());
    let line = out
        .lines()
        .find(|l| l.trim_start().starts_with("flagged rows:"))
        .unwrap();
    for (name, n) in flags {
        assert!(
            line.contains(&format!("{name} {n}")),
            "{name} {n} in {line}"
        );
    }
    // 1 ms steps, as the trace says, not 0.0010000000000000009.
    let text = std::fs::read_to_string(dir.join("summary.json")).unwrap();
    assert!(text.contains("\"median_step_s\": 0.001,"), "median step");
    for l in text.lines().filter(|l| l.contains("_step_s\"")) {
        assert!(l.trim().len() < 32, "float noise in summary.json: {l}");
    }

    // compare on the demo's estimate: the gates' states are named and applied.
    let est = dir.join("estimate.csv").display().to_string();
    let cfg = dir.join("demo-hoist-brake.toml").display().to_string();
    let (code, js, err) = run_json(&["compare", &est, "-c", &cfg]);
    assert_eq!(code, 0, "{err}");
    let r = &js["files"][0]["report"];
    assert_eq!(r["gated"], r["slipping"]);
    let rel = &r["gated"]["relative"];
    assert!(
        rel["n"].as_u64().unwrap() > 1000 && rel["floor_nm"] == 10.0,
        "{rel}"
    );
    // Regions in numeric order: the temperature bands' lower edges increase.
    let lows: Vec<f64> = r["regions"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|g| g["region"].as_str())
        .filter_map(|g| g.strip_prefix("temperature "))
        .filter_map(|g| g.split(['–', ' ']).next().and_then(|x| x.parse().ok()))
        .collect();
    assert!(
        lows.len() >= 2 && lows.windows(2).all(|w| w[0] < w[1]),
        "{lows:?}"
    );
    let (code, js, _) = run_json(&["compare", &est, "--gate-states", "slipping,released"]);
    assert_eq!(code, 0);
    let r = &js["files"][0]["report"];
    assert_eq!(r["gated"]["n"], r["overall"]["n"]);
    // The holding gate: count and worst margin of the rows outside ±capacity.
    let outside = r["holding"]["outside_capacity"].as_u64().unwrap();
    let n = outside.to_string();
    assert_eq!(
        run(&["-q", "compare", &est, "--max-holding-violations", &n]).0,
        0
    );
    if outside > 0 {
        let fewer = (outside - 1).to_string();
        let (code, out, _) = run(&["-q", "compare", &est, "--max-holding-violations", &fewer]);
        assert_eq!(code, 3);
        assert!(
            out.contains(&format!("THRESHOLD FAILED: {outside} holding rows")),
            "{out}"
        );
    }
    let (code, _, err) = run(&["-q", "compare", &est, "--gate-states", "holding"]);
    assert_eq!(code, 1);
    assert!(err.contains("--max-holding-violations"), "{err}");
}
