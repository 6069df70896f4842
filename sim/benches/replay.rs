#![allow(clippy::expect_used, clippy::panic)]
//! Replay throughput on one core, on a 10⁶-row synthetic trace (hoist scenario, 112 MB).
//! `cargo bench -p clampwise-sim --bench replay`. What each line measures:
//!
//! - `parse 1e6 rows`: `TraceReader::next_sample` over the file (CSV, cells, unit conversion,
//!   time checks), samples discarded;
//! - `parse+step 1e6 rows`: that, and every sample through the conversion layer (`SampleEstimator::step`:
//!   the conversions and the core's `Estimator::step`), rows discarded;
//! - `replay 1e6 rows to /dev/null`: `replay::replay_file`, what `clampwise replay` runs for one
//!   trace: parse, step, tally and the estimate CSV formatted and written to `/dev/null` (all
//!   of the output work but the disk);
//! - `step only 1e6 samples`: the conversion layer's step on 10⁵ parsed samples, ten times;
//! - `core Estimator::step only 1e6 samples`: the core's step on the same samples converted
//!   beforehand (the conversions' share is the difference to the line above);
//! - `header/open 80 000 columns`: `CsvIn::open` on a header of 80 000 names (reading it and
//!   checking it for duplicates, which must stay linear in the number of columns).

use std::hint::black_box;
use std::path::PathBuf;

use clampwise_core::estimator::Estimator;
use clampwise_sim::build_core::{ChannelDevice, CoreDevice};
use clampwise_sim::config::LoadedConfig;
use clampwise_sim::demo::DEMO_CONFIG;
use clampwise_sim::plant::PlantOptions;
use clampwise_sim::plant::scenario::Scenario;
use clampwise_sim::replay::{self, ReplayOptions};
use clampwise_sim::synth;
use clampwise_sim::trace::{RowPolicy, TraceReader};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};

const ROWS: u64 = 1_000_000;

fn trace(cfg: &LoadedConfig) -> PathBuf {
    let path = std::env::temp_dir().join("clampwise-bench-hoist-1e6.csv");
    if !path.exists() {
        let sc = Scenario::builtin("hoist").expect("built-in scenario");
        synth::synthesise(
            &cfg.config,
            "hoist",
            &sc,
            PlantOptions::default(),
            ROWS,
            &path.display().to_string(),
            None,
        )
        .expect("synthesise bench trace");
    }
    path
}

fn bench(c: &mut Criterion) {
    // Criterion draws its plots with plotters, which reads no system font.
    clampwise_sim::plot::font::register();
    let cfg = LoadedConfig::from_str(DEMO_CONFIG, "demo.toml").expect("demo config");
    let core = CoreDevice::build(&cfg.config).expect("core device");
    let path = trace(&cfg).display().to_string();
    let mut g = c.benchmark_group("replay");
    g.sample_size(10);
    g.throughput(Throughput::Elements(ROWS));
    g.bench_function("parse 1e6 rows", |b| {
        b.iter(|| {
            let mut r =
                TraceReader::open(&path, &cfg.config, RowPolicy::Stop, false).expect("open");
            let mut acc = 0.0;
            while let Some(s) = r.next_sample().expect("row") {
                acc += s.t_s;
            }
            black_box(acc)
        });
    });
    g.bench_function("parse+step 1e6 rows", |b| {
        b.iter(|| {
            let mut r =
                TraceReader::open(&path, &cfg.config, RowPolicy::Stop, false).expect("open");
            let mut est = clampwise_convert::new_estimator(&cfg.config, &core).expect("estimator");
            let mut acc = 0.0;
            while let Some(s) = r.next_sample().expect("row") {
                acc += est.step(&s).uncertainty_nm;
            }
            black_box(acc)
        });
    });
    g.bench_function("replay 1e6 rows to /dev/null", |b| {
        b.iter(|| {
            let summary = replay::replay_file(
                &cfg,
                &core,
                &path,
                "/dev/null",
                &ReplayOptions::default(),
                None,
            )
            .expect("replay");
            assert_eq!(summary.tally.rows, ROWS);
            black_box(summary.tally.max_abs_torque_nm)
        });
    });
    g.bench_function("step only 1e6 samples", |b| {
        let mut r = TraceReader::open(&path, &cfg.config, RowPolicy::Stop, false).expect("open");
        let mut samples = Vec::with_capacity(100_000);
        while let Some(s) = r.next_sample().expect("row") {
            if samples.len() < 100_000 {
                samples.push(s);
            }
        }
        b.iter(|| {
            let mut est = clampwise_convert::new_estimator(&cfg.config, &core).expect("estimator");
            let mut acc = 0.0;
            for _ in 0..10 {
                for s in &samples {
                    acc += est.step(s).uncertainty_nm;
                }
            }
            black_box(acc)
        });
    });
    g.bench_function("core Estimator::step only 1e6 samples", |b| {
        // The core's step alone, on inputs converted beforehand: what the conversions add is the
        // difference to "step only".
        let ChannelDevice::Three(dev) = &core.device else {
            panic!("the demo has three channels");
        };
        let cal = clampwise_convert::ChannelCal::of(&cfg.config);
        let mut r = TraceReader::open(&path, &cfg.config, RowPolicy::Stop, false).expect("open");
        let mut inputs = Vec::with_capacity(100_000);
        while let Some(s) = r.next_sample().expect("row") {
            if inputs.len() < 100_000 {
                inputs.push(clampwise_convert::core_inputs::<3>(&s, &cal, true));
            }
        }
        b.iter(|| {
            let mut est = Estimator::new(dev);
            let mut acc = 0i64;
            for _ in 0..10 {
                for i in &inputs {
                    acc += i64::from(est.step(i).uncertainty.to_bits());
                }
            }
            black_box(acc)
        });
    });
    g.finish();
}

fn wide_header(c: &mut Criterion) {
    let path = std::env::temp_dir().join("clampwise-bench-header-80000.csv");
    if !path.exists() {
        let names: Vec<String> = (0..80_000).map(|i| format!("column_{i}")).collect();
        std::fs::write(&path, format!("{}\n", names.join(","))).expect("write header");
    }
    let path = path.display().to_string();
    let mut g = c.benchmark_group("header");
    g.sample_size(10);
    g.bench_function("open 80 000 columns", |b| {
        b.iter(|| {
            black_box(
                clampwise_sim::csv_input::CsvIn::open(&path)
                    .expect("open")
                    .headers()
                    .len(),
            )
        });
    });
    g.finish();
}

criterion_group!(benches, bench, wide_header);
criterion_main!(benches);
