//! The bad-input suite: each broken trace or config gives its located error (file, line,
//! column, header or key), the documented exit code, and no output under the final name.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::path::Path;

use common::*;

/// Replay `trace_text` with the newton config; returns (code, stderr, output path).
fn replay_text(
    name: &str,
    trace_text: &str,
    extra: &[&str],
) -> (i32, String, String, std::path::PathBuf) {
    let d = scratch(name);
    let cfg = write(&d, "cfg.toml", &newton_config());
    let tr = write(&d, "trace.csv", trace_text);
    let out = d.join("est.csv");
    let out_s = out.display().to_string();
    let mut args = vec![
        "-q",
        "replay",
        "-c",
        cfg.as_str(),
        tr.as_str(),
        "-o",
        out_s.as_str(),
    ];
    args.extend_from_slice(extra);
    let (code, stdout, stderr) = run(&args);
    (code, stderr, stdout, out)
}

fn assert_no_output(out: &Path) {
    assert!(
        !out.exists(),
        "{} must not exist after a failed run",
        out.display()
    );
}

#[test]
fn good_trace_replays() {
    let (code, err, stdout, out) = replay_text("good", &text(&small_trace(200)), &[]);
    assert_eq!(code, 0, "{err}");
    assert!(out.exists());
    assert!(stdout.contains("200 replayed"), "{stdout}");
}

#[test]
fn wrong_header() {
    let mut t = small_trace(10);
    t[1] = "time,f1,f2,f3,speed,temp,torque".into();
    let (code, err, _, out) = replay_text("wrong_header", &text(&t), &[]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains(":2:") && err.contains("line 2"),
        "header is on line 2 after one comment: {err}"
    );
    assert!(err.contains("missing column 't_s'"), "{err}");
    assert_no_output(&out);
}

#[test]
fn missing_header_line_is_named() {
    let t = small_trace(10);
    let (code, err, _, _) = replay_text("no_header", &text(&t[2..]), &[]);
    assert_eq!(code, 2);
    assert!(err.contains("looks like data"), "{err}");
}

#[test]
fn missing_column() {
    let t: Vec<String> = small_trace(10)
        .iter()
        .map(|l| {
            let mut f: Vec<&str> = l.split(',').collect();
            if f.len() > 2 {
                f.remove(2);
            }
            f.join(",")
        })
        .collect();
    let (code, err, _, out) = replay_text("missing_column", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(err.contains("missing column 'force_2_N'"), "{err}");
    assert!(err.contains("line 2"), "{err}");
    assert_no_output(&out);
}

#[test]
fn non_numeric_cell() {
    let mut t = small_trace(50);
    t[30] = "0.028,30000,abc,29990,2.0,100.0,-14500".into();
    let (code, err, _, out) = replay_text("non_numeric", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("line 31, column 3 (force_2_N): cannot read 'abc' as a number"),
        "{err}"
    );
    assert_no_output(&out);
    // The rows before the error were not passed off as complete: only a .partial is left,
    // and it ends with an INCOMPLETE marker.
    let partial = std::fs::read_to_string(format!("{}.partial", out.display())).unwrap();
    assert!(
        partial
            .trim_end()
            .ends_with("cannot read 'abc' as a number"),
        "{}",
        &partial[partial.len() - 200..]
    );
    assert!(partial.contains("# INCOMPLETE"));
}

#[test]
fn non_numeric_cell_skipped_and_counted() {
    let mut t = small_trace(50);
    t[30] = "0.028,30000,abc,29990,2.0,100.0,-14500".into();
    let d = scratch("skip_counted");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let tr = write(&d, "trace.csv", &text(&t));
    let out = d.join("est.csv").display().to_string();
    let (code, js, err) = run_json(&["replay", "-c", &cfg, &tr, "-o", &out, "--skip-bad-rows"]);
    assert_eq!(code, 0, "{err}");
    let s = &js["traces"][0]["summary"];
    assert_eq!(s["skipped"]["count"], 1);
    assert_eq!(s["rows_read"], 50);
    assert_eq!(s["tally"]["rows"], 49);
    assert!(
        s["skipped"]["first"][0]
            .as_str()
            .unwrap()
            .contains("line 31, column 3"),
        "{s}"
    );
    // The human summary says so too.
    let (_, stdout, _) = replay(&cfg, &tr, &out, &["--skip-bad-rows"]);
    assert!(
        stdout.contains("1 skipped") && stdout.contains("skipped: "),
        "{stdout}"
    );
}

#[test]
fn nan_and_inf_rejected() {
    for (i, bad) in ["NaN", "inf", "-infinity"].iter().enumerate() {
        let mut t = small_trace(20);
        t[12] = format!("0.010,30000,30010,29990,{bad},100.0,-14500");
        let (code, err, _, out) = replay_text(&format!("nan_{i}"), &text(&t), &[]);
        assert_eq!(code, 2);
        assert!(err.contains("line 13, column 5 (omega_in_rad_s)"), "{err}");
        assert!(err.contains("not a finite number"), "{err}");
        assert_no_output(&out);
    }
}

#[test]
fn non_monotonic_time() {
    let mut t = small_trace(100);
    t[60] = "0.020,30000,30010,29990,2.0,100.0,-14500".into();
    let (code, err, _, out) = replay_text("non_monotonic", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(err.contains("line 61, column 1 (t_s)"), "{err}");
    assert!(err.contains("time goes backwards"), "{err}");
    assert_no_output(&out);
    let (code, err, stdout, out) =
        replay_text("non_monotonic_skip", &text(&t), &["--skip-bad-rows"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.exists());
    assert!(stdout.contains("1 non-monotonic rows skipped"), "{stdout}");
}

#[test]
fn duplicates_and_gaps_reported() {
    let mut t = small_trace(100);
    t[40] = t[39].clone(); // duplicate time stamp at line 41
    t.remove(70); // one missing row: a gap of 2 periods at line 71
    let d = scratch("dup_gap");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let tr = write(&d, "trace.csv", &text(&t));
    let out = d.join("e.csv").display().to_string();
    let (code, js, err) = run_json(&["replay", "-c", &cfg, &tr, "-o", &out]);
    assert_eq!(code, 0, "{err}");
    let tm = &js["traces"][0]["summary"]["time"];
    assert_eq!(tm["duplicates"], 1);
    assert_eq!(tm["first_duplicate_line"], 41);
    // The duplicate makes the step after it two periods long: a gap at line 42, and the
    // missing row another at line 71.
    assert_eq!(tm["gaps"], 2);
    assert_eq!(tm["first_gap_line"], 42);
}

#[test]
fn empty_file_and_header_only() {
    let (code, err, _, out) = replay_text("empty", "", &[]);
    assert_eq!(code, 2);
    assert!(err.contains("empty file"), "{err}");
    assert_no_output(&out);
    let (code, err, _, _) = replay_text("comments_only", "# nothing here\n# at all\n", &[]);
    assert_eq!(code, 2);
    assert!(err.contains("empty file"), "{err}");
    let t = small_trace(0);
    let (code, err, _, out) = replay_text("header_only", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("line 3") && err.contains("no data rows"),
        "{err}"
    );
    assert_no_output(&out);
}

#[test]
fn truncated_last_line() {
    let t = small_trace(30);
    let mut s = text(&t);
    s.truncate(s.len() - 20); // cut into the last row, no newline at the end
    let (code, err, _, out) = replay_text("truncated", &s, &[]);
    assert_eq!(code, 2);
    assert!(err.contains("line 32"), "{err}");
    assert!(err.contains("truncated last line"), "{err}");
    assert_no_output(&out);
    // A last line cut after its last digit: its values are used, and it is reported.
    let mut s = text(&t);
    s.pop();
    let (code, err, stdout, _) = replay_text("unterminated", &s, &[]);
    assert_eq!(code, 0, "{err}");
    assert!(
        stdout.contains("last line 32 has no line terminator"),
        "{stdout}"
    );
}

#[test]
fn row_with_extra_fields() {
    let mut t = small_trace(10);
    t[5].push_str(",7");
    let (code, err, _, _) = replay_text("extra_field", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("line 6") && err.contains("row has 8 fields, the header has 7"),
        "{err}"
    );
}

#[test]
fn unknown_config_key() {
    let d = scratch("unknown_key");
    let src = DEMO.replace("fade_c = 350.0", "fade_temperature_c = 350.0");
    let line = src
        .lines()
        .position(|l| l.starts_with("fade_temperature_c"))
        .unwrap()
        + 1;
    let cfg = write(&d, "cfg.toml", &src);
    let (code, _, err) = run(&["check", &cfg]);
    assert_eq!(code, 1);
    let (_, out, _) = run(&["check", &cfg]);
    assert!(
        out.contains(&format!(
            "cfg.toml:{line}:1: thermal.fade_temperature_c: unknown field `fade_temperature_c`"
        )),
        "{out}\n{err}"
    );
    // Every subcommand that reads a config refuses it the same way.
    let (code, _, err) = run(&["tables", "-c", &cfg]);
    assert_eq!(code, 1);
    assert!(err.contains(&format!(":{line}:1:")), "{err}");
}

#[test]
fn bad_config_value_located() {
    let d = scratch("bad_value");
    let src = DEMO.replace("outer_radius_m = 0.68", "outer_radius_m = 0.50");
    let line = src
        .lines()
        .position(|l| l.starts_with("inner_radius_m"))
        .unwrap()
        + 1;
    let cfg = write(&d, "cfg.toml", &src);
    let (code, js, _) = run_json(&["check", &cfg]);
    assert_eq!(code, 1);
    let issue = &js["configs"][0]["issues"][0];
    assert_eq!(issue["key"], "contact.inner_radius_m");
    assert_eq!(issue["line"], line);
    assert!(
        issue["message"]
            .as_str()
            .unwrap()
            .contains("must be below disc.outer_radius_m")
    );
}

#[test]
fn wrong_units() {
    // 1. The trace carries the force in kN under its unit-named header: the canonical N
    //    column is missing, and the message says how to map it.
    let t: Vec<String> = small_trace(10)
        .iter()
        .map(|l| l.replacen("force_1_N", "force_1_kN", 1))
        .collect();
    let (code, err, _, out) = replay_text("units_header", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("the trace has 'force_1_kN' in unit 'kN'"),
        "{err}"
    );
    assert!(
        err.contains("force_1 = { column = \"force_1_kN\", unit = \"kN\" }"),
        "{err}"
    );
    assert_no_output(&out);

    // 2. A mapping with a unit of the wrong kind, and one that contradicts the header's unit.
    let d = scratch("units_config");
    for (i, (mapping, expect)) in [
        (
            "force_1 = { column = \"clamp_a\", unit = \"rpm\" }",
            "'rpm' is not a force unit",
        ),
        (
            "force_1 = { column = \"force_1_kN\", unit = \"N\" }",
            "carries unit 'kN' in its name",
        ),
        (
            "force_1 = { column = \"p1\", unit = \"bar\" }",
            "needs piston_area_m2",
        ),
    ]
    .iter()
    .enumerate()
    {
        let src = DEMO.replace(
            "force_1 = { column = \"force_1_counts\", unit = \"counts\" }",
            mapping,
        );
        let line = src
            .lines()
            .position(|l| l.starts_with("force_1 ="))
            .unwrap()
            + 1;
        let cfg = write(&d, &format!("cfg{i}.toml"), &src);
        let (code, out, _) = run(&["check", &cfg]);
        assert_eq!(code, 1);
        assert!(
            out.contains(&format!(":{line}:"))
                && out.contains("trace.columns.force_1.unit")
                && out.contains(expect),
            "{out}"
        );
    }

    // 3. Time stamps in milliseconds under a column declared in seconds.
    let t: Vec<String> = small_trace(200)
        .iter()
        .enumerate()
        .map(|(i, l)| {
            if i >= 2 {
                l.replacen(&l[..l.find(',').unwrap()], &format!("{}", i - 2), 1)
            } else {
                l.clone()
            }
        })
        .collect();
    let (code, err, _, out) = replay_text("units_time", &text(&t), &[]);
    assert_eq!(code, 2);
    assert!(
        err.contains("wrong time unit") && err.contains("(t_s)"),
        "{err}"
    );
    assert_no_output(&out);

    // 4. Converted units are honoured: the same trace in kN, rpm and °F, mapped, gives the
    //    same estimate as in N, rad/s and °C.
    let d = scratch("units_converted");
    let mut cfg = newton_config();
    cfg.push_str("force_1 = { column = \"fa_kN\", unit = \"kN\" }\nforce_2 = { column = \"fb_kN\", unit = \"kN\" }\nforce_3 = { column = \"fc_kN\", unit = \"kN\" }\nomega_in = { column = \"drum_rpm\", unit = \"rpm\" }\ntemperature = { column = \"disc_F\", unit = \"F\" }\n");
    let cfg = write(&d, "cfg.toml", &cfg);
    let rpm = 2.0 * 60.0 / std::f64::consts::TAU;
    let mut lines = vec!["t_s,fa_kN,fb_kN,fc_kN,drum_rpm,disc_F,torque_ref_Nm".to_string()];
    for i in 0..20 {
        lines.push(format!(
            "{},30,30.01,29.99,{rpm},212,-14500",
            f64::from(i) * 0.001
        ));
    }
    let tr = write(&d, "kn.csv", &text(&lines));
    let out = d.join("kn.est.csv").display().to_string();
    let (code, _, err) = replay(&cfg, &tr, &out, &[]);
    assert_eq!(code, 0, "{err}");
    let est = std::fs::read_to_string(&out).unwrap();
    let last = est.lines().last().unwrap();
    let f: Vec<&str> = last.split(',').collect();
    // clamp force 30 kN, slip 2 rad/s, 100 °C: the same as the N / rad/s / °C trace.
    assert!(
        (f[7].parse::<f64>().unwrap() - 30_000.0).abs() < 0.01,
        "{last}"
    );
    assert!((f[8].parse::<f64>().unwrap() - 2.0).abs() < 1e-4, "{last}");
    assert!(
        (f[9].parse::<f64>().unwrap() - 100.0).abs() < 1e-4,
        "{last}"
    );
}

#[test]
fn compare_rejects_a_trace_that_is_not_an_estimate() {
    let d = scratch("compare_bad");
    let tr = write(&d, "trace.csv", &text(&small_trace(5)));
    let (code, _, err) = run(&["-q", "compare", &tr]);
    assert_eq!(code, 2);
    assert!(
        err.contains("missing column 'line'") && err.contains("not an estimate file"),
        "{err}"
    );
}

#[test]
fn missing_files_are_io_errors() {
    let (code, _, err) = run(&["check", "/nonexistent/x.toml"]);
    assert_eq!(code, 1, "{err}");
    let d = scratch("missing_trace");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let (code, _, err) = replay(&cfg, "/nonexistent/t.csv", "/tmp/x.csv", &[]);
    assert_eq!(code, 4, "{err}");
    assert!(err.contains("/nonexistent/t.csv"));
}

#[test]
fn usage_errors_exit_1() {
    let (code, _, _) = run(&["replay"]);
    assert_eq!(code, 1);
    let (code, _, _) = run(&["frobnicate"]);
    assert_eq!(code, 1);
    let (code, out, _) = run(&["--help"]);
    assert_eq!(code, 0);
    assert!(out.contains("Exit codes"));
    let d = scratch("bad_fault");
    let cfg = write(&d, "cfg.toml", DEMO);
    let (code, _, err) = run(&[
        "-q",
        "synth",
        "-c",
        &cfg,
        "-o",
        "x.csv",
        "--fault",
        "melt:1@0..1",
    ]);
    assert_eq!(code, 1);
    assert!(err.contains("unknown kind 'melt'"), "{err}");
}
