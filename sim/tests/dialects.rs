//! Real-world logs: CSV dialects (`;` and tab separators, decimal commas), command-line time
//! base and column map, resampling a log recorded at another rate, and `--columns`.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing,
    clippy::float_cmp
)]

mod common;

use std::path::Path;

use common::*;

/// A demo trace synthesised by `clampwise synth` (comma-separated, decimal point).
fn demo_trace(d: &Path, rows: &str) -> (String, String) {
    let cfg = write(d, "demo.toml", DEMO);
    let tr = d.join("trace.csv").display().to_string();
    let (code, _, err) = run(&[
        "-q", "synth", "-c", &cfg, "-o", &tr, "--rows", rows, "--seed", "7",
    ]);
    assert_eq!(code, 0, "{err}");
    (cfg, tr)
}

/// The data lines of a CSV file (comment lines, which name the input, left out).
fn data_lines(path: &str) -> Vec<String> {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .filter(|l| !l.starts_with('#'))
        .map(str::to_string)
        .collect()
}

/// `text` re-written with `sep` between columns and `mark` as the decimal mark (comment
/// lines kept as they are).
fn redialect(text: &str, sep: &str, mark: &str) -> String {
    let mut o = String::new();
    for l in text.lines() {
        if l.starts_with('#') {
            o.push_str(l);
        } else {
            o.push_str(&l.replace(',', sep).replace('.', mark));
        }
        o.push('\n');
    }
    o
}

fn replay_json(args: &[&str]) -> (i32, serde_json::Value, String) {
    let mut a = vec!["replay"];
    a.extend_from_slice(args);
    run_json(&a)
}

/// The `;`-separated, decimal-comma file of a spreadsheet export, and a tab-separated one,
/// give estimates identical to the comma/point original, byte for byte; the summary says what
/// was sniffed. A `;` file read as ','-separated would fail with "missing column 't_s'".
#[test]
fn semicolon_decimal_comma_and_tab_files_replay_as_the_original() {
    let d = scratch("dialect_same");
    let (cfg, tr) = demo_trace(&d, "3000");
    let original = std::fs::read_to_string(&tr).unwrap();
    let base = d.join("base.csv").display().to_string();
    let (code, v, err) = replay_json(&["-c", &cfg, &tr, "-o", &base]);
    assert_eq!(code, 0, "{err}");
    let s = &v["traces"][0]["summary"];
    assert_eq!(s["dialect"]["delimiter"], "comma");
    assert_eq!(s["dialect"]["decimal"], "point");
    assert_eq!(s["dialect"]["decimal_from"], "default");
    for (name, sep, mark, delim, dec) in [
        ("semi.csv", ";", ",", "semicolon", "comma"),
        ("tab.tsv", "\t", ".", "tab", "point"),
        ("tab_comma.tsv", "\t", ",", "tab", "comma"),
    ] {
        let t = write(&d, name, &redialect(&original, sep, mark));
        let out = d.join(format!("{name}.est.csv")).display().to_string();
        let (code, v, err) = replay_json(&["-c", &cfg, &t, "-o", &out]);
        assert_eq!(code, 0, "{name}: {v} {err}");
        let s = &v["traces"][0]["summary"];
        assert_eq!(s["dialect"]["delimiter"], delim, "{name}");
        assert_eq!(s["dialect"]["delimiter_from"], "sniffed", "{name}");
        assert_eq!(s["dialect"]["decimal"], dec, "{name}");
        assert_eq!(s["dialect"]["decimal_from"], "sniffed", "{name}");
        assert_eq!(data_lines(&out), data_lines(&base), "{name}");
    }
    // The human summary says it too.
    let t = d.join("semi.csv").display().to_string();
    let out = d.join("semi.human.csv").display().to_string();
    let (code, stdout, err) = replay(&cfg, &t, &out, &[]);
    assert_eq!(code, 0, "{err}");
    assert!(
        stdout.contains("read as: ';'-separated (sniffed), decimal comma (sniffed)"),
        "{stdout}"
    );
}

/// Set by option instead of sniffed; a decimal comma cannot go with ',' separators.
#[test]
fn dialect_set_by_option() {
    let d = scratch("dialect_option");
    let (cfg, tr) = demo_trace(&d, "500");
    let semi = write(
        &d,
        "semi.csv",
        &redialect(&std::fs::read_to_string(&tr).unwrap(), ";", ","),
    );
    let out = d.join("est.csv").display().to_string();
    let (code, v, err) = replay_json(&[
        "-c",
        &cfg,
        &semi,
        "-o",
        &out,
        "--delimiter",
        "semicolon",
        "--decimal",
        "comma",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        v["traces"][0]["summary"]["dialect"]["delimiter_from"],
        "option"
    );
    assert_eq!(
        v["traces"][0]["summary"]["dialect"]["decimal_from"],
        "option"
    );
    // Read with the wrong mark: the cell's error says which mark is in use and how to set it.
    let (code, _, err) = replay(&cfg, &semi, &out, &["--decimal", "point"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("--decimal comma"), "{err}");
    let (code, _, err) = replay(&cfg, &tr, &out, &["--decimal", "comma"]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("','-separated"), "{err}");
}

/// `|` separators, a header mixing separators, rows in another separator than the header,
/// and mixed decimal marks: the named error, located at its line, naming what was seen and
/// the options.
#[test]
fn unrecognised_dialects_are_named_and_located() {
    let d = scratch("dialect_bad");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let good = small_trace(50);
    let out = d.join("est.csv").display().to_string();
    let cases: Vec<(&str, String, &str, &str)> = vec![
        (
            "pipe.csv",
            text(&good).replace(',', "|"),
            ":2:",
            "'|' 6 times",
        ),
        (
            "mixed_header.csv",
            text(&good).replacen("force_1_N,", "force_1_N;", 1),
            ":2:",
            "mixes separators",
        ),
        (
            "mixed_rows.csv",
            {
                let mut t = good.clone();
                t[2] = t[2].replace(',', ";");
                text(&t)
            },
            ":3:",
            "mixed separators",
        ),
        (
            "mixed_marks.csv",
            {
                let mut t: Vec<String> = good.iter().map(|l| l.replace(',', ";")).collect();
                t[4] = t[4].replacen("2.0", "2,0", 1);
                text(&t)
            },
            ":5:",
            "mixed decimal marks",
        ),
    ];
    for (name, body, at, seen) in cases {
        let t = write(&d, name, &body);
        let (code, _, err) = replay(&cfg, &t, &out, &[]);
        assert_eq!(code, 2, "{name}: {err}");
        assert!(err.contains("unrecognised CSV dialect"), "{name}: {err}");
        assert!(err.contains(&format!("{name}{at}")), "{name}: {err}");
        assert!(err.contains(seen), "{name}: {err}");
        assert!(
            err.contains("--delimiter comma|semicolon|tab")
                && err.contains("--decimal point|comma"),
            "{name}: {err}"
        );
        assert!(!Path::new(&out).exists());
    }
}

/// Every other row of a 1 kHz demo trace: a 500 Hz log.
fn half_rate(d: &Path) -> (String, String, Vec<String>) {
    let (cfg, tr) = demo_trace(d, "2001");
    let mut lines = Vec::new();
    let mut data = 0;
    for l in std::fs::read_to_string(&tr).unwrap().lines() {
        if l.starts_with('#') || l.starts_with("t_s") {
            lines.push(l.to_string());
        } else {
            if data % 2 == 0 {
                lines.push(l.to_string());
            }
            data += 1;
        }
    }
    let t = write(d, "half.csv", &text(&lines));
    (cfg, t, lines)
}

/// A 500 Hz log against the 1 kHz demo device: without --resample the located error says how
/// to resample; with `--resample hold` the estimate has the device's rows, each pointing at
/// the source line of the sample held.
#[test]
fn a_log_at_another_rate_is_resampled_only_when_asked() {
    let d = scratch("resample_hold");
    let (cfg, t, lines) = half_rate(&d);
    let out = d.join("est.csv").display().to_string();
    let (code, _, err) = replay(&cfg, &t, &out, &[]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("wrong time unit")
            && err.contains("--sample-period-s 0.002 --resample hold")
            && err.contains("(t_s)"),
        "{err}"
    );
    // Stating the rate alone is not enough: the estimator would step at the wrong period.
    let (code, _, err) = replay(&cfg, &t, &out, &["--sample-period-s", "0.002"]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("--resample"), "{err}");
    let (code, _, err) = replay(&cfg, &t, &out, &["--resample", "hold"]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("--sample-period-s"), "{err}");

    let (code, v, err) = replay_json(&[
        "-c",
        &cfg,
        &t,
        "-o",
        &out,
        "--sample-period-s",
        "0.002",
        "--resample",
        "hold",
    ]);
    assert_eq!(code, 0, "{err}");
    let r = &v["traces"][0]["summary"]["resample"];
    // 1001 samples over 0 … 2 s: ticks at 0, 1, …, 2000 ms [calc: 2 s / 1 ms + 1].
    assert_eq!(r["method"], "hold");
    assert_eq!(r["input_rows"], 1001);
    assert_eq!(r["output_rows"], 2001);
    let est = data_lines(&out);
    assert_eq!(est.len(), 2002);
    // Source line of data row j: the lines before the first data row, plus j, plus 1.
    let first_data = lines
        .iter()
        .position(|l| !l.starts_with('#') && !l.starts_with("t_s"))
        .unwrap();
    for (k, row) in est.iter().skip(1).enumerate() {
        let cells: Vec<&str> = row.split(',').collect();
        let line: usize = cells[0].parse().unwrap();
        assert_eq!(line, first_data + k / 2 + 1, "tick {k}");
        let t: f64 = cells[1].parse().unwrap();
        assert!((t - k as f64 * 0.001).abs() < 1e-12, "tick {k}: {t}");
    }
    let (code, stdout, err) = replay(
        &cfg,
        &t,
        &out,
        &["--sample-period-s", "0.002", "--resample", "hold"],
    );
    assert_eq!(code, 0, "{err}");
    assert!(
        stdout.contains("resampled (zero-order hold)")
            && stdout.contains("1001 samples in, 2001 out"),
        "{stdout}"
    );
}

/// Linear: a 500 Hz newton trace whose reference torque steps by 10 N·m per sample; the
/// estimate carries the reference through, so its odd ticks are the midpoints
/// [calc: x = xₐ + (x_b − xₐ)·(t − tₐ)/(t_b − tₐ) with t − tₐ = 1 ms of 2 ms: xₐ + 5 N·m],
/// and each row's line is the earlier sample's.
#[test]
fn linear_resampling_matches_hand_computed_values() {
    let d = scratch("resample_linear");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let mut lines =
        vec!["t_s,force_1_N,force_2_N,force_3_N,omega_in_rad_s,temp_C,torque_ref_Nm".to_string()];
    for i in 0..40 {
        let t = i as f64 * 0.002;
        lines.push(format!(
            "{t},30000,30010,29990,2.0,100.0,{}",
            -14500 + 10 * i
        ));
    }
    let t = write(&d, "t500.csv", &text(&lines));
    let out = d.join("est.csv").display().to_string();
    let (code, v, err) = replay_json(&[
        "-c",
        &cfg,
        &t,
        "-o",
        &out,
        "--sample-period-s",
        "0.002",
        "--resample",
        "linear",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(v["traces"][0]["summary"]["resample"]["output_rows"], 79);
    let est = data_lines(&out);
    let header: Vec<&str> = est[0].split(',').collect();
    let col = header.iter().position(|h| *h == "torque_ref_Nm").unwrap();
    assert_eq!(est.len(), 80);
    for (k, row) in est.iter().skip(1).enumerate() {
        let cells: Vec<&str> = row.split(',').collect();
        let expected = -14500.0 + 5.0 * k as f64;
        let got: f64 = cells[col].parse().unwrap();
        assert!(
            (got - expected).abs() < 1e-9,
            "tick {k}: {got} vs {expected}"
        );
        assert_eq!(cells[0], format!("{}", k / 2 + 2), "tick {k}");
    }
}

/// `--column` maps a renamed, rescaled column for this run; unknown quantities and units are
/// usage errors naming the option.
#[test]
fn column_override_on_the_command_line() {
    let d = scratch("column_override");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let good = small_trace(300);
    let t = write(&d, "t.csv", &text(&good));
    let base = d.join("base.csv").display().to_string();
    assert_eq!(replay(&cfg, &t, &base, &[]).0, 0);
    // force_1 in kN under another name: 30000 N = 30 kN.
    let renamed: Vec<String> = good
        .iter()
        .map(|l| {
            l.replace("force_1_N", "Kraft1")
                .replacen(",30000,", ",30,", 1)
        })
        .collect();
    let t2 = write(&d, "renamed.csv", &text(&renamed));
    let out = d.join("est.csv").display().to_string();
    let (code, _, err) = replay(&cfg, &t2, &out, &[]);
    assert_eq!(code, 2);
    assert!(err.contains("missing column 'force_1_N'"), "{err}");
    let (code, _, err) = replay(&cfg, &t2, &out, &["--column", "force_1=Kraft1:kN"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(data_lines(&out), data_lines(&base));
    let (code, _, err) = replay(&cfg, &t2, &out, &["--column", "force_9=Kraft1:kN"]);
    assert_eq!(code, 1, "{err}");
    assert!(
        err.contains("unknown quantity 'force_9'") && err.contains("omega_in"),
        "{err}"
    );
    let (code, _, err) = replay(&cfg, &t2, &out, &["--column", "force_1=Kraft1:furlongs"]);
    assert_ne!(code, 0, "{err}");
    assert!(err.contains("--column force_1"), "{err}");
}

/// `--columns` writes only the columns asked for, in that order, with the values of the full
/// file; an unknown name lists the valid ones.
#[test]
fn columns_subset() {
    let d = scratch("columns_subset");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let t = write(&d, "t.csv", &text(&small_trace(300)));
    let full = d.join("full.csv").display().to_string();
    assert_eq!(replay(&cfg, &t, &full, &[]).0, 0);
    let sub = d.join("sub.csv").display().to_string();
    let (code, _, err) = replay(&cfg, &t, &sub, &["--columns", "state,t_s,torque_Nm,flags"]);
    assert_eq!(code, 0, "{err}");
    let full = data_lines(&full);
    let sub = data_lines(&sub);
    assert_eq!(sub[0], "state,t_s,torque_Nm,flags");
    let h: Vec<&str> = full[0].split(',').collect();
    let idx = |n: &str| h.iter().position(|x| *x == n).unwrap();
    assert_eq!(sub.len(), full.len());
    for (f, s) in full.iter().zip(&sub).skip(1) {
        let f: Vec<&str> = f.split(',').collect();
        let want = [idx("state"), idx("t_s"), idx("torque_Nm"), idx("flags")].map(|i| f[i]);
        assert_eq!(s.split(',').collect::<Vec<_>>(), want);
    }
    let (code, _, err) = replay(&cfg, &t, "/dev/null", &["--columns", "t_s,torque"]);
    assert_eq!(code, 1, "{err}");
    assert!(
        err.contains("unknown estimate column 'torque'") && err.contains("uncertainty_Nm"),
        "{err}"
    );
}

/// `fit` reads a `;`/decimal-comma trace as the original: the same fitted table.
#[test]
fn fit_reads_the_dialects_too() {
    let d = scratch("dialect_fit");
    let cfg = write(&d, "demo.toml", DEMO);
    let tr = d.join("trace.csv").display().to_string();
    let (code, _, err) = run(&[
        "-q",
        "synth",
        "-c",
        &cfg,
        "-o",
        &tr,
        "--scenario",
        "steady",
        "--rows",
        "4000",
    ]);
    assert_eq!(code, 0, "{err}");
    let semi = write(
        &d,
        "semi.csv",
        &redialect(&std::fs::read_to_string(&tr).unwrap(), ";", ","),
    );
    let fit = |t: &str, out: &str| {
        let out = d.join(out).display().to_string();
        let (code, _, err) = run(&[
            "-q",
            "fit",
            "-c",
            &cfg,
            t,
            "-o",
            &out,
            "--min-coverage",
            "1",
        ]);
        assert_eq!(code, 0, "{err}");
        // The fitted config names its trace in a comment.
        std::fs::read_to_string(&out).unwrap().replace(t, "TRACE")
    };
    let (a, b) = (fit(&tr, "a.toml"), fit(&semi, "b.toml"));
    assert!(a.contains("from TRACE"), "{a}");
    assert_eq!(a, b);
}
