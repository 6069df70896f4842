//! A synthesised trace is the same bytes on every machine: the plant's maths go through the
//! `libm` crate and `portable_math::powi`, never the platform's C library, and the CSV text is
//! Rust's own shortest round-trip float printing.
//!
//! The expected hash is the SHA-256 of the demo's `trace.csv` (`cargo demo`: the `hoist`
//! scenario, 400 s, seed 2027, μ scale 0.93, the four demo faults), obtained with
//! `sha256sum clampwise-demo/trace.csv` on x86_64 Linux, both from the build that called the
//! platform's maths and from the one calling `libm` (the same bytes). A change to the plant,
//! the scenario or the CSV layout changes it on purpose: rerun `cargo demo`, check the trace,
//! and update the value with the reason in the commit.
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod common;

use clampwise_sim::config::LoadedConfig;
use clampwise_sim::demo::{DEMO_CONFIG, DEMO_MU_SCALE, faults_within};
use clampwise_sim::plant::PlantOptions;
use clampwise_sim::plant::scenario::Scenario;
use clampwise_sim::synth;
use sha2::{Digest, Sha256};

/// SHA-256 of the demo trace's CSV bytes (see the module docs for how it was obtained).
const DEMO_TRACE_SHA256: &str = "2ae75136f8c91535c794e530786fe11fcefebdd890d7f9730d02ea24b45c3fd5";

/// The demo's defaults (`clampwise demo`: `--duration-s 400 --seed 2027`).
const DURATION_S: f64 = 400.0;
const SEED: u64 = 2027;

#[test]
fn demo_trace_has_a_fixed_checksum() {
    let dir = common::scratch("synth_checksum");
    let path = dir.join("trace.csv").display().to_string();
    let cfg = LoadedConfig::from_str(DEMO_CONFIG, "demo-hoist-brake.toml").unwrap();
    let (_, faults) = faults_within(DURATION_S).unwrap();
    // 400 s at the demo's sample period: a whole number of samples, far below 2⁵³.
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let rows = (DURATION_S / cfg.config.device.sample_period_s).round() as u64;
    let summary = synth::synthesise(
        &cfg.config,
        "hoist",
        &Scenario::builtin("hoist").expect("the hoist scenario"),
        PlantOptions {
            seed: SEED,
            mu_scale: DEMO_MU_SCALE,
            faults,
            ..PlantOptions::default()
        },
        rows,
        &path,
        None,
    )
    .unwrap();
    assert_eq!(summary.rows, 400_000);
    let bytes = std::fs::read(&path).unwrap();
    let hash: String = Sha256::digest(&bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    assert_eq!(
        hash,
        DEMO_TRACE_SHA256,
        "the demo trace's bytes changed ({} bytes)",
        bytes.len()
    );
}
