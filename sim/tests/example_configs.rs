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

const DRUM: &str = include_str!("../configs/example-crane-drum-brake.toml");
const BAND: &str = include_str!("../configs/example-hoist-band-brake.toml");

/// The drum and band examples (torque not linear in μ): `check`, `synth`, `replay`, `compare`
/// and `fit` run on each, and the fit finds a lining 10 % weaker than the config's table
/// where the trace reaches it.
#[test]
fn drum_and_band_examples_check_synthesise_replay_compare_and_fit() {
    for (name, text, shape) in [
        ("example-crane-drum-brake.toml", DRUM, "drum_shoes"),
        ("example-hoist-band-brake.toml", BAND, "band"),
    ] {
        let d = scratch(&format!("example_{shape}"));
        let cfg = write(&d, name, text);
        let (code, out, err) = run(&["check", &cfg]);
        assert_eq!(code, 0, "{out}{err}");
        assert!(
            out.contains(&format!("(Brake), {shape} × 1 faces")),
            "{out}"
        );
        assert!(out.contains("g(μ)/μ"), "{out}");
        let (code, out, err) = run(&["tables", "-c", &cfg]);
        assert_eq!(code, 0, "{err}");
        assert!(out.contains("SELF_LOCKING beyond"), "{out}");
        let tr = d.join("trace.csv").display().to_string();
        let (code, _, err) = run(&[
            "-q",
            "synth",
            "-c",
            &cfg,
            "-o",
            &tr,
            "--scenario",
            "sweep",
            "--duration-s",
            "40",
            "--mu-scale",
            "0.9",
        ]);
        assert_eq!(code, 0, "{err}");
        let est = d.join("est.csv").display().to_string();
        let (code, js, err) = run_json(&["replay", "-c", &cfg, &tr, "-o", &est]);
        assert_eq!(code, 0, "{err}");
        let tally = &js["traces"][0]["summary"]["tally"];
        assert!(
            tally["states"]["slipping"].as_u64().unwrap() > 5_000,
            "{tally}"
        );
        let (code, _, err) = run_json(&["compare", &est, "-c", &cfg]);
        assert_eq!(code, 0, "{err}");
        let svg = d.join("estimate.svg").display().to_string();
        let (code, _, err) = run(&["plot", &est, "-o", &svg]);
        assert_eq!(code, 0, "{err}");
        assert!(std::fs::read_to_string(&svg).unwrap().contains("<svg"));
        let fitted = d.join("fitted.toml").display().to_string();
        let (code, js, err) = run_json(&["fit", "-c", &cfg, &tr, "-o", &fitted]);
        assert_eq!(code, 0, "{err}");
        let report = &js["report"];
        assert_eq!(report["residual_in_mu"], true, "{report}");
        // Plant and estimator share g(μ) (an arithmetic check): every reached entry comes out
        // near 0.9 × its prior; entries the fade region reaches only thinly are left out.
        let mut checked = 0;
        for cell in report["cells"].as_array().unwrap() {
            let (Some(fit), Some(prior)) = (cell["fitted"].as_f64(), cell["prior"].as_f64()) else {
                continue;
            };
            if cell["reached"] == true && cell["temperature_c"].as_f64().unwrap() <= 100.0 {
                let ratio = fit / prior;
                assert!((0.85..0.95).contains(&ratio), "{shape}: {cell}");
                checked += 1;
            }
        }
        assert!(checked >= 2, "{shape}: {report}");
    }
}
