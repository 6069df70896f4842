//! Friction model: μ table breakpoints and interpolation, clamping, stick/slip without chatter,
//! and the fixed-point path against the f64 reference over the envelope.
#![allow(
    clippy::unwrap_used,
    clippy::cast_precision_loss,
    clippy::indexing_slicing
)]

use clampwise_core::friction::{FrictionConfig, FrictionParams, FrictionState, MuTable};
use clampwise_core::sae_j866::FrictionCode;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec, Ratio};
use clampwise_tests::f64_model::friction::FrictionModel;
use proptest::prelude::*;

const LSB_MU: f64 = 1.0 / 1_073_741_824.0; // Ratio, 2⁻³⁰
const LSB_NM: f64 = 1.0 / 4096.0; // NewtonMetres, 2⁻¹²

/// Demo wet multi-plate clutch (invented numbers, not a product's data): paper-like facing with
/// μ near 0.11 [pub: Tribology Handbook, oil-immersed paper], rising with slip speed as wet
/// clutches want against shudder [practice], falling when the oil is hot.
fn wet_clutch() -> FrictionConfig<4, 5> {
    let mu = MuTable::new(
        &[-40.0, 40.0, 120.0, 200.0],
        &[0.0, 1.0, 10.0, 100.0, 1000.0],
        &[
            [0.095, 0.100, 0.108, 0.115, 0.118],
            [0.100, 0.105, 0.112, 0.120, 0.124],
            [0.098, 0.102, 0.110, 0.117, 0.121],
            [0.088, 0.092, 0.099, 0.106, 0.110],
        ],
    )
    .unwrap();
    FrictionConfig::new(
        mu,
        &FrictionParams {
            static_to_kinetic: 0.95,
            stick_speed: 0.2,
            stick_hysteresis: 0.1,
            transition_speed: 2.0,
            viscous_drag: 0.015,
            no_load_drag: 1.2,
        },
    )
    .unwrap()
}

/// Demo dry caliper lining (invented): resin-like, μ falls above ≈ 230 °C [pub: Day ch. 2].
fn dry_caliper() -> FrictionConfig<5, 4> {
    let mu = MuTable::new(
        &[-40.0, 100.0, 230.0, 400.0, 650.0],
        &[0.0, 10.0, 100.0, 1000.0],
        &[
            [0.36, 0.35, 0.34, 0.33],
            [0.38, 0.37, 0.36, 0.35],
            [0.37, 0.36, 0.35, 0.34],
            [0.31, 0.30, 0.29, 0.28],
            [0.26, 0.25, 0.24, 0.23],
        ],
    )
    .unwrap();
    FrictionConfig::new(
        mu,
        &FrictionParams {
            static_to_kinetic: 1.2,
            stick_speed: 0.05,
            stick_hysteresis: 0.04,
            transition_speed: 0.5,
            viscous_drag: 0.0,
            no_load_drag: 0.0,
        },
    )
    .unwrap()
}

#[test]
fn breakpoints_exact_and_out_of_range_flagged() {
    let cfg = wet_clutch();
    let t = cfg.mu_kinetic();
    for (i, temp) in t.x_breakpoints().iter().enumerate() {
        for (j, v) in t.y_breakpoints().iter().enumerate() {
            assert_eq!(t.lookup(*temp, *v).value, t.value(i, j).unwrap());
            if *v >= cfg.transition_speed() {
                let out = FrictionState::new().update(&cfg, *v, *temp, Ratio::ONE);
                assert_eq!(out.mu_kinetic, t.value(i, j).unwrap(), "({i},{j})");
                assert!(!out.clamped);
            }
        }
    }
    let hot = FrictionState::new().update(
        &cfg,
        RadPerSec::from_num(-2000),
        Celsius::from_num(1000),
        Ratio::ONE,
    );
    assert!(hot.clamped);
    assert_eq!(hot.mu_kinetic, t.value(3, 4).unwrap());
    let cold = FrictionState::new().update(
        &cfg,
        RadPerSec::from_num(50),
        Celsius::from_num(-50),
        Ratio::ONE,
    );
    assert!(cold.clamped);
}

// The demo clutch's facing grades C (not over 0.15) [pub: SAE J866 edges], the dry lining E/F.
#[test]
fn demo_tables_grade_as_their_materials() {
    let wet = wet_clutch();
    for row in wet.mu_kinetic().rows() {
        for mu in row {
            assert_eq!(FrictionCode::classify(*mu), FrictionCode::C);
        }
    }
    let dry = dry_caliper();
    assert_eq!(
        FrictionCode::classify(dry.mu_kinetic().value(1, 0).unwrap()),
        FrictionCode::F
    );
    assert_eq!(
        FrictionCode::classify(dry.mu_kinetic().value(3, 0).unwrap()),
        FrictionCode::E
    );
}

/// Measured worst cases over the envelope, stated in the docs of `clampwise_core::friction`.
const MU_MAX_ERROR_LSB: f64 = 3.0; // measured 2.1 LSB (table 1 + correction, blend ½ each)
const DRAG_MAX_ERROR_LSB: f64 = 1.0;

struct Worst {
    mu: f64,
    mu_static: f64,
    drag: f64,
}

fn compare<const NT: usize, const NV: usize>(
    cfg: &FrictionConfig<NT, NV>,
    inputs: &[(f64, f64, f64)],
    worst: &mut Worst,
) -> Result<(), String> {
    let mut fixed = FrictionState::new();
    let mut reference = FrictionModel::from_config(cfg);
    for &(v, t, c) in inputs {
        let (vq, tq, cq) = (
            RadPerSec::from_num(v),
            Celsius::from_num(t),
            Ratio::from_num(c),
        );
        let a = fixed.update(cfg, vq, tq, cq);
        let b = reference.step(vq.to_num(), tq.to_num(), cq.to_num());
        if a.slipping != b.slipping || a.direction != b.direction || a.clamped != b.clamped {
            return Err(format!("state differs at v {v}, T {t}: {a:?} vs {b:?}"));
        }
        worst.mu = worst
            .mu
            .max((a.mu_kinetic.to_num::<f64>() - b.mu_kinetic).abs() / LSB_MU);
        worst.mu_static = worst
            .mu_static
            .max((a.mu_static.to_num::<f64>() - b.mu_static).abs() / LSB_MU);
        worst.drag = worst
            .drag
            .max((a.drag_torque.to_num::<f64>() - b.drag_torque).abs() / LSB_NM);
        assert!(a.drag_torque.abs() < NewtonMetres::MAX);
    }
    Ok(())
}

#[test]
fn friction_envelope() {
    // Deterministic sweep: temperature −50…1000 °C, slip ±2000 rad/s (dense near zero),
    // correction 0.5…1.5.
    let mut inputs = Vec::new();
    for it in 0..=105 {
        let t = -50.0 + 10.0 * f64::from(it);
        for iv in -400..=400 {
            let x = f64::from(iv) / 400.0;
            let v = 2000.0 * x * x * x; // cubic spacing: fine steps around zero slip
            let c = 0.5 + f64::from((iv + 400) % 11) / 10.0;
            inputs.push((v, t, c));
        }
    }
    let mut worst = Worst {
        mu: 0.0,
        mu_static: 0.0,
        drag: 0.0,
    };
    compare(&wet_clutch(), &inputs, &mut worst).unwrap();
    compare(&dry_caliper(), &inputs, &mut worst).unwrap();
    println!(
        "friction worst case: mu {:.2} LSB, mu_static {:.2} LSB, drag {:.2} LSB",
        worst.mu, worst.mu_static, worst.drag
    );
    assert!(worst.mu <= MU_MAX_ERROR_LSB && worst.mu_static <= MU_MAX_ERROR_LSB);
    assert!(worst.drag <= DRAG_MAX_ERROR_LSB);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    #[test]
    fn friction_random(inputs in prop::collection::vec((-2000.0f64..2000.0, -50.0f64..1000.0, 0.0f64..1.9), 1..200)) {
        let mut worst = Worst { mu: 0.0, mu_static: 0.0, drag: 0.0 };
        compare(&wet_clutch(), &inputs, &mut worst).map_err(TestCaseError::fail)?;
        compare(&dry_caliper(), &inputs, &mut worst).map_err(TestCaseError::fail)?;
        prop_assert!(worst.mu <= MU_MAX_ERROR_LSB, "mu {}", worst.mu);
        prop_assert!(worst.mu_static <= MU_MAX_ERROR_LSB, "mu_static {}", worst.mu_static);
        prop_assert!(worst.drag <= DRAG_MAX_ERROR_LSB, "drag {}", worst.drag);
    }

    // The μ table interpolates within 1 LSB of the bilinear interpolant of its stored values
    // (the resolution stated in `clampwise_core::table`).
    #[test]
    fn table_interpolates_within_one_lsb(t in -50.0f64..1000.0, v in 0.0f64..2000.0) {
        let cfg = dry_caliper();
        let reference = FrictionModel::from_config(&cfg);
        let (tq, vq) = (Celsius::from_num(t), RadPerSec::from_num(v));
        let got = cfg.mu_kinetic().lookup(tq, vq).value.to_num::<f64>();
        let (exact, _) = reference.table(tq.to_num(), vq.to_num());
        prop_assert!((got - exact).abs() <= LSB_MU, "{} vs {}", got, exact);
    }

    // No chatter: a slip signal dithering around a slowly moving point near the band, with noise
    // spanning less than the band, changes state at most once per crossing of the band.
    #[test]
    fn stick_slip_does_not_chatter(
        centre in 0.0f64..0.5,
        share in 0.0f64..0.99,
        noise in prop::collection::vec(-1.0f64..1.0, 100..1000),
    ) {
        let cfg = wet_clutch();
        let band = (cfg.slip_threshold() - cfg.stick_threshold()).to_num::<f64>();
        let a = 0.5 * band * share;
        let mut s = FrictionState::new();
        let mut last = s.is_slipping();
        let mut transitions = 0;
        for n in &noise {
            let out = s.update(&cfg, RadPerSec::from_num(centre + a * n), Celsius::from_num(60), Ratio::ONE);
            if out.slipping != last { transitions += 1; last = out.slipping; }
        }
        prop_assert!(transitions <= 1, "{} transitions", transitions);
    }
}
