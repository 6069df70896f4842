//! Runs that have nothing to do fail loudly: no good row, no usable sample, no row to
//! synthesise each give a located error and a non-zero documented exit code, and `-` reads
//! standard input wherever it is documented. Bad cells are echoed cut short, and a very wide
//! header is checked for duplicates in linear time.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use std::io::Write;
use std::process::{Command, Stdio};

use common::*;

const BIN: &str = env!("CARGO_BIN_EXE_clampwise");

/// Run with `input` on standard input; (code, stdout, stderr).
fn run_stdin(args: &[&str], input: &[u8]) -> (i32, String, String) {
    let mut child = Command::new(BIN)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    let data = input.to_vec();
    let feeder = std::thread::spawn(move || {
        let _ = stdin.write_all(&data);
    });
    let out = child.wait_with_output().unwrap();
    feeder.join().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn skip_bad_rows_with_no_good_row_is_a_data_error() {
    let d = scratch("no_good_row");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let mut t = small_trace(3);
    for l in t.iter_mut().skip(2) {
        *l = l.replacen(",30000,", ",abc,", 1);
    }
    let tr = write(&d, "t.csv", &text(&t));
    let out = d.join("e.csv");
    let (code, _, err) = run(&[
        "-q",
        "replay",
        "-c",
        &cfg,
        &tr,
        "-o",
        out.to_str().unwrap(),
        "--skip-bad-rows",
    ]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("no good data row: all 3 rows were bad"),
        "{err}"
    );
    assert!(err.contains("line 3, column 2 (force_1_N)"), "{err}");
    assert!(!out.exists());
}

#[test]
fn fit_with_no_usable_sample_is_a_data_error_and_writes_nothing() {
    let d = scratch("fit_nothing");
    let cfg = write(&d, "cfg.toml", &newton_config());
    // Released all along: no clamp force, so no sample can carry an equation for μ.
    let mut t = small_trace(0);
    for i in 0..500 {
        t.push(format!("{},0,0,0,2.0,100.0,0", f64::from(i) * 0.001));
    }
    let tr = write(&d, "t.csv", &text(&t));
    let fitted = d.join("fitted.toml");
    let (code, _, err) = run(&["-q", "fit", "-c", &cfg, &tr, "-o", fitted.to_str().unwrap()]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("no usable sample: of 500 rows, 500 were not slipping"),
        "{err}"
    );
    assert!(!fitted.exists());
}

#[test]
fn fit_that_reaches_no_entry_fails_and_writes_nothing() {
    let d = scratch("fit_unreached");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let tr = write(&d, "t.csv", &text(&small_trace(400)));
    let fitted = d.join("fitted.toml");
    let (code, out, err) = run(&[
        "-q",
        "fit",
        "-c",
        &cfg,
        &tr,
        "-o",
        fitted.to_str().unwrap(),
        "--min-coverage",
        "1e9",
    ]);
    assert_eq!(code, 3, "{out}{err}");
    assert!(
        err.contains("no table entry reached --min-coverage"),
        "{err}"
    );
    assert!(!fitted.exists());
}

#[test]
fn synth_of_zero_rows_is_a_usage_error() {
    let d = scratch("synth_zero");
    let cfg = write(&d, "cfg.toml", DEMO);
    let out = d.join("t.csv");
    for extra in [["--rows", "0"], ["--duration-s", "0.0001"]] {
        let mut args = vec![
            "-q",
            "synth",
            "-c",
            cfg.as_str(),
            "-o",
            out.to_str().unwrap(),
        ];
        args.extend(extra);
        let (code, _, err) = run(&args);
        assert_eq!(code, 1, "{extra:?}: {err}");
        assert!(err.contains("no rows to synthesise"), "{err}");
        assert!(!out.exists());
    }
}

#[test]
fn a_dash_reads_the_config_from_standard_input() {
    let (code, out, err) = run_stdin(&["check", "-"], DEMO.as_bytes());
    assert_eq!(code, 0, "{err}");
    assert!(out.starts_with("-: ok"), "{out}");
    let (code, out, _) = run_stdin(&["check", "-"], b"[device]\nname = 1\n");
    assert_eq!(code, 1);
    assert!(out.contains("-:2:"), "{out}");
    let (code, out, err) = run_stdin(
        &["-q", "synth", "-c", "-", "-o", "-", "--rows", "10"],
        DEMO.as_bytes(),
    );
    assert_eq!(code, 0, "{err}");
    assert_eq!(out.lines().filter(|l| !l.starts_with('#')).count(), 11);
    // Standard input cannot feed both the config and the trace.
    let (code, _, err) = run_stdin(&["-q", "replay", "-c", "-", "-", "-o", "/dev/null"], b"");
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("only once"), "{err}");
}

#[test]
fn a_huge_bad_cell_is_echoed_cut_short() {
    let d = scratch("huge_cell");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let mut t = small_trace(20);
    let big = "x".repeat(5_000_000);
    t[10] = format!("0.008,30000,{big},29990,2.0,100.0,-14500");
    let tr = write(&d, "t.csv", &text(&t));
    let out = d.join("e.csv");
    let (code, stdout, err) = run(&["replay", "-q", "-c", &cfg, &tr, "-o", out.to_str().unwrap()]);
    assert_eq!(code, 2, "{}", &err[..err.len().min(500)]);
    let echoed = format!(
        "cannot read '{}… (5000000 bytes)' as a number",
        "x".repeat(64)
    );
    assert!(err.contains(&echoed), "{}", &err[..err.len().min(500)]);
    assert!(
        err.len() < 2_000 && stdout.len() < 2_000,
        "{} {}",
        err.len(),
        stdout.len()
    );
    let partial = std::fs::read_to_string(format!("{}.partial", out.display())).unwrap();
    assert!(partial.len() < 10_000, "{}", partial.len());
    assert!(partial.trim_end().ends_with("as a number"));
}

#[test]
fn a_duplicate_among_many_columns_is_located() {
    let d = scratch("wide_header");
    let cfg = write(&d, "cfg.toml", &newton_config());
    let mut header = small_trace(0)[1].clone();
    for i in 0..80_000 {
        header.push_str(&format!(",extra_{i}"));
    }
    header.push_str(",extra_79999");
    let tr = write(&d, "t.csv", &format!("{header}\n"));
    let (code, _, err) = replay(&cfg, &tr, "/dev/null", &[]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("line 1, column 80008 (extra_79999): header name 'extra_79999' appears twice"),
        "{err}"
    );
}
