//! Logs other than CSV: ASAM MDF4 files written by Python's asammdf and a Parquet file
//! written by pyarrow (committed fixtures, made by `sim/tests/fixtures/mdf4/make_fixtures.sh`
//! from one synthesised trace, `trace.csv` beside them), read as the CSV is; estimates written
//! as Parquet (with the `parquet` feature).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing,
    clippy::float_cmp
)]

mod common;

use common::*;

const CONFIG: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/configs/demo-hoist-brake.toml");

fn fixture(name: &str) -> String {
    format!("{}/tests/fixtures/mdf4/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// Every estimate column but `line` (a CSV's line, a log's row number).
const NO_LINE: &str = "t_s,torque_Nm,capacity_Nm,uncertainty_Nm,mu,radius_m,clamp_force_N,slip_speed_rad_s,lining_temp_C,bedding,wear_m,correction,state,flags,torque_ref_Nm";

/// The data lines of an estimate file (comment lines, which name the input, left out).
fn data_lines(path: &str) -> Vec<String> {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .filter(|l| !l.starts_with('#'))
        .map(str::to_string)
        .collect()
}

fn replay(args: &[&str]) -> (i32, serde_json::Value, String) {
    let mut a = vec!["replay", "-c", CONFIG];
    a.extend_from_slice(args);
    run_json(&a)
}

/// Replay `trace` into `out` with every column but `line`; the summary.
fn replay_no_line(trace: &str, out: &str, extra: &[&str]) -> serde_json::Value {
    let mut a = vec![trace, "-o", out, "--columns", NO_LINE];
    a.extend_from_slice(extra);
    let (code, v, err) = replay(&a);
    assert_eq!(code, 0, "{trace}: {err} {v}");
    v["traces"][0]["summary"].clone()
}

/// The MDF4 files asammdf wrote from `trace.csv` (4.10 uncompressed, 4.20 deflate, 4.20
/// transposed deflate) give the CSV's estimates byte for byte [practice: files written by the
/// reference Python library asammdf 8.8.28; DZ zip types 0 and 1 of ASAM MDF 4.2]; their
/// `line` column counts rows from 1.
#[test]
fn mdf4_files_give_the_csv_estimates_byte_for_byte() {
    let d = scratch("logs_mdf4_same");
    let csv_out = d.join("csv.est.csv").display().to_string();
    let s = replay_no_line(&fixture("trace.csv"), &csv_out, &[]);
    assert_eq!(s["tally"]["rows"], 1200);
    assert!(s["tally"]["states"]["slipping"].as_u64().unwrap() > 1000);
    let expected = data_lines(&csv_out);
    for name in [
        "trace_410.mf4",
        "trace_420_deflate.mf4",
        "trace_420_transposed.mf4",
    ] {
        let out = d.join(format!("{name}.est.csv")).display().to_string();
        let s = replay_no_line(&fixture(name), &out, &[]);
        assert_eq!(data_lines(&out), expected, "{name}");
        assert_eq!(s["log"]["format"], "mdf4", "{name}");
        assert_eq!(s["log"]["sources"][0]["samples"], 1200, "{name}");
        assert_eq!(s["log"]["aligned"], serde_json::Value::Null, "{name}");
        assert!(s.get("dialect").is_none(), "{name}: {s}");
    }
    let out = d.join("lines.csv").display().to_string();
    let (code, _, err) = replay(&[&fixture("trace_410.mf4"), "-o", &out, "--columns", "line"]);
    assert_eq!(code, 0, "{err}");
    let lines: Vec<String> = data_lines(&out).into_iter().skip(1).collect();
    let rows: Vec<String> = (1..=1200).map(|k| k.to_string()).collect();
    assert_eq!(lines, rows);
}

/// Temperatures at 100 Hz beside forces at 1 kHz: held onto the 1 kHz ticks by default, the
/// estimates equal those of the CSV the fixture script held with numpy's searchsorted
/// [calc: zero-order hold, the last sample at or before each tick], up to the slow group's
/// last sample (1.19 s: 1191 ticks). Linear interpolation is used only when asked, and said.
#[test]
fn two_rates_are_held_onto_the_device_ticks_unless_linear_is_asked() {
    let d = scratch("logs_two_rates");
    let held_csv = d.join("held.est.csv").display().to_string();
    replay_no_line(&fixture("two_rates_held.csv"), &held_csv, &[]);
    let out = d.join("two.est.csv").display().to_string();
    let s = replay_no_line(&fixture("two_rates.mf4"), &out, &[]);
    assert_eq!(s["log"]["aligned"], "hold");
    assert_eq!(s["log"]["sources"][1]["name"], "slow");
    assert_eq!(s["log"]["sources"][1]["samples"], 120);
    let got = data_lines(&out);
    let want = data_lines(&held_csv);
    assert_eq!(got.len(), 1 + 1191);
    assert_eq!(got[..], want[..got.len()]);

    let lin = d.join("linear.est.csv").display().to_string();
    let s = replay_no_line(&fixture("two_rates.mf4"), &lin, &["--resample", "linear"]);
    assert_eq!(s["log"]["aligned"], "linear");
    let lin = data_lines(&lin);
    assert_eq!(lin.len(), got.len());
    assert_ne!(
        lin, got,
        "interpolated temperatures change the lining model's input"
    );

    let (code, _, err) = replay(&[
        &fixture("two_rates.mf4"),
        "-o",
        &out,
        "--sample-period-s",
        "0.001",
    ]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("2 channel groups"), "{err}");
}

/// A missing channel is named, with the channels the file has; `--column` maps another.
#[test]
fn a_missing_channel_is_named_and_can_be_mapped() {
    let d = scratch("logs_missing");
    let out = d.join("e.csv").display().to_string();
    let (code, _, err) = replay(&[&fixture("missing_channel.mf4"), "-o", &out]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("missing channel 'omega_in_rad_s'"), "{err}");
    assert!(err.contains("the file has: 'force_1_counts'"), "{err}");
    assert!(!std::path::Path::new(&out).exists());
    let (code, v, err) = replay(&[
        &fixture("missing_channel.mf4"),
        "-o",
        &out,
        "--column",
        "omega_in=omega_out_rad_s",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(v["traces"][0]["summary"]["tally"]["rows"], 1200);
}

/// A file cut short and a log with time going back are located errors (exit 2).
#[test]
fn truncated_and_unsorted_files_are_located_errors() {
    let d = scratch("logs_bad");
    let out = d.join("e.csv").display().to_string();
    let (code, _, err) = replay(&[&fixture("truncated.mf4"), "-o", &out]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("truncated.mf4"), "{err}");
    assert!(err.contains("truncated MDF4 file"), "{err}");
    let (code, _, err) = replay(&[&fixture("unsorted.mf4"), "-o", &out]);
    assert_eq!(code, 2, "{err}");
    assert!(
        err.contains("channel group 0 ('trace'): sample index 18: time does not increase"),
        "{err}"
    );
    let (code, _, err) = replay(&[
        &fixture("trace.csv"),
        "-o",
        &d.join("e.mf4").display().to_string(),
    ]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("not as MDF4"), "{err}");
}

/// `fit` reads an MDF4 file as the CSV: the same fitted table.
#[test]
fn fit_reads_mdf4_as_the_csv() {
    let d = scratch("logs_fit");
    let mut fitted = Vec::new();
    for name in ["trace.csv", "trace_420_transposed.mf4"] {
        let out = d.join(format!("{name}.toml")).display().to_string();
        let (code, _, err) = run(&[
            "-q",
            "fit",
            "-c",
            CONFIG,
            &fixture(name),
            "-o",
            &out,
            "--min-coverage",
            "5",
        ]);
        assert_eq!(code, 0, "{err}");
        let text = std::fs::read_to_string(&out).unwrap();
        fitted.push(
            text.lines()
                .filter(|l| !l.contains("fitted by `clampwise fit` from"))
                .collect::<Vec<_>>()
                .join("\n"),
        );
    }
    assert_eq!(fitted[0], fitted[1]);
}

/// Without the `parquet` feature a Parquet name is a usage error that says how to build it.
#[cfg(not(feature = "parquet"))]
#[test]
fn parquet_needs_the_feature() {
    let d = scratch("logs_no_parquet");
    let out = d.join("e.csv").display().to_string();
    let (code, _, err) = replay(&[&fixture("trace.parquet"), "-o", &out]);
    assert_eq!(code, 1, "{err}");
    assert!(err.contains("--features parquet"), "{err}");
}

#[cfg(feature = "parquet")]
mod parquet_files {
    use super::*;
    use ::parquet::arrow::arrow_reader::ParquetRecordBatchReaderBuilder;
    use arrow_array::Array;
    use arrow_array::cast::AsArray;
    use arrow_array::types::{Float64Type, UInt64Type};
    use clampwise_sim::log_input::parquet_estimates::ROW_GROUP_ROWS;

    /// The Parquet file pyarrow 26.0.1 wrote from `trace.csv` gives the CSV's estimates
    /// [practice: the reference Arrow implementation's writer].
    #[test]
    fn pyarrow_parquet_gives_the_csv_estimates() {
        let d = scratch("logs_parquet_in");
        let csv_out = d.join("csv.est.csv").display().to_string();
        replay_no_line(&fixture("trace.csv"), &csv_out, &[]);
        let out = d.join("pq.est.csv").display().to_string();
        let s = replay_no_line(&fixture("trace.parquet"), &out, &[]);
        assert_eq!(s["log"]["format"], "parquet");
        assert_eq!(data_lines(&out), data_lines(&csv_out));
    }

    /// Estimates written as Parquet hold the CSV's values bit for bit, in row groups of at
    /// most `ROW_GROUP_ROWS` rows, and `compare` reads them as the CSV.
    #[test]
    fn parquet_estimates_hold_the_csv_values_in_bounded_row_groups() {
        let d = scratch("logs_parquet_out");
        let tr = d.join("long.csv").display().to_string();
        let (code, _, err) = run(&[
            "-q", "synth", "-c", CONFIG, "-o", &tr, "--rows", "140000", "--seed", "3",
        ]);
        assert_eq!(code, 0, "{err}");
        let csv_out = d.join("e.csv").display().to_string();
        let pq_out = d.join("e.parquet").display().to_string();
        for out in [&csv_out, &pq_out] {
            let (code, _, err) = replay(&[&tr, "-o", out]);
            assert_eq!(code, 0, "{err}");
        }
        let b = ParquetRecordBatchReaderBuilder::try_new(std::fs::File::open(&pq_out).unwrap())
            .unwrap();
        let groups: Vec<usize> = b
            .metadata()
            .row_groups()
            .iter()
            .map(|g| usize::try_from(g.num_rows()).unwrap())
            .collect();
        let full = 140_000 / ROW_GROUP_ROWS;
        let mut want = vec![ROW_GROUP_ROWS; full];
        want.push(140_000 - full * ROW_GROUP_ROWS);
        assert_eq!(groups, want);
        let csv_rows = data_lines(&csv_out);
        let mut k = 1;
        for batch in b.build().unwrap() {
            let batch = batch.unwrap();
            let line = batch.column(0).as_primitive::<UInt64Type>();
            let torque = batch.column(2).as_primitive::<Float64Type>();
            let mu = batch.column(5).as_primitive::<Float64Type>();
            let state = batch.column(13).as_string::<i32>();
            let flags = batch.column(14).as_string::<i32>();
            for i in 0..batch.num_rows() {
                let cells: Vec<&str> = csv_rows[k].split(',').collect();
                assert_eq!(line.value(i).to_string(), cells[0]);
                let t = if torque.is_null(i) {
                    String::new()
                } else {
                    torque.value(i).to_string()
                };
                assert_eq!(
                    t.parse::<f64>().ok(),
                    cells[2].parse::<f64>().ok(),
                    "row {k}"
                );
                assert_eq!(mu.value(i), cells[5].parse::<f64>().unwrap(), "row {k}");
                assert_eq!(state.value(i), cells[13]);
                assert_eq!(flags.value(i), cells[14]);
                k += 1;
            }
        }
        assert_eq!(k, csv_rows.len());

        // `compare` reads the Parquet estimates as the CSV: the same report.
        let report = |est: &str| {
            let (code, v, err) = run_json(&["compare", "-c", CONFIG, est]);
            assert_eq!(code, 0, "{err}");
            let mut r = v["files"][0]["report"].clone();
            r.as_object_mut().unwrap().remove("file");
            r
        };
        assert_eq!(report(&pq_out), report(&csv_out));
    }
}

/// `--skip-bad-rows` skips bad rows, not a broken file: unsorted time still stops the run.
#[test]
fn skipping_bad_rows_does_not_get_past_a_broken_log() {
    let d = scratch("logs_skip");
    let out = d.join("e.csv").display().to_string();
    let (code, _, err) = replay(&[&fixture("unsorted.mf4"), "-o", &out, "--skip-bad-rows"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("sample index 18"), "{err}");
}
