//! The documented example configs: the caliper holding brake (`configs/demo-hoist-brake.toml`)
//! and the wet multi-plate clutch (`configs/demo-wet-clutch.toml`), both invented machines.
//! Each passes `check` and runs through `synth`, `replay` and `compare`.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing
)]

mod common;

use common::*;

const CLUTCH: &str = include_str!("../configs/demo-wet-clutch.toml");

#[test]
fn wet_clutch_example_checks_synthesises_replays_and_compares() {
    let d = scratch("example_clutch");
    let cfg = write(&d, "demo-wet-clutch.toml", CLUTCH);
    let (code, out, err) = run(&["check", &cfg]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(
        out.contains("(Clutch), annulus × 8 faces, 2 sensors"),
        "{out}"
    );
    for scenario in ["sweep", "steady"] {
        let tr = d.join(format!("{scenario}.csv")).display().to_string();
        let (code, _, err) = run(&[
            "-q",
            "synth",
            "-c",
            &cfg,
            "-o",
            &tr,
            "--scenario",
            scenario,
            "--duration-s",
            "30",
        ]);
        assert_eq!(code, 0, "{err}");
        let est = d.join(format!("{scenario}.est.csv")).display().to_string();
        let (code, js, err) = run_json(&["replay", "-c", &cfg, &tr, "-o", &est]);
        assert_eq!(code, 0, "{err}");
        let tally = &js["traces"][0]["summary"]["tally"];
        assert_eq!(tally["rows"], 30_000);
        assert!(
            tally["states"]["slipping"].as_u64().unwrap() > 10_000,
            "{tally}"
        );
        let max_t = tally["max_abs_torque_nm"].as_f64().unwrap();
        // [calc: faces · μ · F · r_e = 8 · 0.12 · 20 kN · 0.09 m ≈ 1.7 kN·m] a plate clutch
        // of this size works in the low kN·m.
        assert!((500.0..5000.0).contains(&max_t), "{max_t}");
        let (code, js, err) = run_json(&["compare", &est, "-c", &cfg]);
        assert_eq!(code, 0, "{err}");
        let g = &js["files"][0]["report"]["gated"];
        // Plant and estimator share the model here (an arithmetic check, not a validation):
        // the slipping error is force noise and rounding, below 1 % of the largest torque.
        let rms = g["rms_nm"].as_f64().unwrap();
        assert!(rms < 0.01 * max_t, "{scenario}: RMS {rms} of {max_t}");
        assert!(g["relative"]["rms_pct"].as_f64().unwrap() < 2.0, "{g}");
    }
}

#[test]
fn both_example_configs_are_listed_in_the_config_reference() {
    let reference = include_str!("../../device/CONFIG.md");
    assert!(
        reference.contains("demo-hoist-brake.toml") && reference.contains("demo-wet-clutch.toml")
    );
    // The clutch's own keys are documented there.
    for key in [
        "`drag_torque_nm`",
        "`drag_viscous_nm_per_rad_s`",
        "`kind`",
        "`faces`",
    ] {
        assert!(reference.contains(key), "{key}");
    }
}
